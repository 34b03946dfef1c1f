package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;

import java.nio.file.Path;
import java.util.List;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.strategy.GeneticStrategy;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The genetic strategy: budget, determinism and certificates (its results on the search benchmark: TrapsTest). */
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
                assertFalse(r.reported().isEmpty());
                for (SearchRun.Reported x : r.reported()) {
                    assertNotNull(x.certificate(), "the reserve pays for the certificate of " + x.set());
                }
                results.add(r.front().stream().map(Front.Entry::set).toList());
            }
        }
        assertEquals(results.get(0), results.get(1), "same seed, same front");
    }
}
