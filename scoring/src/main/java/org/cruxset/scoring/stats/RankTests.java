package org.cruxset.scoring.stats;

import java.util.Arrays;

/**
 * Rank statistics for comparing strategies over seeds and rankings over regions, exact where the data are small:
 * the Wilcoxon signed-rank test for paired samples, the Mann–Whitney U test for unpaired ones, Spearman's ρ and
 * Kendall's τ-b. Ties get midranks; the exact p-values are those of the permutation distribution of the statistic
 * given the observed (tied) ranks, computed by dynamic programming over doubled ranks, so ties and zero differences,
 * common when the data are set sizes, need no approximation. Two-sided p-values are P(|T − E T| ≥ |t − E T|) under
 * the null, with a relative tolerance of 1e-9 on the comparison so that equal values computed in another order count
 * as equal.
 */
public final class RankTests {
    private RankTests() {
    }

    /** A test's statistic, two-sided p-value, and the method in words. */
    public record Result(double statistic, double pValue, String method) {
    }

    /** Midranks (1-based) of {@code v}: tied values share the mean of the ranks they span. */
    public static double[] midranks(double[] v) {
        int n = v.length;
        Integer[] order = new Integer[n];
        for (int i = 0; i < n; i++) {
            if (Double.isNaN(v[i])) {
                throw new IllegalArgumentException("value " + i + " is NaN");
            }
            order[i] = i;
        }
        Arrays.sort(order, (a, b) -> Double.compare(v[a], v[b]));
        double[] r = new double[n];
        int i = 0;
        while (i < n) {
            int j = i;
            while (j + 1 < n && v[order[j + 1]] == v[order[i]]) {
                j++;
            }
            double mid = (i + j) / 2.0 + 1;
            for (int k = i; k <= j; k++) {
                r[order[k]] = mid;
            }
            i = j + 1;
        }
        return r;
    }

    /**
     * The Wilcoxon signed-rank test of the differences x − y (two-sided, exact). Zero differences are handled by
     * Pratt's method (Pratt 1959): they are ranked with the others by absolute value and then left out of the
     * statistic, so they still shift the ranks of the rest; with {@code pratt} false they are dropped before ranking
     * (Wilcoxon's original treatment). The statistic is W+, the sum of the ranks of the positive differences.
     */
    public static Result wilcoxonSignedRank(double[] x, double[] y, boolean pratt) {
        if (x.length != y.length) {
            throw new IllegalArgumentException("paired samples must have the same length, found " + x.length + " and "
                    + y.length);
        }
        double[] d = new double[x.length];
        for (int i = 0; i < d.length; i++) {
            d[i] = x[i] - y[i];
        }
        double[] kept = pratt ? d : Arrays.stream(d).filter(v -> v != 0).toArray();
        double[] abs = Arrays.stream(kept).map(Math::abs).toArray();
        double[] ranks = midranks(abs);
        int m = 0;
        for (double v : kept) {
            m += v != 0 ? 1 : 0;
        }
        int[] doubled = new int[m];
        double wPlus = 0;
        int k = 0;
        for (int i = 0; i < kept.length; i++) {
            if (kept[i] != 0) {
                doubled[k++] = (int) Math.round(2 * ranks[i]);
                if (kept[i] > 0) {
                    wPlus += ranks[i];
                }
            }
        }
        String method = "Wilcoxon signed-rank, exact permutation distribution of W+ given the midranks, zeros by "
                + (pratt ? "Pratt's method" : "dropping them");
        if (m == 0) {
            return new Result(0, 1, method);
        }
        // counts[s] = number of sign assignments whose positive doubled ranks sum to s.
        int total = Arrays.stream(doubled).sum();
        double[] counts = new double[total + 1];
        counts[0] = 1;
        int reach = 0;
        for (int r : doubled) {
            for (int s = reach; s >= 0; s--) {
                if (counts[s] != 0) {
                    counts[s + r] += counts[s];
                }
            }
            reach += r;
        }
        double centre = total / 2.0;
        double observed = Math.abs(2 * wPlus - centre);
        double extreme = 0;
        double all = 0;
        for (int s = 0; s <= total; s++) {
            all += counts[s];
            if (Math.abs(s - centre) >= observed * (1 - 1e-9)) {
                extreme += counts[s];
            }
        }
        return new Result(wPlus, Math.min(1, extreme / all), method);
    }

