package org.cruxset.scoring.stats;

import org.apache.commons.math3.special.Beta;
import org.cruxset.scoring.Checks;

/** Exact binomial tail probabilities and the Wilson score interval for a proportion. */
public final class Binomial {
    /** The standard normal 0.975 quantile, for 95% intervals. */
    public static final double Z95 = 1.959963984540054;

    private Binomial() {
    }

    /**
     * One-sided exact p-value {@code P(X >= successes)} for {@code X ~ Binomial(n, p0)}: the probability of doing at
     * least this well by chance. Computed as the regularised incomplete beta {@code I_p0(k, n - k + 1)}.
     */
    public static double pValueAtLeast(int successes, int n, double p0) {
        Checks.atLeast("n", n, 0);
        Checks.within("successes", successes, 0, n);
        Checks.within("p0", p0, 0.0, 1.0);
        if (successes == 0) {
            return 1.0;
        }
        if (p0 == 0) {
            return 0.0;
        }
        if (p0 == 1) {
            return 1.0;
        }
        return Beta.regularizedBeta(p0, successes, n - successes + 1.0);
    }

    /** Wilson score interval {@code [low, high]} for {@code successes} out of {@code n} at normal quantile {@code z}. */
    public static double[] wilson(int successes, int n, double z) {
        Checks.atLeast("n", n, 1);
        Checks.within("successes", successes, 0, n);
        double p = (double) successes / n;
        double z2 = z * z;
        double denom = 1 + z2 / n;
        double centre = (p + z2 / (2.0 * n)) / denom;
        double half = z * Math.sqrt(p * (1 - p) / n + z2 / (4.0 * n * n)) / denom;
        return new double[] {Math.max(0, centre - half), Math.min(1, centre + half)};
    }
}
