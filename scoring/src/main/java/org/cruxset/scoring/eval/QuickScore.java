package org.cruxset.scoring.eval;

import org.cruxset.scoring.stats.Binomial;

/**
 * Accuracy of one lesion set on held-out samples: correct count, n, chance (majority-class rate), the Wilson 95%
 * interval and the one-sided exact binomial p-value of doing at least this well by chance.
 */
public record QuickScore(int correct, int n, double chance, double wilsonLow, double wilsonHigh, double pValue) {

    /** Scores {@code correct} out of {@code n} against {@code chance}. */
    public static QuickScore of(int correct, int n, double chance) {
        double[] ci = Binomial.wilson(correct, n, Binomial.Z95);
        return new QuickScore(correct, n, chance, ci[0], ci[1], Binomial.pValueAtLeast(correct, n, chance));
    }

    public double accuracy() {
        return n == 0 ? 0 : (double) correct / n;
    }

    /** Not significantly above chance at level {@code alpha} (one-sided exact binomial). */
    public boolean atChance(double alpha) {
        return pValue >= alpha;
    }

    /** Number of correct argmax predictions in {@code probs[s][k]} against {@code labels}. */
    public static int countCorrect(float[][] probs, ModelInputs inputs) {
        int correct = 0;
        for (int s = 0; s < probs.length; s++) {
            float[] p = probs[s];
            int arg = 0;
            for (int k = 1; k < p.length; k++) {
                if (p[k] > p[arg]) {
                    arg = k;
                }
            }
            if (arg == inputs.label(s)) {
                correct++;
            }
        }
        return correct;
    }
}
