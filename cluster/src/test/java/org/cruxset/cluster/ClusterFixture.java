package org.cruxset.cluster;

import java.nio.file.Path;
import org.cruxset.search.cli.CruxsetCommand;

/** The CI cohort and a decoder trained on it, made once per test class, and in-process runs of the command line. */
final class ClusterFixture {
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

    static CruxsetCommand.Captured run(String... args) {
        return CruxsetCommand.capture(args);
    }

    static Path root() {
        return Path.of(System.getProperty("cruxset.root", "..")).toAbsolutePath().normalize();
    }
}
