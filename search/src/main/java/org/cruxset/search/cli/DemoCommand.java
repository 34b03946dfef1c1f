package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.eval.HeldOut;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.simulate.TruthFile;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset demo}: the main job on the bundled synthetic cohort and its trained decoder. */
@Command(name = "demo", mixinStandardHelpOptions = true,
        description = {"Run Cruxset on the bundled synthetic demo: the decoder's held-out accuracy, and what lesioning",
            "its known critical regions (and, as a control, as many decoy regions) does to it."})
public final class DemoCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--demo", defaultValue = "demo-data", paramLabel = "DIR",
            description = "Folder of the bundled demo (cohort/ and model.onnx). Default: ${DEFAULT-VALUE}.")
    Path demo;

    @Option(names = "--alpha", paramLabel = "A", defaultValue = "0.05", description = "Level of the collapse test. Default: ${DEFAULT-VALUE}.")
    double alpha;

    @Mixin
    ThreadOptions threads;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        Path cohortDir = demo.resolve("cohort");
        Path modelFile = demo.resolve("model.onnx");
        Path truth = cohortDir.resolve(TruthFile.NAME);
        for (Path p : List.of(cohortDir, modelFile, truth)) {
            if (!Files.exists(p)) {
                throw new IllegalArgumentException(p + " not found: run from the repository root, or pass --demo DIR");
            }
        }
        int t = threads.threads();
        pw.println(Reports.CAUTION);
        pw.println();
        Cohort c = CohortFiles.read(cohortDir);
        Reports.cohort(pw, c);
        try (Decoder decoder = OnnxModels.load(modelFile, OnnxOptions.defaults())) {
            Reports.model(pw, decoder.card());
            HeldOut held = HeldOut.of(c, decoder.card());
            ModelInputs in = ModelInputs.prepare(decoder.card(), c.atlas(), held.samples());
            List<List<String>> critical = TruthFile.decoderMinimumSets(truth);
            List<String> decoys = TruthFile.decoys(truth);
            List<String> set = critical.get(0);
            List<String> control = decoys.subList(0, Math.min(decoys.size(), set.size()));
            List<InputMask> masks = List.of(InputMask.none(in.batch().regions()), mask(decoder, set), mask(decoder, control));
            float[][][] probs = decoder.bind(in.batch()).probabilities(masks, t);
            List<SetScore> scores = new ArrayList<>();
            for (float[][] p : probs) {
                scores.add(SetScore.of(p, in));
            }
            CollapseCriterion crit = new CollapseCriterion(CollapseCriterion.Kind.BINOMIAL, alpha);
            pw.println();
            Reports.score(pw, "Intact decoder on the " + held.description(), scores.get(0));
            Reports.score(pw, "Lesion " + set + " (a minimal critical set of this decoder)", scores.get(1));
            pw.printf("  -> %s at alpha %.2f%n", crit.critical(scores.get(1), scores.get(0)) ? "CRITICAL: accuracy not significantly above chance"
                    : "not critical", alpha);
            Reports.score(pw, "Lesion " + control + " (as many decoy regions, the control)", scores.get(2));
            pw.printf("  -> %s at alpha %.2f%n", crit.critical(scores.get(2), scores.get(0)) ? "CRITICAL" : "not critical: decoding survives", alpha);
            pw.printf("%nAll %d critical sets of minimum size: %s%n", critical.size(), critical);
            pw.printf("%nScore lesions of your own choice (kept and reused in %s):%n"
                    + "  ./cruxset score --model %s --cohort %s --lesion \"%s\" --lesion network:%s --out %s%n",
                    "cruxset-out/results.sqlite", modelFile, cohortDir, String.join(",", set),
                    c.atlas().networks().keySet().iterator().next(), "cruxset-out");
        }
        return 0;
    }

    private static InputMask mask(Decoder decoder, List<String> regions) {
        List<String> names = decoder.card().regionNames();
        int[] pos = new int[regions.size()];
        for (int i = 0; i < pos.length; i++) {
            pos[i] = names.indexOf(regions.get(i));
            if (pos[i] < 0) {
                throw new IllegalArgumentException("region '" + regions.get(i) + "' is not an input of the demo model");
            }
        }
        return InputMask.zero(RegionSet.of(decoder.card().regions(), pos));
    }
}
