package org.cruxset.scoring.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.cruxset.scoring.testing.ExternalTools;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class RankTestsTest {
    private static final JsonMapper JSON = new JsonMapper();

    @TempDir
    Path dir;

    private static final String REFERENCE = """
            import json, sys
            from scipy.stats import wilcoxon, mannwhitneyu, kendalltau, spearmanr
            cases = json.load(open(sys.argv[1]))
            out = {"wilcoxon": [], "mwu": [], "tau": [], "rho": []}
            for x, y in cases["paired"]:
                r = wilcoxon(x, y, method="exact", alternative="two-sided")
                out["wilcoxon"].append(float(r.pvalue))
            for x, y in cases["unpaired"]:
                r = mannwhitneyu(x, y, method="exact", alternative="two-sided")
                out["mwu"].append([float(r.statistic), float(r.pvalue)])
            for x, y in cases["tied"]:
                out["tau"].append(float(kendalltau(x, y).statistic))
                out["rho"].append(float(spearmanr(x, y).statistic))
            print(json.dumps(out))
            """;

    /** Distinct values (no ties, no zero differences), so SciPy's exact methods apply. */
    private static double[] distinct(SplittableRandom rng, int n, double shift) {
        double[] v = new double[n];
        for (int i = 0; i < n; i++) {
            v[i] = Math.round((rng.nextDouble() * 10 + shift) * 1e6) / 1e6 + i * 1e-7;
        }
        return v;
    }

    // Source: SciPy's wilcoxon and mannwhitneyu (method="exact", no ties: the exact null distributions), kendalltau
    // (tau-b) and spearmanr (midranks), Debian's python3-scipy.
    @Test
    void agreesWithSciPy() throws Exception {
        Path python = ExternalTools.requirePython("scipy");
        SplittableRandom rng = new SplittableRandom(11);
        List<double[][]> paired = new ArrayList<>();
        List<double[][]> unpaired = new ArrayList<>();
        List<double[][]> tied = new ArrayList<>();
        for (int c = 0; c < 20; c++) {
            int n = 5 + rng.nextInt(16);
            paired.add(new double[][] {distinct(rng, n, c % 3), distinct(rng, n, 0)});
            unpaired.add(new double[][] {distinct(rng, 3 + rng.nextInt(10), c % 4), distinct(rng, 3 + rng.nextInt(10),
                    0)});
            double[] a = new double[n];
            double[] b = new double[n];
            for (int i = 0; i < n; i++) {
                a[i] = rng.nextInt(5);
                b[i] = a[i] + rng.nextInt(4);
            }
            tied.add(new double[][] {a, b});
        }
        Path cases = dir.resolve("cases.json");
        JSON.writeValue(cases.toFile(), Map.of("paired", paired, "unpaired", unpaired, "tied", tied));
        JsonNode ref = JSON.readTree(ExternalTools.runPython(python, dir, REFERENCE, cases.toString()));
        for (int c = 0; c < 20; c++) {
            double[][] p = paired.get(c);
            assertEquals(ref.get("wilcoxon").get(c).asDouble(), RankTests.wilcoxonSignedRank(p[0], p[1], true).pValue(),
                    1e-9, "Wilcoxon case " + c);
            double[][] u = unpaired.get(c);
            RankTests.Result mw = RankTests.mannWhitneyU(u[0], u[1]);
            assertEquals(ref.get("mwu").get(c).get(0).asDouble(), mw.statistic(), 1e-9, "U case " + c);
            assertEquals(ref.get("mwu").get(c).get(1).asDouble(), mw.pValue(), 1e-9, "Mann-Whitney case " + c);
            double[][] t = tied.get(c);
            assertEquals(ref.get("tau").get(c).asDouble(), RankTests.kendallTauB(t[0], t[1]), 1e-12, "tau-b case " + c);
            assertEquals(ref.get("rho").get(c).asDouble(), RankTests.spearman(t[0], t[1]), 1e-12, "rho case " + c);
        }
    }

    // Source: the definition of the exact permutation test (common practice): every sign assignment of the non-zero
    // differences (Pratt: zeros ranked, then left out) and every split of the pooled sample equally likely, enumerated
    // here by brute force on data full of ties and zeros, as strategy comparisons over integer set sizes produce.
    @Test
    void tiesAndZerosMatchBruteForceEnumeration() {
        SplittableRandom rng = new SplittableRandom(3);
        for (int c = 0; c < 30; c++) {
            int n = 4 + rng.nextInt(11);
            double[] x = new double[n];
            double[] y = new double[n];
            for (int i = 0; i < n; i++) {
                x[i] = 10 + rng.nextInt(4);
                y[i] = 10 + rng.nextInt(4);
            }
            for (boolean pratt : new boolean[] {true, false}) {
                assertEquals(bruteWilcoxon(x, y, pratt), RankTests.wilcoxonSignedRank(x, y, pratt).pValue(), 1e-12,
                        "case " + c + " pratt " + pratt);
            }
            int n2 = 3 + rng.nextInt(7);
            double[] z = new double[n2];
            for (int i = 0; i < n2; i++) {
                z[i] = 10 + rng.nextInt(4);
            }
            double[] xs = java.util.Arrays.copyOf(x, Math.min(n, 9));
            assertEquals(bruteMannWhitney(xs, z), RankTests.mannWhitneyU(xs, z).pValue(), 1e-12, "case " + c);
        }
        // All differences zero: nothing to test.
        assertEquals(1.0, RankTests.wilcoxonSignedRank(new double[] {3, 4}, new double[] {3, 4}, true).pValue());
    }

    // Source: hand calculation. Differences (1, 2, 3, 4, 5), all positive: W+ = 15 is the largest of 2^5 equally
    // likely sums, and so is W+ = 0 at the other end, so p = 2/32.
    @Test
    void aHandExample() {
        RankTests.Result r = RankTests.wilcoxonSignedRank(new double[] {1, 2, 3, 4, 5}, new double[5], true);
        assertEquals(15, r.statistic());
        assertEquals(2.0 / 32, r.pValue(), 1e-15);
        // U for x = (1, 2), y = (3, 4): no pair with x > y; the split is the most extreme of C(4, 2) = 6, p = 2/6.
        RankTests.Result u = RankTests.mannWhitneyU(new double[] {1, 2}, new double[] {3, 4});
        assertEquals(0, u.statistic());
        assertEquals(2.0 / 6, u.pValue(), 1e-15);
        assertTrue(Double.isNaN(RankTests.kendallTauB(new double[] {1, 1, 1}, new double[] {1, 2, 3})));
        assertEquals(-1.0, RankTests.spearman(new double[] {1, 2, 3}, new double[] {3, 2, 1}), 1e-15);
    }

    // Source: the worked example of the Wikipedia article "Wilcoxon signed-rank test" (values from memory): ten pairs,
    // one zero difference dropped (Wilcoxon's original treatment), two tied |differences| of 5 sharing rank 1.5;
    // the article's statistic W = sum of signed ranks = 9 over N_r = 9 pairs, i.e. W+ = (9 + 45) / 2 = 27. The
    // p-value is checked against the brute-force enumeration of the 2^9 sign assignments (ties included).
    @Test
    void theWilcoxonWorkedExample() {
        double[] x2 = {125, 115, 130, 140, 140, 115, 140, 125, 140, 135};
        double[] x1 = {110, 122, 125, 120, 140, 124, 123, 137, 135, 145};
        RankTests.Result r = RankTests.wilcoxonSignedRank(x2, x1, false);
        int nr = 9;
        assertEquals(9, 2 * r.statistic() - nr * (nr + 1) / 2.0, 1e-12);
        assertEquals(27, r.statistic(), 1e-12);
        assertEquals(bruteWilcoxon(x2, x1, false), r.pValue(), 1e-12);
        // The article: |W| = 9 is below the critical value for N_r = 9 at 0.05 (two-sided), so H0 stands.
        assertTrue(r.pValue() > 0.05, "p " + r.pValue());
    }

    // Source: the tortoise-and-hare example of the Wikipedia article "Mann–Whitney U test" (from memory): six tortoises
    // and six hares finish in the order T H H H H H T T T T T H; the first tortoise beats six hares and the other five
    // one each, U_T = 11, and U_H = 36 - 11 = 25. Critical value for n1 = n2 = 6 at 0.05 two-sided: U <= 5 (standard
    // tables, from memory): checked with samples at U = 5 and U = 6.
    @Test
    void theMannWhitneyWorkedExample() {
        double[] tortoises = {1, 7, 8, 9, 10, 11};
        double[] hares = {2, 3, 4, 5, 6, 12};
        // U counts pairs with x > y: a later finishing position loses, so U(hares, tortoises) counts tortoise wins.
        assertEquals(11, RankTests.mannWhitneyU(hares, tortoises).statistic(), 1e-12);
        assertEquals(25, RankTests.mannWhitneyU(tortoises, hares).statistic(), 1e-12);
        assertEquals(RankTests.mannWhitneyU(hares, tortoises).pValue(), RankTests.mannWhitneyU(tortoises, hares)
                .pValue(), 1e-15);
        RankTests.Result five = RankTests.mannWhitneyU(new double[] {1, 2, 3, 4, 5, 11}, new double[] {6, 7, 8, 9, 10,
            12});
        RankTests.Result six = RankTests.mannWhitneyU(new double[] {1, 2, 3, 4, 6, 11}, new double[] {5, 7, 8, 9, 10,
            12});
        assertEquals(5, five.statistic(), 1e-12);
        assertEquals(6, six.statistic(), 1e-12);
        assertTrue(five.pValue() <= 0.05 && six.pValue() > 0.05, five.pValue() + " " + six.pValue());
    }

    // Source: the worked example of the Wikipedia article "Spearman's rank correlation coefficient" (from memory): IQ
    // against hours of television per week for ten people, no ties, sum of squared rank differences 194, so
    // rho = 1 - 6 * 194 / (10 * 99) = -29/165.
    @Test
    void theSpearmanWorkedExample() {
        double[] iq = {106, 100, 86, 101, 99, 103, 97, 113, 112, 110};
        double[] tv = {7, 27, 2, 50, 28, 29, 20, 12, 6, 17};
        assertEquals(-29.0 / 165, RankTests.spearman(iq, tv), 1e-12);
    }

    // Source: analytic. On a 2 x 2 table (a, b; c, d) the concordant pairs are a·d and the discordant b·c, and the
    // pairs untied on each variable are (a + b)(c + d) and (a + c)(b + d), so Kendall's tau-b equals the phi
    // coefficient (ad - bc) / sqrt((a + b)(c + d)(a + c)(b + d)) (a textbook identity: common practice).
    @Test
    void kendallTauBOnATwoByTwoTableIsThePhiCoefficient() {
        int[][] tables = {{10, 5, 3, 12}, {7, 0, 2, 9}, {4, 6, 8, 1}, {20, 19, 18, 17}};
        for (int[] t : tables) {
            int n = t[0] + t[1] + t[2] + t[3];
            double[] x = new double[n];
            double[] y = new double[n];
            int i = 0;
            int[][] cells = {{1, 1}, {1, 0}, {0, 1}, {0, 0}};
            for (int c = 0; c < 4; c++) {
                for (int k = 0; k < t[c]; k++, i++) {
                    x[i] = cells[c][0];
                    y[i] = cells[c][1];
                }
            }
            double a = t[0];
            double b = t[1];
            double c = t[2];
            double d = t[3];
            double phi = (a * d - b * c) / Math.sqrt((a + b) * (c + d) * (a + c) * (b + d));
            assertEquals(phi, RankTests.kendallTauB(x, y), 1e-12, java.util.Arrays.toString(t));
        }
    }

    // Source: hand calculation. With 10 paired seeds the exact two-sided Wilcoxon p is at least 2/2^10; Holm over 3
    // comparisons multiplies the smallest by 3: 6/1024. Reaching 0.05 over 3 comparisons needs 7 pairs (6/128 = 0.047;
    // 6 pairs give 6/64 = 0.094).
    @Test
    void theSmallestAttainableHolmAdjustedP() {
        assertEquals(6.0 / 1024, RankTests.smallestHolmWilcoxonP(10, 3), 1e-15);
        assertEquals(7, RankTests.pairsNeeded(3, 0.05));
        assertEquals(6, RankTests.pairsNeeded(1, 0.05));
        double[] x = {1, 2, 3, 4, 5, 6, 7, 8, 9, 10};
        double[] y = {0, 0, 0, 0, 0, 0, 0, 0, 0, 0};
        assertEquals(RankTests.smallestHolmWilcoxonP(10, 1), RankTests.wilcoxonSignedRank(x, y, true).pValue(), 1e-15);
    }

    // Source: the percentile bootstrap (Efron & Tibshirani 1993, from memory); checked here by its defining
    // properties: seeded, a perfect monotone relation gives [1, 1], and the interval holds the point estimate.
    @Test
    void bootstrapIntervalsAreSeededAndSane() {
        double[] x = {1, 2, 3, 4, 5, 6, 7, 8};
        double[] y = {2, 4, 6, 8, 10, 12, 14, 16};
        double[] ci = RankTests.bootstrapInterval(x, y, RankTests::spearman, 500, 1, 0.95);
        assertEquals(1.0, ci[0], 1e-12);
        assertEquals(1.0, ci[1], 1e-12);
        double[] z = {3, 1, 4, 1, 5, 9, 2, 6};
        double[] a = RankTests.bootstrapInterval(x, z, RankTests::kendallTauB, 2000, 7, 0.95);
        double[] b = RankTests.bootstrapInterval(x, z, RankTests::kendallTauB, 2000, 7, 0.95);
        assertEquals(a[0], b[0], 0);
        assertEquals(a[1], b[1], 0);
        double tau = RankTests.kendallTauB(x, z);
        assertTrue(a[0] <= tau && tau <= a[1], java.util.Arrays.toString(a) + " " + tau);
        assertEquals(1.0 / 3, RankTests.jaccard(java.util.Set.of(1, 2), java.util.Set.of(2, 3)), 1e-15);
    }

    private static double bruteWilcoxon(double[] x, double[] y, boolean pratt) {
        List<Double> d = new ArrayList<>();
        for (int i = 0; i < x.length; i++) {
            if (pratt || x[i] != y[i]) {
                d.add(x[i] - y[i]);
            }
        }
        double[] abs = d.stream().mapToDouble(Math::abs).toArray();
        double[] r = RankTests.midranks(abs);
        List<Double> ranks = new ArrayList<>();
        double observed = 0;
        for (int i = 0; i < r.length; i++) {
            if (d.get(i) != 0) {
                ranks.add(r[i]);
                observed += d.get(i) > 0 ? r[i] : 0;
            }
        }
        int m = ranks.size();
        if (m == 0) {
            return 1;
        }
        double total = ranks.stream().mapToDouble(Double::doubleValue).sum();
        double centre = total / 2;
        int extreme = 0;
        for (int mask = 0; mask < 1 << m; mask++) {
            double w = 0;
            for (int i = 0; i < m; i++) {
                if ((mask >> i & 1) == 1) {
                    w += ranks.get(i);
                }
            }
            extreme += Math.abs(w - centre) >= Math.abs(observed - centre) - 1e-9 ? 1 : 0;
        }
        return Math.min(1, (double) extreme / (1 << m));
    }

    private static double bruteMannWhitney(double[] x, double[] y) {
        int n1 = x.length;
        int n = n1 + y.length;
        double[] pooled = new double[n];
        System.arraycopy(x, 0, pooled, 0, n1);
        System.arraycopy(y, 0, pooled, n1, y.length);
        double[] r = RankTests.midranks(pooled);
        double observed = 0;
        for (int i = 0; i < n1; i++) {
            observed += r[i];
        }
        double centre = n1 * (n + 1) / 2.0;
        long extreme = 0;
        long all = 0;
        for (int mask = 0; mask < 1 << n; mask++) {
            if (Integer.bitCount(mask) != n1) {
                continue;
            }
            double s = 0;
            for (int i = 0; i < n; i++) {
                if ((mask >> i & 1) == 1) {
                    s += r[i];
                }
            }
            all++;
            extreme += Math.abs(s - centre) >= Math.abs(observed - centre) - 1e-9 ? 1 : 0;
        }
        return (double) extreme / all;
    }
}