    /**
     * The Mann–Whitney U test of two independent samples (two-sided, exact): U is the number of pairs (x_i, y_j)
     * with x_i &gt; y_j, ties counting one half; the p-value is that of the permutation distribution of the rank
     * sum of x given the pooled midranks (every split of the pooled sample into groups of the two sizes equally
     * likely).
     */
    public static Result mannWhitneyU(double[] x, double[] y) {
        int n1 = x.length;
        int n2 = y.length;
        if (n1 == 0 || n2 == 0) {
            throw new IllegalArgumentException("both samples need at least one value, found " + n1 + " and " + n2);
        }
        double[] pooled = new double[n1 + n2];
        System.arraycopy(x, 0, pooled, 0, n1);
        System.arraycopy(y, 0, pooled, n1, n2);
        double[] ranks = midranks(pooled);
        int[] doubled = new int[pooled.length];
        int rankSum2 = 0;
        for (int i = 0; i < pooled.length; i++) {
            doubled[i] = (int) Math.round(2 * ranks[i]);
            if (i < n1) {
                rankSum2 += doubled[i];
            }
        }
        double u = rankSum2 / 2.0 - n1 * (n1 + 1) / 2.0;
        int total = Arrays.stream(doubled).sum();
        // ways[k][s]: number of k-subsets of the items seen so far with doubled rank sum s.
        double[][] ways = new double[n1 + 1][total + 1];
        ways[0][0] = 1;
        for (int r : doubled) {
            for (int k = n1; k >= 1; k--) {
                double[] to = ways[k];
                double[] from = ways[k - 1];
                for (int s = total - r; s >= 0; s--) {
                    if (from[s] != 0) {
                        to[s + r] += from[s];
                    }
                }
            }
        }
        double centre = (double) n1 * (pooled.length + 1); // twice the expected rank sum of x
        double observed = Math.abs(rankSum2 - centre);
        double extreme = 0;
        double all = 0;
        for (int s = 0; s <= total; s++) {
            double w = ways[n1][s];
            all += w;
            if (w != 0 && Math.abs(s - centre) >= observed * (1 - 1e-9)) {
                extreme += w;
            }
        }
        return new Result(u, Math.min(1, extreme / all), "Mann-Whitney U, exact permutation distribution of the rank "
                + "sum given the pooled midranks");
    }

    /** Spearman's ρ: Pearson's correlation of the midranks (NaN when either side is constant). */
    public static double spearman(double[] x, double[] y) {
        requirePaired(x, y);
        return pearson(midranks(x), midranks(y));
    }

