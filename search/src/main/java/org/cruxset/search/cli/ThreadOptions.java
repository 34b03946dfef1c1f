package org.cruxset.search.cli;

import org.cruxset.scoring.internal.Parallel;
import picocli.CommandLine.Option;

/** The {@code --threads} option shared by every command that decodes or trains. */
public final class ThreadOptions {
    @Option(names = "--threads", paramLabel = "N", description = "Worker threads (default: all cores).")
    Integer threads;

    /** The thread count: the option's value, checked, or all cores. */
    int threads() {
        if (threads == null) {
            return Parallel.defaultThreads();
        }
        if (threads < 1) {
            throw new IllegalArgumentException("--threads must be at least 1, found " + threads);
        }
        return threads;
    }
}
