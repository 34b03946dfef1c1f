package org.cruxset.scoring.eval;

import java.util.List;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.ModelCard;

/**
 * Which samples are held out for a decoder: for a model Cruxset trained, the cohort's test split; for a model
 * trained elsewhere, the whole cohort (its split column, if any, is not the model's).
 */
public record HeldOut(List<Sample> samples, String description) {
    public HeldOut {
        samples = List.copyOf(samples);
    }

    /** Metadata key that marks a model trained by Cruxset. */
    public static final String TRAINED_HERE_KEY = "cruxset.training.seed";

    /** Chooses the held-out samples of {@code cohort} for the decoder described by {@code card}. */
    public static HeldOut of(Cohort cohort, ModelCard card) {
        boolean trainedHere = card.metadata().containsKey(TRAINED_HERE_KEY);
        if (trainedHere) {
            List<Sample> test = cohort.split(Split.TEST);
            if (test.isEmpty()) {
                throw new IllegalArgumentException("the model was trained by Cruxset but the cohort has no test split: "
                        + "give the cohort the manifest (with its split column) the model was trained on");
            }
            return new HeldOut(test, "test split (" + test.size() + " samples, subjects not seen in training)");
        }
        return new HeldOut(cohort.samples(), "whole cohort (" + cohort.samples().size()
                + " samples; the model was trained elsewhere)");
    }
}
