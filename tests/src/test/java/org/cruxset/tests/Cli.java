package org.cruxset.tests;

import java.nio.file.Path;
import org.cruxset.search.cli.CruxsetCommand;

/** Runs the cruxset command line in-process with captured output. */
final class Cli {
    private Cli() {
    }

    static CruxsetCommand.Captured run(String... args) {
        return CruxsetCommand.capture(args);
    }

    /** The repository root (set by the build as the system property cruxset.root). */
    static Path root() {
        return Path.of(System.getProperty("cruxset.root", "..")).toAbsolutePath().normalize();
    }
}
