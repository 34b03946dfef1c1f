package org.cruxset.search.cli;

import org.cruxset.scoring.eval.Parts;
import picocli.CommandLine.Option;

/** How held-out subjects are split into a search part and a confirmation part; shared by every scoring command. */
public final class PartOptions {
    @Option(names = "--split-seed", paramLabel = "N", defaultValue = "" + Parts.DEFAULT_SEED,
            description = "Seed of the split of held-out subjects into the search and confirmation parts. Default: ${DEFAULT-VALUE}.")
    long splitSeed;

    @Option(names = "--confirm", paramLabel = "FRACTION", defaultValue = "" + Parts.DEFAULT_CONFIRM,
            description = "Fraction of held-out subjects kept out of every search to confirm its results, in [0, 1); "
                    + "0: no confirmation part (scores of sets selected on the same samples are then optimistic). "
                    + "Default: ${DEFAULT-VALUE}.")
    double confirm;

    /** The split seed. */
    long splitSeed() {
        return splitSeed;
    }

    /** The confirmation fraction, checked. */
    double confirm() {
        if (!(confirm >= 0 && confirm < 1)) {
            throw new IllegalArgumentException("--confirm must be at least 0 and below 1, found " + confirm);
        }
        return confirm;
    }
}
