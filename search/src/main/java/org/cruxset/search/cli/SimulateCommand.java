package org.cruxset.search.cli;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.simulate.CohortSimulator;
import org.cruxset.scoring.simulate.PlantedDesign;
import org.cruxset.scoring.simulate.SimulatedCohorts;
import org.cruxset.scoring.simulate.TruthFile;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;
import picocli.CommandLine.Model.CommandSpec;

/** {@code cruxset simulate}: writes a synthetic cohort with planted ground truth. */
@Command(name = "simulate", mixinStandardHelpOptions = true,
        description = "Write a synthetic cohort with planted ground truth (truth.json beside it).")
public final class SimulateCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--config", required = true, paramLabel = "YAML", description = "Simulation settings, e.g. configs/ci.yaml.")
    Path config;

    @Option(names = "--out", required = true, paramLabel = "DIR", description = "Folder to write the cohort to.")
    Path out;

    @Option(names = "--format", defaultValue = "npy", paramLabel = "F",
            description = "npy (one samples.npy array) or tsv (one TSV per sample). Default: ${DEFAULT-VALUE}.")
    String format;

    @Override
    public Integer call() throws IOException {
        boolean npy = switch (format) {
            case "npy" -> true;
            case "tsv" -> false;
            default -> throw new IllegalArgumentException("--format must be npy or tsv, found '" + format + "'");
        };
        CohortSimulator.Result r = SimulatedCohorts.write(config, out, npy);
        PrintWriter pw = spec.commandLine().getOut();
        PlantedDesign d = r.design();
        pw.printf("Wrote %d samples (%d subjects; train %d, validation %d, test %d) over %d regions to %s%n",
                r.cohort().samples().size(), r.cohort().subjects().size(), r.cohort().split(Split.TRAIN).size(),
                r.cohort().split(Split.VALIDATION).size(), r.cohort().split(Split.TEST).size(),
                r.cohort().atlas().size(), out);
        pw.printf("Planted: redundant group %s (SNR %.2f), synergistic pair %s (SNR %.3f per member), decoys %s%n",
                d.redundant(), d.redundantSnr(), d.pair(), d.pairSnr(), d.decoys());
        pw.printf("Designed minimal critical sets: %s%n", d.designedMinimalSets());
        pw.printf("Ground truth: %s (train a decoder to add its own truth)%n", out.resolve(TruthFile.NAME));
        return 0;
    }
}
