package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.strategy.LocalStrategy;
import org.cruxset.search.strategy.local.LocalSearch;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The OptaPlanner local search: budget, determinism, and its results on the search benchmark at CI size. */
class LocalTest {
    @Test
    void theBudgetIsMetExactlyAndTheSameSeedGivesTheSameResult(@TempDir Path dir) {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 3);
        List<List<RegionSet>> fronts = new ArrayList<>();
        for (String run : List.of("a", "b")) {
            try (ScoringSession s = Planted.session(p, 1501, dir.resolve(run), "local")) {
                SearchRun.Result r = Planted.run(s, new LocalStrategy(LocalSearch.Settings.defaults(), null), 4, true);
                assertEquals("budget", r.status());
                assertEquals(1501.0, r.charged(), 0.0);
                fronts.add(r.front().stream().map(Front.Entry::set).toList());
            }
        }
        assertEquals(fronts.get(0), fronts.get(1), "same seed, same front");
    }

    // CI size of the must-show (20 seeds in the full suite): at 20,000 scored sets local beats random and is at least
    // as successful as grow+prune.
    @Test
    void localBeatsRandomAndMatchesGrowThenPruneOnTheBenchmark(@TempDir Path dir) {
        List<org.cruxset.search.bench.SearchSuite.Row> rows = org.cruxset.search.bench.SearchSuite.run(
                PlantedProblem.benchmark(), List.of("grow+prune", "local"), List.of(20_000L),
                List.of(1L, 2L, 3L, 4L, 5L), dir, null);
        org.cruxset.search.bench.SearchSuite.Row grow = rows.get(0);
        org.cruxset.search.bench.SearchSuite.Row local = rows.get(1);
        assertTrue(local.successes() >= grow.successes(), "local " + local + ", grow+prune " + grow);
        assertTrue(local.successes() >= 4, "local reaches 12 on at least 4 of 5 seeds: " + local);
        assertTrue(local.medianBest() < 20, "random's median best size is above 100 at this budget: " + local);
    }
}
