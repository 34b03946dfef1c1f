package org.cruxset.scoring.stats;

import java.util.Arrays;
import java.util.Locale;
import org.apache.commons.math3.special.Erf;
import org.cruxset.scoring.Checks;

/**
 * Paired tests of per-sample correctness under two conditions (e.g. intact and lesioned) and corrections for many
 * tests. Only the discordant samples carry information: {@code b} right intact and wrong lesioned, {@code c} the
 * reverse.
 */
public final class PairedTests {
    private PairedTests() {
    }

    /**
     * Exact two-sided McNemar p-value (McNemar 1947, in its exact conditional form): given {@code b + c} discordant
     * pairs, {@code b ~ Binomial(b + c, 1/2)} under no effect, and the p-value is twice the smaller tail, at most 1.
     * It treats samples as independent, which holds when each subject gives one sample.
     */
    public static double mcNemarExact(int b, int c) {
        Checks.atLeast("b", b, 0);
        Checks.atLeast("c", c, 0);
        int n = b + c;
        if (n == 0) {
            return 1.0;
        }
        int k = Math.min(b, c);
        // P(X <= k) = P(X >= n - k) for X ~ Binomial(n, 1/2).
        double tail = Binomial.pValueAtLeast(n - k, n, 0.5);
        return Math.min(1.0, 2 * tail);
    }

    /**
     * The subject-clustered McNemar test of Durkalski, Palesch, Lipsitz &amp; Rust (2003, Statistics in Medicine 22,
     * "Analysis of clustered matched-pair data"): with {@code b[k]} and {@code c[k]} the discordant counts of subject
     * k, {@code X² = (Σ (b_k − c_k))² / Σ (b_k − c_k)²}, referred to χ² with one degree of freedom. It allows samples
     * of one subject to be correlated; it is asymptotic and wants a fair number of subjects with discordant samples.
     * Returns 1 when no subject has an imbalance.
     */
    public static double mcNemarClustered(int[] b, int[] c) {
        if (b.length != c.length) {
            throw new IllegalArgumentException("one b and one c per subject: " + b.length + " and " + c.length);
        }
        double num = 0;
        double den = 0;
        for (int k = 0; k < b.length; k++) {
            double d = b[k] - c[k];
            num += d;
            den += d * d;
        }
        if (den == 0) {
            return 1.0;
        }
        // The upper tail of χ² with one degree of freedom: P(Z² > x) = erfc(√(x / 2)).
        return Erf.erfc(Math.sqrt(num * num / den / 2));
    }

    /** A multiple-testing correction. */
    public enum Correction {
        /** Holm (1979) step-down: controls the family-wise error rate. */
        HOLM,
        /** Benjamini &amp; Hochberg (1995) step-up: controls the false discovery rate. */
        BH;

        /** Parses {@code holm} or {@code bh}. */
        public static Correction parse(String s) {
            return switch (s.toLowerCase(Locale.ROOT)) {
                case "holm" -> HOLM;
                case "bh", "fdr" -> BH;
                default -> throw new IllegalArgumentException("correction must be holm or bh, found '" + s + "'");
            };
        }

        /** The spelling in outputs. */
        public String label() {
            return this == HOLM ? "holm" : "bh";
        }

        /** Adjusted p-values of {@code p}, in the same order. */
        public double[] adjust(double[] p) {
            return this == HOLM ? holm(p) : benjaminiHochberg(p);
        }
    }

    /**
     * Holm's step-down adjusted p-values, in the order given: sorted ascending, {@code p_(i) × (m − i + 1)} made
     * non-decreasing and capped at 1.
     */
    public static double[] holm(double[] p) {
        int m = p.length;
        Integer[] order = ascending(p);
        double[] out = new double[m];
        double running = 0;
        for (int i = 0; i < m; i++) {
            running = Math.max(running, Math.min(1.0, p[order[i]] * (m - i)));
            out[order[i]] = running;
        }
        return out;
    }

    /**
     * Benjamini–Hochberg adjusted p-values, in the order given: sorted ascending, {@code p_(i) × m / i} made
     * non-increasing from the largest down and capped at 1.
     */
    public static double[] benjaminiHochberg(double[] p) {
        int m = p.length;
        Integer[] order = ascending(p);
        double[] out = new double[m];
        double running = 1.0;
        for (int i = m - 1; i >= 0; i--) {
            running = Math.min(running, p[order[i]] * m / (i + 1));
            out[order[i]] = Math.min(1.0, running);
        }
        return out;
    }

    private static Integer[] ascending(double[] p) {
        for (double v : p) {
            if (!(v >= 0 && v <= 1)) {
                throw new IllegalArgumentException("p-values must be within [0, 1], found " + v);
            }
        }
        Integer[] order = new Integer[p.length];
        for (int i = 0; i < order.length; i++) {
            order[i] = i;
        }
        Arrays.sort(order, (x, y) -> Double.compare(p[x], p[y]));
        return order;
    }
}
