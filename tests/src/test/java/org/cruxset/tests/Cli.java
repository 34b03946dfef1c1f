package org.cruxset.tests;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Path;
import org.cruxset.search.cli.CruxsetCommand;
import picocli.CommandLine;

/** Runs the cruxset command line in-process with captured output. */
final class Cli {
    private Cli() {
    }

    /** Exit code and captured standard output and error of one command. */
    record Run(int exit, String out, String err) {
        Run requireSuccess() {
            if (exit != 0) {
                throw new AssertionError("cruxset exited " + exit + "\nstdout:\n" + out + "\nstderr:\n" + err);
            }
            return this;
        }
    }

    static Run run(String... args) {
        CommandLine cl = CruxsetCommand.commandLine();
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        cl.setOut(new PrintWriter(out, true));
        cl.setErr(new PrintWriter(err, true));
        int code = cl.execute(args);
        return new Run(code, out.toString(), err.toString());
    }

    /** The repository root (set by the build as the system property cruxset.root). */
    static Path root() {
        return Path.of(System.getProperty("cruxset.root", "..")).toAbsolutePath().normalize();
    }
}
