package org.cruxset.search.cli;

import java.nio.file.Path;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/**
 * Options shared by every command that scores lesion sets: the lesion mode and its seed, the reference cohort, the
 * collapse criterion, the output folder holding the results store, and the split into search and confirmation parts.
 */
public final class ScoringOptions {
    @Option(names = "--mode", defaultValue = "zero", paramLabel = "MODE",
            description = "What lesioned regions are replaced with: zero, mean, noise, swap or phase. Default: ${DEFAULT-VALUE}.")
    String mode;

    @Option(names = "--mode-seed", defaultValue = "1", paramLabel = "N",
            description = "Seed of the noise, swap and phase modes (part of every score's identity). Default: ${DEFAULT-VALUE}.")
    long modeSeed;

    @Option(names = "--reference", paramLabel = "DIR",
            description = "Cohort whose samples give the mean and noise modes' region statistics (needed for a model trained elsewhere).")
    Path reference;

    @Option(names = "--criterion", defaultValue = "binomial:0.05", paramLabel = "C",
            description = "When a set is critical: binomial:ALPHA (accuracy not significantly above chance; easier to "
                    + "meet on few samples), upper:D (upper end of the 95%% Wilson interval at or below chance + D; "
                    + "harder on few samples), accuracy:A, or fraction:F (fallen F of the way from intact accuracy to "
                    + "chance). Default: ${DEFAULT-VALUE}.")
    String criterion;

    @Option(names = "--out", defaultValue = "cruxset-out", paramLabel = "DIR",
            description = "Output folder holding the results store (results.sqlite). Default: ${DEFAULT-VALUE}.")
    Path out;

    @Option(names = "--spark", paramLabel = "MASTER",
            description = "Decode on Apache Spark: local[N] (embedded, N cores) or spark://HOST:PORT (a standalone "
                    + "cluster). The driver keeps the strategy, budget and results store; executors score the sets. "
                    + "Needs the cluster build (./cruxset-cluster; README: Running on a cluster).")
    String spark;

    @Mixin
    PartOptions parts;

    /** The command this mixin is part of (to find its model options, which --spark ships to the executors). */
    @picocli.CommandLine.Spec(picocli.CommandLine.Spec.Target.MIXEE)
    picocli.CommandLine.Model.CommandSpec mixee;

    /** The message of a build without a cluster backend. */
    static final String NO_CLUSTER = "--spark needs the cluster build of Cruxset (Apache Spark is not in the default "
            + "application): build it with 'mvn -B -pl cluster -am package -DskipTests' and run ./cruxset-cluster "
            + "instead of ./cruxset (README: Running on a cluster)";

    /** The output folder. */
    Path out() {
        return out;
    }

    /** The lesion mode. */
    LesionMode mode() {
        return LesionMode.parse(mode);
    }

    /** The collapse criterion. */
    CollapseCriterion criterion() {
        return CollapseCriterion.parse(criterion);
    }

    /** The reference cohort, or null. */
    Cohort reference() {
        return reference == null ? null : CohortFiles.read(reference);
    }

    /**
     * The settings of a scoring session: {@code kind} and {@code command} identify the run for resuming,
     * {@code seed} is the command's own seed, {@code budget} in scored sets of the search part (infinite: none).
     */
    ScoringSession.Settings settings(String kind, String command, long seed, double budget, int threads) {
        return new ScoringSession.Settings(mode(), modeSeed, reference(), criterion(), budget, threads, out, kind,
                command, seed, parts.splitSeed(), parts.confirm(), distribute());
    }

    /** With --spark, how the session's decoder goes to the cluster; null otherwise. */
    private java.util.function.UnaryOperator<org.cruxset.scoring.decoder.Decoder> distribute() {
        if (spark == null) {
            return null;
        }
        ModelSource model = mixee.userObject() instanceof ModelSource own ? own : null;
        for (picocli.CommandLine.Model.CommandSpec m : mixee.mixins().values()) {
            if (m.userObject() instanceof ModelSource o) {
                model = o;
            }
        }
        if (model == null) {
            throw new IllegalArgumentException("--spark: this command has no model to ship to the executors");
        }
        org.cruxset.scoring.decoder.DecodeBackend backend = org.cruxset.scoring.decoder.DecodeBackend.open("spark",
                spark, NO_CLUSTER);
        ModelSource m = model;
        return local -> backend.distribute(local, m.source(local));
    }

    /** The --spark master, or null. */
    String spark() {
        return spark;
    }
}
