package org.cruxset.scoring.train;

import java.util.List;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruNetwork;

/** Trains a GRU decoder on a cohort whose samples are all in a split (train and validation are used). */
public final class ModelTraining {
    private ModelTraining() {
    }

    /** A trained decoder with what it needs to be saved: class labels, region names and preprocessing. */
    public record Trained(GruNetwork network, TrainingResult result, List<String> classes, List<String> regions,
                          Preprocessing preprocessing) {
        public Trained {
            classes = List.copyOf(classes);
            regions = List.copyOf(regions);
        }
    }

    /** Trains with {@code config}; {@code pre} is applied to every sample first and recorded with the model. */
    public static Trained train(Cohort cohort, Preprocessing pre, TrainingConfig config, GruTrainer.Listener listener) {
        List<String> classes = cohort.classes();
        GruTrainer.Data train = data(cohort, Split.TRAIN, pre, classes);
        GruTrainer.Data validation = data(cohort, Split.VALIDATION, pre, classes);
        TrainingResult result = new GruTrainer(config).train(train, validation, classes.size(), listener);
        return new Trained(result.network(), result, classes, cohort.atlas().names(), pre);
    }

    /** The samples of one split in model input space, labelled by index into {@code classes}. */
    public static GruTrainer.Data data(Cohort cohort, Split split, Preprocessing pre, List<String> classes) {
        List<Sample> samples = cohort.split(split);
        float[][] series = new float[samples.size()][];
        int[] lengths = new int[samples.size()];
        int[] labels = new int[samples.size()];
        for (int i = 0; i < samples.size(); i++) {
            Sample s = samples.get(i);
            series[i] = pre.apply(s).values();
            lengths[i] = s.length();
            labels[i] = classes.indexOf(s.label());
        }
        return new GruTrainer.Data(cohort.atlas().size(), series, lengths, labels);
    }
}
