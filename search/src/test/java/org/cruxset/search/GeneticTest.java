package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.List;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.bench.SearchSuite;
import org.cruxset.search.strategy.GeneticStrategy;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The genetic strategy: budget, determinism, and its results on the search benchmark at CI size. */
class GeneticTest {
    @Test
    void theBudgetIsMetExactlyAndTheSameSeedGivesTheSameResult(@TempDir Path dir) {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 6);
        List<List<RegionSet>> results = new java.util.ArrayList<>();
        for (String run : List.of("a", "b")) {
            try (ScoringSession s = Planted.session(p, 3001, dir.resolve(run), "genetic")) {
                SearchRun.Result r = Planted.run(s, new GeneticStrategy(GeneticStrategy.Settings.defaults(), null), 4,
                        true);
                assertEquals("budget", r.status());
                assertEquals(3001.0, r.charged(), 0.0);
                results.add(r.front().stream().map(Front.Entry::set).toList());
            }
        }
        assertEquals(results.get(0), results.get(1), "same seed, same front");
    }

    // CI size of the must-show (the full 20-seed suite runs with -Plong): at 20,000 scored sets genetic beats random
    // and is at least as successful as grow+prune.
    @Test
    void geneticBeatsRandomAndMatchesGrowThenPruneOnTheBenchmark(@TempDir Path dir) {
        List<SearchSuite.Row> rows = SearchSuite.run(PlantedProblem.benchmark(), List.of("grow+prune", "genetic"),
                List.of(20_000L), List.of(1L, 2L, 3L, 4L, 5L), dir, null);
        SearchSuite.Row grow = rows.get(0);
        SearchSuite.Row genetic = rows.get(1);
        assertTrue(genetic.successes() >= grow.successes(), "genetic " + genetic + ", grow+prune " + grow);
        assertTrue(genetic.successes() >= 4, "genetic reaches 12 on at least 4 of 5 seeds: " + genetic);
        assertTrue(genetic.medianBest() < 20, "random's median best size is above 100 at this budget: " + genetic);
    }
}