    /**
     * Kendall's τ-b = (C − D) / sqrt((n0 − n1)(n0 − n2)), n0 = n(n − 1)/2, n1 and n2 the pairs tied in x and in y
     * (NaN when either side is constant). O(n²), for the tens to hundreds of units a ranking holds.
     */
    public static double kendallTauB(double[] x, double[] y) {
        requirePaired(x, y);
        int n = x.length;
        long concordant = 0;
        long discordant = 0;
        long tiedX = 0;
        long tiedY = 0;
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                int a = Double.compare(x[i], x[j]);
                int b = Double.compare(y[i], y[j]);
                if (a == 0) {
                    tiedX++;
                }
                if (b == 0) {
                    tiedY++;
                }
                if (a != 0 && b != 0) {
                    if (a == b) {
                        concordant++;
                    } else {
                        discordant++;
                    }
                }
            }
        }
        long n0 = (long) n * (n - 1) / 2;
        double denominator = Math.sqrt((double) (n0 - tiedX) * (n0 - tiedY));
        return denominator == 0 ? Double.NaN : (concordant - discordant) / denominator;
    }

    /**
     * The smallest p-value a two-sided exact Wilcoxon signed-rank test can give on {@code pairs} non-zero paired
     * differences, 2 / 2^pairs (every difference of one sign), after Holm's correction for {@code comparisons} tests:
     * min(1, comparisons × 2 / 2^pairs). Below a chosen α nothing can be claimed, whatever the data.
     */
    public static double smallestHolmWilcoxonP(int pairs, int comparisons) {
        if (pairs < 1 || comparisons < 1) {
            throw new IllegalArgumentException("need at least one pair and one comparison, found " + pairs + " and "
                    + comparisons);
        }
        return Math.min(1, comparisons * 2 / Math.pow(2, pairs));
    }

    /** The fewest non-zero pairs for which {@link #smallestHolmWilcoxonP} can reach {@code alpha}. */
    public static int pairsNeeded(int comparisons, double alpha) {
        if (!(alpha > 0 && alpha < 1) || comparisons < 1) {
            throw new IllegalArgumentException("alpha must be within (0, 1) and comparisons at least 1");
        }
        int n = 1;
        while (smallestHolmWilcoxonP(n, comparisons) > alpha) {
            n++;
        }
        return n;
    }

    /** A statistic of paired values, e.g. {@link #spearman} or {@link #kendallTauB}. */
    public interface PairedStatistic {
        double of(double[] x, double[] y);
    }

    /**
     * A percentile bootstrap interval at {@code level} for {@code statistic} of the pairs (x_i, y_i): {@code reps}
     * resamples of the pairs with replacement from {@code seed}; resamples on which the statistic is undefined (NaN,
     * e.g. a constant side) are left out and their number is the third element of the result.
     */
    public static double[] bootstrapInterval(double[] x, double[] y, PairedStatistic statistic, int reps, long seed,
                                             double level) {
        requirePaired(x, y);
        if (reps < 10 || !(level > 0 && level < 1)) {
            throw new IllegalArgumentException("need at least 10 resamples and a level within (0, 1)");
        }
        java.util.SplittableRandom rng = new java.util.SplittableRandom(seed);
        int n = x.length;
        double[] values = new double[reps];
        int kept = 0;
        double[] bx = new double[n];
        double[] by = new double[n];
        for (int r = 0; r < reps; r++) {
            for (int i = 0; i < n; i++) {
                int j = rng.nextInt(n);
                bx[i] = x[j];
                by[i] = y[j];
            }
            double v = statistic.of(bx, by);
            if (!Double.isNaN(v)) {
                values[kept++] = v;
            }
        }
        if (kept == 0) {
            return new double[] {Double.NaN, Double.NaN, reps};
        }
        double[] sorted = Arrays.copyOf(values, kept);
        Arrays.sort(sorted);
        double tail = (1 - level) / 2;
        return new double[] {ClusteredStats.quantile(sorted, tail), ClusteredStats.quantile(sorted, 1 - tail),
            reps - kept};
    }

    /** The Jaccard index |A ∩ B| / |A ∪ B| of two sets of unit indices (1 when both are empty). */
    public static double jaccard(java.util.Set<Integer> a, java.util.Set<Integer> b) {
        java.util.Set<Integer> union = new java.util.HashSet<>(a);
        union.addAll(b);
        if (union.isEmpty()) {
            return 1;
        }
        int common = 0;
        for (int v : a) {
            common += b.contains(v) ? 1 : 0;
        }
        return (double) common / union.size();
    }

    private static double pearson(double[] a, double[] b) {
        int n = a.length;
        double ma = 0;
        double mb = 0;
        for (int i = 0; i < n; i++) {
            ma += a[i] / n;
            mb += b[i] / n;
        }
        double sab = 0;
        double saa = 0;
        double sbb = 0;
        for (int i = 0; i < n; i++) {
            sab += (a[i] - ma) * (b[i] - mb);
            saa += (a[i] - ma) * (a[i] - ma);
            sbb += (b[i] - mb) * (b[i] - mb);
        }
        return saa == 0 || sbb == 0 ? Double.NaN : sab / Math.sqrt(saa * sbb);
    }

    private static void requirePaired(double[] x, double[] y) {
        if (x.length != y.length || x.length < 2) {
            throw new IllegalArgumentException("need two samples of the same length, at least 2, found " + x.length
                    + " and " + y.length);
        }
    }
}
