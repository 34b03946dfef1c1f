package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.simulate.DecoderTruth;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.scoring.train.TrainingConfig;
import org.cruxset.scoring.train.TrainingRun;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset train}: trains Cruxset's GRU decoder and saves it as ONNX. */
@Command(name = "train", mixinStandardHelpOptions = true,
        description = {"Train a GRU decoder on a cohort (splits by subject) and save it as a standard ONNX model.",
            "Where the cohort has a truth.json, the decoder's own truth (exhaustive lesions of the planted pool) is added to it."})
public final class TrainCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    CohortOptions cohort;

    @Option(names = "--out", required = true, paramLabel = "FILE", description = "Where to write the ONNX model.")
    Path out;

    @Option(names = "--seed", required = true, paramLabel = "N", description = "Seed of initialisation, shuffling and any split.")
    long seed;

    @Option(names = "--hidden", paramLabel = "N", defaultValue = "32", description = "GRU hidden size. Default: ${DEFAULT-VALUE}.")
    int hidden;

    @Option(names = "--layers", paramLabel = "N", defaultValue = "1", description = "Stacked GRU layers. Default: ${DEFAULT-VALUE}.")
    int layers;

    @Option(names = "--epochs", paramLabel = "N", defaultValue = "60", description = "Most epochs. Default: ${DEFAULT-VALUE}.")
    int epochs;

    @Option(names = "--batch", paramLabel = "N", defaultValue = "32", description = "Mini-batch size. Default: ${DEFAULT-VALUE}.")
    int batch;

    @Option(names = "--learning-rate", paramLabel = "RATE", defaultValue = "0.005", description = "Adam step size. Default: ${DEFAULT-VALUE}.")
    double learningRate;

    @Option(names = "--weight-decay", paramLabel = "W", defaultValue = "1e-4", description = "Decoupled weight decay. Default: ${DEFAULT-VALUE}.")
    double weightDecay;

    @Option(names = "--clip", paramLabel = "NORM", defaultValue = "5.0", description = "Global gradient-norm clip. Default: ${DEFAULT-VALUE}.")
    double clip;

    @Option(names = "--patience", paramLabel = "N", defaultValue = "8", description = "Epochs without a lower validation loss before stopping. Default: ${DEFAULT-VALUE}.")
    int patience;

    @Option(names = "--preprocessing", defaultValue = "none", paramLabel = "P",
            description = "none or zscore (per sample and region; recorded in the model). Default: ${DEFAULT-VALUE}.")
    String preprocessing;

    @Option(names = "--truth-criteria", paramLabel = "C", split = ",", defaultValue = "binomial:0.05,upper:0.1",
            description = "Collapse criteria under which the decoder's own truth is computed, comma-separated; the "
                    + "truth's minimum_critical_sets follow the first (see cruxset score --help for the kinds). "
                    + "Default: ${DEFAULT-VALUE}.")
    List<String> truthCriteria;

    @Mixin
    PartOptions parts;

    @Mixin
    ThreadOptions threads;

    @Override
    public Integer call() {
        Cohort c = cohort.read();
        int t = threads.threads();
        TrainingConfig cfg = new TrainingConfig(hidden, layers, epochs, batch, learningRate, weightDecay, clip, patience, seed, t);
        PrintWriter pw = spec.commandLine().getOut();
        Path truth = cohort.folder().resolve(TruthFile.NAME);
        ProgressBar bar = new ProgressBar(spec.commandLine().getErr(), "training");
        List<CollapseCriterion> criteria = new ArrayList<>();
        for (String text : truthCriteria) {
            criteria.add(CollapseCriterion.parse(text));
        }
        TrainingRun.Summary s = TrainingRun.run(c, Preprocessing.parse(preprocessing), cfg, out, truth, criteria,
                parts.splitSeed(), parts.confirm(),
                (e, max, improved) -> bar.update(e.epoch(), max, String.format("train loss %.3f, validation loss %.3f, accuracy %.3f%s",
                        e.trainLoss(), e.validationLoss(), e.validationAccuracy(), improved ? " *" : "")));
        bar.done();
        pw.printf("Trained on %d samples (validation %d); best epoch %d of %d run.%n", s.trainSamples(),
                s.validationSamples(), s.training().bestEpoch(), s.training().epochs().size());
        pw.printf("Saved %s (sha256 %s)%n", s.model(), s.modelHash());
        SetScore q = s.test();
        pw.printf("Test accuracy %.3f (95%% Wilson %.3f-%.3f, n = %d); chance %.3f (majority class); p = %.3g%n",
                q.accuracy(), q.wilsonLow(), q.wilsonHigh(), q.n(), q.chance(), q.pValue());
        DecoderTruth tr = s.truth();
        if (tr != null) {
            pw.printf("Decoder's own truth: %d lesioned subsets of the planted pool scored on the search part (%d samples"
                    + "); %s%n", tr.sets().size(), tr.intact().n(), tr.parts().hasConfirmation()
                    ? "smallest critical sets re-scored on the confirmation part (" + tr.confirmationIntact().n()
                    + " samples)" : "no confirmation part");
            for (DecoderTruth.Verdicts v : tr.verdicts()) {
                pw.printf("  %s: minimum critical sets %s", v.criterion().label(), v.minimumCriticalSets());
                if (!v.confirmed().isEmpty()) {
                    int ok = 0;
                    for (DecoderTruth.Confirmed x : v.confirmed()) {
                        ok += x.critical() ? 1 : 0;
                    }
                    pw.printf(", %d of %d critical on the confirmation part", ok, v.confirmed().size());
                }
                pw.println();
            }
            pw.printf("Written to %s%n", truth);
        }
        return 0;
    }
}
