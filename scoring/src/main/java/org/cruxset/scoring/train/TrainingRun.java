package org.cruxset.scoring.train;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.cohort.SubjectSplits;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.lesion.ReferenceStats;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.simulate.DecoderTruth;
import org.cruxset.scoring.simulate.TruthFile;

/**
 * Trains a decoder on a cohort, saves it as ONNX (with each region's mean and variance over the training split, the
 * reference of the mean and noise lesion modes), loads the saved file back (so what is evaluated is what was
 * written) and scores it on the test split; where the cohort has a {@code truth.json}, adds the decoder's own
 * truth to it by lesioning every subset of the planted pool on the search part of the test subjects (and confirming
 * the smallest critical sets on the confirmation part), as {@link org.cruxset.scoring.eval.ScoringSession} splits them.
 */
public final class TrainingRun {
    private TrainingRun() {
    }

    /** What a training run produced. */
    public record Summary(Path model, TrainingResult training, SetScore test, DecoderTruth truth, String modelHash,
                          int trainSamples, int validationSamples, int testSamples) {
    }

    /**
     * Runs training. Splits come from the manifest, or are drawn by subject from {@code config.seed()} (60/20/20)
     * when the manifest has none. {@code truthFile} may be null or absent; the truth is judged under each of
     * {@code criteria} (the first is the default) on the parts drawn with {@code splitSeed} and {@code confirm}.
     */
    public static Summary run(Cohort cohort, Preprocessing pre, TrainingConfig config, Path modelOut, Path truthFile,
                              List<CollapseCriterion> criteria, long splitSeed, double confirm,
                              GruTrainer.Listener listener) {
        Cohort split = SubjectSplits.resolve(cohort, config.seed(), 0.6, 0.2, 0.2);
        int nTrain = split.split(Split.TRAIN).size();
        int nVal = split.split(Split.VALIDATION).size();
        int nTest = split.split(Split.TEST).size();
        if (nTrain == 0 || nVal == 0 || nTest == 0) {
            throw new IllegalArgumentException("training needs samples in train, validation and test splits, found "
                    + nTrain + ", " + nVal + " and " + nTest);
        }
        ModelTraining.Trained trained = ModelTraining.train(split, pre, config, listener);
        Map<String, String> meta = new LinkedHashMap<>(Provenance.current().asMetadata("cruxset.provenance."));
        meta.put("cruxset.training.seed", Long.toString(config.seed()));
        meta.put("cruxset.training.config", config.toString());
        meta.put("cruxset.training.best_epoch", Integer.toString(trained.result().bestEpoch()));
        meta.put("cruxset.training.subjects", subjectsBySplit(split));
        GruTrainer.Data trainData = ModelTraining.data(split, Split.TRAIN, pre, trained.classes());
        meta.putAll(ReferenceStats.of(InputBatch.of(trainData.inputs(), trainData.series(), trainData.lengths())).toMetadata());
        byte[] bytes = OnnxGruWriter.write(trained.network(), trained.regions(), trained.classes(), pre, meta);
        try {
            Path parent = modelOut.toAbsolutePath().getParent();
            Files.createDirectories(parent);
            Files.write(modelOut, bytes);
        } catch (IOException e) {
            throw new UncheckedIOException(modelOut + ": cannot write model: " + e.getMessage(), e);
        }
        try (Decoder decoder = OnnxModels.load(modelOut, OnnxOptions.defaults().withEngine(OnnxOptions.Engine.NATIVE))) {
            ModelInputs test = ModelInputs.prepare(decoder.card(), split.atlas(), split.split(Split.TEST));
            float[][][] probs = decoder.bind(test.batch()).probabilities(List.of(InputMask.none(test.batch().regions())),
                    config.threads());
            SetScore score = SetScore.of(probs[0], test);
            DecoderTruth truth = null;
            if (truthFile != null && Files.isRegularFile(truthFile)) {
                List<String> pool = TruthFile.pool(truthFile);
                int[] positions = new int[pool.size()];
                List<String> names = decoder.card().regionNames();
                for (int i = 0; i < pool.size(); i++) {
                    positions[i] = names.indexOf(pool.get(i));
                    if (positions[i] < 0) {
                        throw new IllegalArgumentException(truthFile + ": pool region '" + pool.get(i) + "' is not a model input");
                    }
                }
                Parts parts = Parts.split(split.split(Split.TEST), splitSeed, confirm);
                ModelInputs search = ModelInputs.prepare(decoder.card(), split.atlas(), parts.search());
                ModelInputs confirmation = parts.hasConfirmation()
                        ? ModelInputs.prepare(decoder.card(), split.atlas(), parts.confirmation()) : null;
                truth = DecoderTruth.compute(decoder, parts, search, confirmation, pool, positions, criteria,
                        config.threads());
                TruthFile.writeDecoderTruth(truthFile, decoder.card().modelHash(), truth);
            }
            return new Summary(modelOut, trained.result(), score, truth, decoder.card().modelHash(), nTrain, nVal, nTest);
        }
    }

    private static String subjectsBySplit(Cohort cohort) {
        StringBuilder sb = new StringBuilder();
        for (Split s : List.of(Split.TRAIN, Split.VALIDATION, Split.TEST)) {
            List<String> subjects = new ArrayList<>(new java.util.TreeSet<>(cohort.withSamples(cohort.split(s)).subjects()));
            sb.append(s.label()).append('=').append(String.join(",", subjects)).append(';');
        }
        return sb.toString();
    }
}
