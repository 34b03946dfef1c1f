package org.cruxset.tests;

import java.nio.file.Path;
import org.cruxset.scoring.simulate.SimulatedCohorts;

/**
 * The bundled demo: its committed decoder and truth, and its cohort, generated from {@code demo-data/demo.yaml} into
 * {@code demo-data/cohort} the first time a test needs it (as {@code cruxset demo} does on first use).
 */
final class DemoData {
    static final Path DIR = Cli.root().resolve("demo-data");
    static final Path MODEL = DIR.resolve("model.onnx");
    static final Path TRUTH = DIR.resolve("truth.json");
    static final Path COHORT = cohort();

    private DemoData() {
    }

    private static Path cohort() {
        Path dir = DIR.resolve("cohort");
        SimulatedCohorts.ensure(DIR.resolve("demo.yaml"), dir);
        return dir;
    }
}
