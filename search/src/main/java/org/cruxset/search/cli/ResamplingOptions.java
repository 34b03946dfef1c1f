package org.cruxset.search.cli;

import picocli.CommandLine.Option;

/** Resampling statistics shown beside scores: the subject-clustered bootstrap and the label permutation. */
public final class ResamplingOptions {
    @Option(names = "--bootstrap", defaultValue = "1000", paramLabel = "N",
            description = "Resamples of the subject-clustered bootstrap interval (0 to skip). Default: ${DEFAULT-VALUE}.")
    int bootstrap;

    @Option(names = "--permutations", defaultValue = "0", paramLabel = "N",
            description = "Label permutations (within subject) for an empirical chance level of each set (0 to skip). Default: ${DEFAULT-VALUE}.")
    int permutations;

    /** Bootstrap resamples, checked. */
    int bootstrap() {
        if (bootstrap < 0) {
            throw new IllegalArgumentException("--bootstrap must be 0 or more, found " + bootstrap);
        }
        return bootstrap;
    }

    /** Label permutations, checked. */
    int permutations() {
        if (permutations < 0) {
            throw new IllegalArgumentException("--permutations must be 0 or more, found " + permutations);
        }
        return permutations;
    }
}
