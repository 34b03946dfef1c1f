package org.cruxset.scoring.eval;

import java.util.Objects;

/**
 * Per-sample results of decoding one lesion set: the predicted class and the probability given to the true class,
 * for each sample in the order of the scored {@link ModelInputs}. Every aggregate score is derived from these.
 */
public record Outcomes(int[] predicted, float[] trueClassProbability) {
    public Outcomes {
        Objects.requireNonNull(predicted, "predicted");
        Objects.requireNonNull(trueClassProbability, "trueClassProbability");
        if (predicted.length != trueClassProbability.length) {
            throw new IllegalArgumentException("predicted and trueClassProbability differ in length: "
                    + predicted.length + " vs " + trueClassProbability.length);
        }
        predicted = predicted.clone();
        trueClassProbability = trueClassProbability.clone();
    }

    /** Outcomes from class probabilities {@code probs[s][k]} (argmax, ties to the lower class index). */
    public static Outcomes of(float[][] probs, int[] labels) {
        int[] pred = new int[probs.length];
        float[] ptrue = new float[probs.length];
        for (int s = 0; s < probs.length; s++) {
            float[] p = probs[s];
            int arg = 0;
            for (int k = 1; k < p.length; k++) {
                if (p[k] > p[arg]) {
                    arg = k;
                }
            }
            pred[s] = arg;
            ptrue[s] = p[labels[s]];
        }
        return new Outcomes(pred, ptrue);
    }

    public int size() {
        return predicted.length;
    }

    @Override
    public int[] predicted() {
        return predicted.clone();
    }

    @Override
    public float[] trueClassProbability() {
        return trueClassProbability.clone();
    }

    /** Predicted class of sample {@code s}. */
    public int predicted(int s) {
        return predicted[s];
    }

    /** True-class probability of sample {@code s}. */
    public float trueClassProbability(int s) {
        return trueClassProbability[s];
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof Outcomes x && java.util.Arrays.equals(x.predicted, predicted)
                && java.util.Arrays.equals(x.trueClassProbability, trueClassProbability);
    }

    @Override
    public int hashCode() {
        return 31 * java.util.Arrays.hashCode(predicted) + java.util.Arrays.hashCode(trueClassProbability);
    }
}
