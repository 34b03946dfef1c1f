package org.cruxset.scoring.eval;

import java.util.Arrays;
import org.apache.commons.math3.distribution.HypergeometricDistribution;

/**
 * A sequential decision, from a set's outcomes on a growing prefix of the search part, whether its full-part count
 * of correct samples k is at most a threshold K (every collapse criterion is such a threshold on the count: see
 * {@link CollapseCriterion#criticalCount}). The part's n samples are scored in a fixed random order; after each look
 * (a cumulative sample count m) with c correct so far the rule says AT_MOST, ABOVE or OPEN.
 *
 * <p>Deterministic stops never err: ABOVE once c > K, AT_MOST once c + (n − m) ≤ K. Statistical stops use the exact
 * hypergeometric tail of sampling without replacement from the finite part (Commons Math
 * {@link HypergeometricDistribution}): AT_MOST when P(C ≤ c | k = K + 1) ≤ α_j, ABOVE when P(C ≥ c | k = K) ≤ α_j.
 * The tails are monotone in k, so these are the least favourable true counts, and a union bound over the looks gives
 * P(wrong verdict) ≤ Σ α_j ≤ α for every true k. The error is spent linearly in information time, α_j = α·(m_j −
 * m_{j−1})/n (the ρ = 1 member of the power family of spending functions, Lan &amp; DeMets 1983, Biometrika 70); the
 * last look sees every sample and is exact. Immutable; the stop bounds are computed once.
 */
public final class RaceRule {
    /** A verdict after a look. */
    public enum Verdict {
        /** k ≤ K (the set is critical, or no better than the given count). */
        AT_MOST,
        /** k > K. */
        ABOVE,
        /** Not settled yet: score the next chunk. */
        OPEN
    }

    private final int n;
    private final int threshold;
    private final int[] looks;
    private final double alpha;
    /** At look j, AT_MOST when c ≤ atMost[j] (−1: never). */
    private final int[] atMost;
    /** At look j, ABOVE when c ≥ above[j] (m_j + 1: never). */
    private final int[] above;

    private RaceRule(int n, int threshold, int[] looks, double alpha) {
        this.n = n;
        this.threshold = threshold;
        this.looks = looks;
        this.alpha = alpha;
        atMost = new int[looks.length];
        above = new int[looks.length];
        int previous = 0;
        for (int j = 0; j < looks.length; j++) {
            int m = looks[j];
            double aj = alpha * (m - previous) / n;
            previous = m;
            // Deterministic bounds.
            int low = Math.min(m, threshold - (n - m));
            int high = Math.max(0, threshold + 1);
            if (m < n && threshold + 1 <= n && threshold + 1 >= 0) {
                // AT_MOST: the largest c with P(C <= c | k = K + 1) <= a_j.
                HypergeometricDistribution h = new HypergeometricDistribution(null, n, threshold + 1, m);
                int c = Math.max(low, -1);
                while (c + 1 <= m && h.cumulativeProbability(c + 1) <= aj) {
                    c++;
                }
                low = Math.max(low, c);
            }
            if (m < n && threshold >= 0 && threshold <= n) {
                // ABOVE: the smallest c with P(C >= c | k = K) <= a_j.
                HypergeometricDistribution h = new HypergeometricDistribution(null, n, threshold, m);
                int c = Math.min(high, m + 1);
                while (c - 1 >= 0 && h.upperCumulativeProbability(c - 1) <= aj) {
                    c--;
                }
                high = Math.min(high, c);
            }
            atMost[j] = Math.max(-1, low);
            above[j] = Math.min(m + 1, high);
        }
    }

    /**
     * The rule for a part of {@code n} samples, threshold {@code threshold} (any integer: below 0 every set is ABOVE,
     * at n or more every set is AT_MOST), cumulative look sizes {@code looks} (increasing, the last equal to n) and
     * overall error rate {@code alpha} (0 for deterministic stops only).
     */
    public static RaceRule of(int n, int threshold, int[] looks, double alpha) {
        if (n < 1) {
            throw new IllegalArgumentException("a race needs at least one sample, found " + n);
        }
        if (!(alpha >= 0 && alpha < 1)) {
            throw new IllegalArgumentException("race alpha must be in [0, 1), found " + alpha);
        }
        if (looks.length == 0 || looks[looks.length - 1] != n) {
            throw new IllegalArgumentException("the last look must see all " + n + " samples, found "
                    + Arrays.toString(looks));
        }
        for (int j = 0; j < looks.length; j++) {
            if (looks[j] < 1 || j > 0 && looks[j] <= looks[j - 1]) {
                throw new IllegalArgumentException("looks must increase from at least 1, found " + Arrays.toString(looks));
            }
        }
        return new RaceRule(n, Math.max(-1, Math.min(n, threshold)), looks.clone(), alpha);
    }

    /**
     * Looks after every {@code chunk} samples of {@code n}: chunk, 2·chunk, ..., n (the last one possibly shorter).
     */
    public static int[] looks(int n, int chunk) {
        if (chunk < 1) {
            throw new IllegalArgumentException("chunk must be at least 1, found " + chunk);
        }
        int count = (n + chunk - 1) / chunk;
        int[] l = new int[count];
        for (int j = 0; j < count; j++) {
            l[j] = Math.min(n, (j + 1) * chunk);
        }
        return l;
    }

    /** The verdict at look {@code look} with {@code correct} correct samples among the first {@code looks[look]}. */
    public Verdict verdict(int look, int correct) {
        if (correct <= atMost[look]) {
            return Verdict.AT_MOST;
        }
        if (correct >= above[look]) {
            return Verdict.ABOVE;
        }
        return Verdict.OPEN;
    }

    public int samples() {
        return n;
    }

    public int threshold() {
        return threshold;
    }

    public double alpha() {
        return alpha;
    }

    /** The cumulative sample counts of the looks. */
    public int[] looks() {
        return looks.clone();
    }

    /** At each look, the largest correct count that stops with AT_MOST (−1: none). */
    public int[] atMostBounds() {
        return atMost.clone();
    }

    /** At each look, the smallest correct count that stops with ABOVE (beyond the look's size: none). */
    public int[] aboveBounds() {
        return above.clone();
    }
}
