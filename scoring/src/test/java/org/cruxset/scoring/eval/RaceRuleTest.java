package org.cruxset.scoring.eval;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.util.CombinatoricsUtils;
import org.cruxset.scoring.eval.RaceRule.Verdict;
import org.cruxset.scoring.testing.ExternalTools;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class RaceRuleTest {
    @TempDir
    Path dir;

    /** Hypergeometric probability of x successes in d draws from a population of size pop with succ successes. */
    static double pmf(int pop, int succ, int d, int x) {
        if (x < 0 || x > d || x > succ || d - x > pop - succ) {
            return 0;
        }
        return Math.exp(CombinatoricsUtils.binomialCoefficientLog(succ, x)
                + CombinatoricsUtils.binomialCoefficientLog(pop - succ, d - x)
                - CombinatoricsUtils.binomialCoefficientLog(pop, d));
    }

    /**
     * Exact probabilities, for a set whose full-part count is {@code k}, of a wrong verdict and of the expected
     * number of samples used, by propagating the distribution of the running count through the looks (each chunk
     * is a draw without replacement from the samples not yet scored).
     */
    static double[] errorAndSamples(RaceRule rule, int k) {
        int n = rule.samples();
        int[] looks = rule.looks();
        boolean truth = k <= rule.threshold();
        double[] open = new double[n + 1];
        open[0] = 1;
        double error = 0;
        double samples = 0;
        int previous = 0;
        for (int j = 0; j < looks.length; j++) {
            int d = looks[j] - previous;
            double[] next = new double[n + 1];
            for (int c = 0; c <= previous; c++) {
                if (open[c] == 0) {
                    continue;
                }
                for (int x = 0; x <= d; x++) {
                    double p = pmf(n - previous, k - c, d, x);
                    if (p > 0) {
                        next[c + x] += open[c] * p;
                    }
                }
            }
            previous = looks[j];
            for (int c = 0; c <= previous; c++) {
                if (next[c] == 0) {
                    continue;
                }
                Verdict v = rule.verdict(j, c);
                if (v == Verdict.OPEN) {
                    continue;
                }
                samples += next[c] * previous;
                if ((v == Verdict.AT_MOST) != truth) {
                    error += next[c];
                }
                next[c] = 0;
            }
            open = next;
        }
        double left = 0;
        for (double p : open) {
            left += p;
        }
        assertTrue(left < 1e-12, "the last look must settle every set, " + left + " left open");
        return new double[] {error, samples};
    }

    // Source: exact computation (the hypergeometric law of sampling without replacement, propagated through the
    // looks); the bound it checks is the union bound over the looks of the alpha-spending design (common practice).
    @Test
    void theErrorRateIsAtMostAlphaForEveryTrueCount() {
        int[][] designs = {{216, 32, 45}, {216, 32, 100}, {108, 16, 20}, {60, 8, 14}, {300, 40, 150}, {216, 32, 0},
            {216, 32, 215}};
        for (double alpha : new double[] {0.01, 0.05}) {
            for (int[] dsg : designs) {
                int n = dsg[0];
                RaceRule rule = RaceRule.of(n, dsg[2], RaceRule.looks(n, dsg[1]), alpha);
                double worst = 0;
                for (int k = 0; k <= n; k++) {
                    worst = Math.max(worst, errorAndSamples(rule, k)[0]);
                }
                assertTrue(worst <= alpha, "n " + n + " K " + dsg[2] + " alpha " + alpha + ": worst error " + worst);
            }
        }
    }

    @Test
    void clearSetsStopEarlyAndBorderlineSetsUseMoreSamples() {
        // 216 samples, chance 1/6: a set with 150 correct (69%) or 5 correct (2%) against K = 45.
        RaceRule rule = RaceRule.of(216, 45, RaceRule.looks(216, 32), 0.01);
        double clearHigh = errorAndSamples(rule, 150)[1];
        double clearLow = errorAndSamples(rule, 5)[1];
        double border = errorAndSamples(rule, 46)[1];
        assertTrue(clearHigh <= 40, "a clearly non-critical set should stop at the first look: " + clearHigh);
        assertTrue(clearLow <= 70, "a clearly critical set should stop within two looks: " + clearLow);
        assertTrue(border > 150, "a set at the threshold should need most samples: " + border);
        System.out.printf("expected samples of 216: k=150 %.1f, k=5 %.1f, k=46 %.1f%n", clearHigh, clearLow, border);
    }

    @Test
    void deterministicStopsAloneNeverErr() {
        RaceRule rule = RaceRule.of(50, 20, RaceRule.looks(50, 10), 0);
        for (int k = 0; k <= 50; k++) {
            assertEquals(0, errorAndSamples(rule, k)[0], 0, "k " + k);
        }
        // With 15 of the first 10 ... impossible; with 21 correct after 30 samples the set is ABOVE for certain.
        assertEquals(Verdict.ABOVE, rule.verdict(2, 21));
        // 0 correct after 40 samples: at most 10 more, 10 <= 20.
        assertEquals(Verdict.AT_MOST, rule.verdict(3, 0));
        assertEquals(Verdict.OPEN, rule.verdict(0, 5));
    }

    @Test
    void extremeThresholdsAndBadArguments() {
        RaceRule never = RaceRule.of(30, -1, RaceRule.looks(30, 10), 0.01);
        RaceRule always = RaceRule.of(30, 30, RaceRule.looks(30, 10), 0.01);
        for (int c = 0; c <= 10; c++) {
            assertEquals(Verdict.ABOVE, never.verdict(0, c));
            assertEquals(Verdict.AT_MOST, always.verdict(0, c));
        }
        assertThrows(IllegalArgumentException.class, () -> RaceRule.of(30, 5, new int[] {10, 20}, 0.01));
        assertThrows(IllegalArgumentException.class, () -> RaceRule.of(30, 5, new int[] {20, 10, 30}, 0.01));
        assertThrows(IllegalArgumentException.class, () -> RaceRule.of(30, 5, new int[] {30}, 1.0));
    }

    @Test
    void everyCriterionIsAThresholdOnTheCount() {
        SetScore intact = CollapseCriterion.countScore(216, 180, 1.0 / 6);
        for (String c : List.of("binomial:0.05", "binomial:0.01", "upper:0.08", "accuracy:0.25", "fraction:0.9")) {
            CollapseCriterion crit = CollapseCriterion.parse(c);
            int k = crit.criticalCount(216, 1.0 / 6, intact);
            for (int j = 0; j <= 216; j++) {
                assertEquals(j <= k, crit.critical(CollapseCriterion.countScore(216, j, 1.0 / 6), intact),
                        c + " count " + j + " threshold " + k);
            }
        }
        // Source: from memory, checked by the statement in CollapseCriterion's documentation: at chance 1/6 on 60
        // samples binomial:0.05 calls up to 15 correct critical.
        assertEquals(15, CollapseCriterion.defaults().criticalCount(60, 1.0 / 6, null));
    }

    private static final String SCIPY = """
            import json, sys
            from scipy.stats import hypergeom
            cases = json.load(open(sys.argv[1]))
            print(json.dumps([[float(hypergeom.cdf(c, n, k, m)), float(hypergeom.sf(c - 1, n, k, m))]
                              for n, k, m, c in cases]))
            """;

    // Source: scipy.stats.hypergeom (cdf and sf) as the reference for the tails the stop bounds are computed from.
    @Test
    void theStopBoundsSitWhereScipysHypergeometricTailsCrossTheSpentError() throws Exception {
        Path python = ExternalTools.requirePython("scipy");
        int n = 216;
        int threshold = 45;
        RaceRule rule = RaceRule.of(n, threshold, RaceRule.looks(n, 32), 0.01);
        int[] looks = rule.looks();
        int[] low = rule.atMostBounds();
        int[] high = rule.aboveBounds();
        List<int[]> cases = new ArrayList<>();
        for (int j = 0; j + 1 < looks.length; j++) {
            int m = looks[j];
            cases.add(new int[] {n, threshold + 1, m, low[j]});
            cases.add(new int[] {n, threshold + 1, m, low[j] + 1});
            cases.add(new int[] {n, threshold, m, high[j]});
            cases.add(new int[] {n, threshold, m, high[j] - 1});
        }
        ObjectMapper json = new ObjectMapper();
        Path file = dir.resolve("cases.json");
        json.writeValue(file.toFile(), cases);
        JsonNode ref = json.readTree(ExternalTools.runPython(python, dir, SCIPY, file.toString()));
        int previous = 0;
        for (int j = 0; j + 1 < looks.length; j++) {
            double spent = 0.01 * (looks[j] - previous) / n;
            previous = looks[j];
            int deterministicLow = threshold - (n - looks[j]);
            double cdfAt = ref.get(4 * j).get(0).asDouble();
            double cdfNext = ref.get(4 * j + 1).get(0).asDouble();
            double sfAt = ref.get(4 * j + 2).get(1).asDouble();
            double sfBefore = ref.get(4 * j + 3).get(1).asDouble();
            assertTrue(low[j] < 0 || low[j] <= deterministicLow || cdfAt <= spent, "look " + j + ": P(C <= " + low[j]
                    + ") = " + cdfAt + " above the spent " + spent);
            assertTrue(cdfNext > spent || low[j] + 1 <= deterministicLow, "look " + j + ": the bound could be "
                    + (low[j] + 1));
            assertTrue(high[j] > looks[j] || sfAt <= spent, "look " + j + ": P(C >= " + high[j] + ") = " + sfAt);
            assertTrue(sfBefore > spent || high[j] - 1 >= threshold + 1, "look " + j + ": the bound could be "
                    + (high[j] - 1));
        }
    }
}
