package org.cruxset.search;

import java.nio.file.Path;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.search.bench.PlantedProblem;

/** Sessions over planted problems for the search tests. */
final class Planted {
    private Planted() {
    }

    /** A small problem (14 regions: a group of 3, a pair, 5 trap regions; minimum 4) that brute force can check. */
    static PlantedProblem.Config small() {
        return new PlantedProblem.Config(14, 1, 3, 1, 5, 5, 4, 20, 6, 2, 0, 0.02, 0.15, 0.35);
    }

    /** A session over {@code p} with {@code budget} scored sets (infinite: none), its store in {@code dir} (nullable). */
    static ScoringSession session(PlantedProblem p, double budget, Path dir, String command) {
        Decoder d = p.decoder();
        return ScoringSession.open(d, p.cohort(), new ScoringSession.Settings(LesionMode.ZERO, 0, null,
                CollapseCriterion.defaults(), budget, 1, dir, "test", command, p.seed(), Parts.DEFAULT_SEED,
                Parts.DEFAULT_CONFIRM));
    }

    /** Runs {@code strategy} on {@code session} with the given seed, pruning unless told not to. */
    static SearchRun.Result run(ScoringSession session, Strategy strategy, long seed, boolean prune) {
        return SearchRun.run(session, strategy, new SearchRun.Settings(Double.POSITIVE_INFINITY, null, seed, prune, 20,
                SearchRun.Settings.DEFAULT_RESERVE),
                null);
    }
}
