package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;

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

/** The OptaPlanner local search: budget, determinism and certificates (its results on the search benchmark: TrapsTest). */
class LocalTest {
    @Test
    void theBudgetIsMetExactlyAndTheSameSeedGivesTheSameResult(@TempDir Path dir) {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 3);
        List<List<RegionSet>> fronts = new ArrayList<>();
        for (String run : List.of("a", "b")) {
            try (ScoringSession s = Planted.session(p, 3001, dir.resolve(run), "local")) {
                SearchRun.Result r = Planted.run(s, new LocalStrategy(LocalSearch.Settings.defaults(), null), 4, true);
                assertEquals("budget", r.status());
                assertEquals(3001.0, r.charged(), 0.0);
                assertFalse(r.reported().isEmpty());
                for (SearchRun.Reported x : r.reported()) {
                    assertNotNull(x.certificate(), "the reserve pays for the certificate of " + x.set());
                }
                fronts.add(r.front().stream().map(Front.Entry::set).toList());
            }
        }
        assertEquals(fronts.get(0), fronts.get(1), "same seed, same front");
    }
}
