package org.cruxset.cluster;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.nio.file.Path;
import org.cruxset.search.cli.CruxsetCommand;
import picocli.CommandLine;

/** The CI cohort and a decoder trained on it, made once per test class, and in-process runs of the command line. */
final class ClusterFixture {
    /** Exit code and captured standard output and error of one command. */
    record Run(int exit, String out, String err) {
        Run requireSuccess() {
            if (exit != 0) {
                throw new AssertionError("cruxset exited " + exit + "\nstdout:\n" + out + "\nstderr:\n" + err);
            }
            return this;
        }
    }

    final Path cohort;
    final Path model;

    ClusterFixture(Path dir) {
        cohort = dir.resolve("cohort");
        model = dir.resolve("model.onnx");
        run("simulate", "--config", root().resolve("configs/ci.yaml").toString(), "--out", cohort.toString())
                .requireSuccess();
        run("train", "--cohort", cohort.toString(), "--out", model.toString(), "--seed", "7", "--hidden", "24",
                "--threads", "2").requireSuccess();
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

    static Path root() {
        return Path.of(System.getProperty("cruxset.root", "..")).toAbsolutePath().normalize();
    }
}
