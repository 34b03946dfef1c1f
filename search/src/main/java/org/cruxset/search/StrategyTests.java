package org.cruxset.search;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeSet;
import org.cruxset.scoring.stats.ClusteredStats;
import org.cruxset.scoring.stats.PairedTests;
import org.cruxset.scoring.stats.RankTests;

/**
 * Tests between strategies of the best critical size their runs reached, one value per run (seed). Two strategies
 * run on the same seeds are paired by seed (the same split and starting seed): the exact Wilcoxon signed-rank test,
 * zero differences by Pratt's method. Strategies whose seeds differ are not paired: the exact Mann–Whitney U test of
 * all their runs. All p-values are Holm-corrected together. A run without a critical set counts as larger than any
 * size. Used by {@code cruxset compare} and by the report, so both say the same.
 */
public final class StrategyTests {
    /** The value standing for "no critical set found": larger than any size, and tied with its like. */
    static final double NONE = 1e9;

    private StrategyTests() {
    }

    /**
     * One comparison: the test used, the runs behind it ({@code n1} = {@code n2} = pairs when paired), the median
     * difference (paired: of the differences; unpaired: between the medians), W+ or U, the exact p, Holm's p, and
     * the smallest Holm-adjusted p this comparison can reach whatever the data.
     */
    public record Row(String first, String second, boolean paired, int n1, int n2, double medianDifference,
                      double statistic, double p, double holm, double smallestHolm) {
        /** The test by name. */
        public String test() {
            return paired ? "Wilcoxon signed-rank, " + n1 + " pairs" : "Mann-Whitney U, " + n1 + " vs " + n2 + " runs";
        }
    }

    /**
     * Every pair of strategies, in the order given: {@code bestBySeed} maps a strategy to its runs' best critical
     * sizes by seed (a negative size: no critical set). Strategies with fewer than one run are left out.
     */
    public static List<Row> between(Map<String, Map<Long, Integer>> bestBySeed) {
        List<String> names = new ArrayList<>();
        bestBySeed.forEach((k, v) -> {
            if (!v.isEmpty()) {
                names.add(k);
            }
        });
        int comparisons = names.size() * (names.size() - 1) / 2;
        List<Row> rows = new ArrayList<>();
        for (int i = 0; i < names.size(); i++) {
            for (int j = i + 1; j < names.size(); j++) {
                Map<Long, Integer> a = bestBySeed.get(names.get(i));
                Map<Long, Integer> b = bestBySeed.get(names.get(j));
                boolean paired = a.keySet().equals(b.keySet());
                double[] x = values(a);
                double[] y = values(b);
                if (paired) {
                    RankTests.Result w = RankTests.wilcoxonSignedRank(x, y, true);
                    double[] d = new double[x.length];
                    for (int k = 0; k < d.length; k++) {
                        d[k] = x[k] - y[k];
                    }
                    rows.add(new Row(names.get(i), names.get(j), true, x.length, x.length, median(d), w.statistic(),
                            w.pValue(), Double.NaN, RankTests.smallestHolmWilcoxonP(x.length, comparisons)));
                } else {
                    RankTests.Result u = RankTests.mannWhitneyU(x, y);
                    rows.add(new Row(names.get(i), names.get(j), false, x.length, y.length, median(x) - median(y),
                            u.statistic(), u.pValue(), Double.NaN, smallestHolmMannWhitneyP(x.length, y.length,
                            comparisons)));
                }
            }
        }
        double[] holm = PairedTests.holm(rows.stream().mapToDouble(Row::p).toArray());
        List<Row> out = new ArrayList<>();
        for (int k = 0; k < rows.size(); k++) {
            Row r = rows.get(k);
            out.add(new Row(r.first(), r.second(), r.paired(), r.n1(), r.n2(), r.medianDifference(), r.statistic(),
                    r.p(), holm[k], r.smallestHolm()));
        }
        return out;
    }

    /**
     * The smallest p-value a two-sided exact Mann–Whitney test of samples of {@code n1} and {@code n2} can give, two
     * over the number of ways to choose the first sample's ranks (complete separation either way), times the Holm
     * multiplier of the first step, {@code comparisons}.
     */
    public static double smallestHolmMannWhitneyP(int n1, int n2, int comparisons) {
        double ways = 1;
        for (int k = 1; k <= n1; k++) {
            ways = ways * (n2 + k) / k;
        }
        return Math.min(1, comparisons * 2 / ways);
    }

    /** The fewest runs per strategy with which an unpaired comparison can reach {@code alpha} after Holm. */
    public static int runsNeededUnpaired(int comparisons, double alpha) {
        int n = 1;
        while (smallestHolmMannWhitneyP(n, n, comparisons) > alpha) {
            n++;
        }
        return n;
    }

    /**
     * What the rows can and cannot show, in words: the smallest attainable Holm-adjusted p and the seeds needed for
     * 0.05 (the same sentence in compare's output and the report).
     */
    public static String power(List<Row> rows) {
        if (rows.isEmpty()) {
            return "";
        }
        int comparisons = rows.size();
        TreeSet<Integer> pairs = new TreeSet<>();
        boolean anyUnpaired = false;
        double smallest = 1;
        for (Row r : rows) {
            if (r.paired()) {
                pairs.add(r.n1());
            } else {
                anyUnpaired = true;
            }
            smallest = Math.min(smallest, r.smallestHolm());
        }
        StringBuilder s = new StringBuilder(String.format(Locale.ROOT, "Over these %d comparisons the smallest "
                + "Holm-adjusted p any of them can reach, whatever the data, is %.4g", comparisons, smallest));
        s.append(String.format(Locale.ROOT, "; reaching 0.05 needs at least %d seeds with non-zero differences when "
                + "paired", RankTests.pairsNeeded(comparisons, 0.05)));
        if (anyUnpaired) {
            s.append(String.format(Locale.ROOT, ", or %d runs per strategy when not paired (strategies run on "
                    + "different seeds)", runsNeededUnpaired(comparisons, 0.05)));
        }
        return s.append('.').toString();
    }

    /** The sizes in seed order. */
    private static double[] values(Map<Long, Integer> bySeed) {
        return new TreeSet<>(bySeed.keySet()).stream().mapToDouble(s -> {
            Integer v = bySeed.get(s);
            return v == null || v < 0 ? NONE : v;
        }).toArray();
    }

    /**
     * A type-7 quantile of best critical sizes, except that "none" (infinite, {@link #NONE}, or a difference with it)
     * is not interpolated with a size: the nearer order statistic is taken. Compare's and the report's summaries and
     * the tests' medians use it.
     */
    public static double sizeQuantile(double[] v, double q) {
        double[] s = v.clone();
        Arrays.sort(s);
        double h = (s.length - 1) * q;
        int lo = (int) Math.floor(h);
        int hi = Math.min(s.length - 1, lo + 1);
        if (Math.abs(s[lo]) >= NONE / 2 || Math.abs(s[hi]) >= NONE / 2) {
            return h - lo < 0.5 ? s[lo] : s[hi];
        }
        return ClusteredStats.quantile(s, q);
    }

    static double median(double[] v) {
        return sizeQuantile(v, 0.5);
    }
}
