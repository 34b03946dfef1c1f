package org.cruxset.scoring.eval;

import org.cruxset.scoring.stats.Binomial;

/**
 * Aggregate scores of one lesion set on n samples, all derived from its {@link Outcomes}: accuracy, balanced
 * accuracy (mean of per-class recalls over classes present), mean probability of the true class, per-class
 * accuracy (NaN for a class without samples), the Wilson 95% interval, chance (the majority-class rate of the scored
 * samples) and the one-sided exact binomial p-value of doing at least this well by chance.
 */
public record SetScore(int n, int correct, double accuracy, double balancedAccuracy, double meanTrueClassProbability,
                       double[] perClassAccuracy, double chance, double wilsonLow, double wilsonHigh, double pValue) {
    public SetScore {
        perClassAccuracy = perClassAccuracy.clone();
    }

    @Override
    public double[] perClassAccuracy() {
        return perClassAccuracy.clone();
    }

    /** Scores class probabilities {@code probs[s][k]} of the samples of {@code inputs}. */
    public static SetScore of(float[][] probs, ModelInputs inputs) {
        int[] labels = inputs.labels();
        return of(Outcomes.of(probs, labels), labels, inputs.classLabels().size());
    }

    /** Scores {@code outcomes} against {@code labels} (class indices) of {@code classes} classes. */
    public static SetScore of(Outcomes outcomes, int[] labels, int classes) {
        int n = outcomes.size();
        if (labels.length != n) {
            throw new IllegalArgumentException("labels and outcomes differ in length: " + labels.length + " vs " + n);
        }
        if (n == 0) {
            throw new IllegalArgumentException("cannot score a set on 0 samples");
        }
        int[] perClassN = new int[classes];
        int[] perClassCorrect = new int[classes];
        int correct = 0;
        double ptrue = 0;
        for (int s = 0; s < n; s++) {
            int y = labels[s];
            perClassN[y]++;
            if (outcomes.predicted(s) == y) {
                correct++;
                perClassCorrect[y]++;
            }
            ptrue += outcomes.trueClassProbability(s);
        }
        double[] perClass = new double[classes];
        double bal = 0;
        int present = 0;
        int majority = 0;
        for (int k = 0; k < classes; k++) {
            majority = Math.max(majority, perClassN[k]);
            if (perClassN[k] > 0) {
                perClass[k] = (double) perClassCorrect[k] / perClassN[k];
                bal += perClass[k];
                present++;
            } else {
                perClass[k] = Double.NaN;
            }
        }
        double chance = (double) majority / n;
        double[] ci = Binomial.wilson(correct, n, Binomial.Z95);
        return new SetScore(n, correct, (double) correct / n, bal / present, ptrue / n, perClass, chance, ci[0], ci[1],
                Binomial.pValueAtLeast(correct, n, chance));
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof SetScore s && s.n == n && s.correct == correct
                && Double.compare(s.meanTrueClassProbability, meanTrueClassProbability) == 0
                && java.util.Arrays.equals(s.perClassAccuracy, perClassAccuracy);
    }

    @Override
    public int hashCode() {
        return 31 * (31 * n + correct) + Double.hashCode(meanTrueClassProbability);
    }
}
