package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.cruxset.scoring.stats.PairedTests;
import org.cruxset.scoring.stats.RankTests;
import org.junit.jupiter.api.Test;

class StrategyTestsTest {
    private static Map<Long, Integer> runs(long firstSeed, int... best) {
        Map<Long, Integer> m = new LinkedHashMap<>();
        for (int i = 0; i < best.length; i++) {
            m.put(firstSeed + i, best[i]);
        }
        return m;
    }

    // Source: the definitions (common practice): runs on the same seeds are paired (Wilcoxon signed-rank, exact,
    // Pratt), runs on different seeds are not (Mann-Whitney U, exact); Holm over all comparisons. Expected values
    // come from RankTests, itself checked against SciPy and published worked examples (scoring RankTestsTest).
    @Test
    void pairsBySeedWhenTheSeedsMatchAndOtherwiseDoesNot() {
        Map<String, Map<Long, Integer>> by = new LinkedHashMap<>();
        by.put("a", runs(1, 4, 4, 5, 4, 6, 4));
        by.put("b", runs(1, 5, 6, 5, 7, 6, 8));
        by.put("c", runs(11, 4, 4, 4, -1));
        List<StrategyTests.Row> rows = StrategyTests.between(by);
        assertEquals(3, rows.size());
        StrategyTests.Row ab = rows.get(0);
        assertTrue(ab.paired());
        assertEquals("Wilcoxon signed-rank, 6 pairs", ab.test());
        double[] a = {4, 4, 5, 4, 6, 4};
        double[] b = {5, 6, 5, 7, 6, 8};
        assertEquals(RankTests.wilcoxonSignedRank(a, b, true).pValue(), ab.p(), 1e-15);
        assertEquals(-1.5, ab.medianDifference(), 1e-12);
        StrategyTests.Row ac = rows.get(1);
        assertFalse(ac.paired());
        assertEquals("Mann-Whitney U, 6 vs 4 runs", ac.test());
        // A run without a critical set is larger than any size.
        double[] c = {4, 4, 4, StrategyTests.NONE};
        RankTests.Result u = RankTests.mannWhitneyU(a, c);
        assertEquals(u.statistic(), ac.statistic(), 1e-12);
        assertEquals(u.pValue(), ac.p(), 1e-15);
        double[] holm = PairedTests.holm(rows.stream().mapToDouble(StrategyTests.Row::p).toArray());
        for (int k = 0; k < 3; k++) {
            assertEquals(holm[k], rows.get(k).holm(), 1e-15);
        }
        assertTrue(StrategyTests.power(rows).contains("when not paired"), StrategyTests.power(rows));
    }

    // Source: analytic. Complete separation is the most extreme of the C(n1 + n2, n1) equally likely rank splits, at
    // either end, so the smallest exact two-sided p is 2 / C(n1 + n2, n1): 2/924 for 6 and 6, 2/20 for 3 and 3; Holm
    // multiplies the smallest p by the number of comparisons.
    @Test
    void theSmallestAttainableUnpairedP() {
        assertEquals(2.0 / 924, StrategyTests.smallestHolmMannWhitneyP(6, 6, 1), 1e-15);
        assertEquals(3 * 2.0 / 20, StrategyTests.smallestHolmMannWhitneyP(3, 3, 3), 1e-15);
        RankTests.Result sep = RankTests.mannWhitneyU(new double[] {1, 2, 3}, new double[] {4, 5, 6});
        assertEquals(2.0 / 20, sep.pValue(), 1e-15);
        // 3 comparisons: 5 runs each give 6/252 = 0.024 <= 0.05, 4 runs give 6/70 = 0.086.
        assertEquals(5, StrategyTests.runsNeededUnpaired(3, 0.05));
        assertEquals(5.0, StrategyTests.median(new double[] {4, 5, StrategyTests.NONE}), 0);
        assertEquals(StrategyTests.NONE, StrategyTests.median(new double[] {4, StrategyTests.NONE}), 0);
    }
}
