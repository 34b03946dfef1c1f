package org.cruxset.scoring.eval;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.cruxset.scoring.stats.Binomial;
import org.cruxset.scoring.stats.ClusteredStats;
import org.junit.jupiter.api.Test;

class ScoresTest {

    @Test
    void setScoreDerivesEveryAggregateFromOutcomes() {
        int[] labels = {0, 0, 0, 1, 1, 2};
        int[] pred = {0, 0, 1, 1, 0, 2};
        float[] p = {0.9f, 0.8f, 0.2f, 0.7f, 0.4f, 0.6f};
        SetScore s = SetScore.of(new Outcomes(pred, p), labels, 4);
        assertEquals(4, s.correct());
        assertEquals(4.0 / 6, s.accuracy(), 1e-12);
        // balanced accuracy over the three classes present: (2/3 + 1/2 + 1) / 3
        assertEquals((2.0 / 3 + 0.5 + 1.0) / 3, s.balancedAccuracy(), 1e-12);
        assertEquals((0.9 + 0.8 + 0.2 + 0.7 + 0.4 + 0.6) / 6, s.meanTrueClassProbability(), 1e-6);
        assertTrue(Double.isNaN(s.perClassAccuracy()[3]));
        assertEquals(0.5, s.chance(), 1e-12, "majority class 0 has 3 of 6 samples");
        assertEquals(Binomial.pValueAtLeast(4, 6, 0.5), s.pValue(), 0);
    }

    @Test
    void collapseCriteria() {
        SetScore intact = SetScore.of(new Outcomes(new int[] {0, 1, 2, 3}, new float[4]), new int[] {0, 1, 2, 3}, 4);
        SetScore broken = SetScore.of(new Outcomes(new int[] {1, 1, 1, 1}, new float[4]), new int[] {0, 1, 2, 3}, 4);
        assertTrue(CollapseCriterion.defaults().critical(broken, intact));
        assertFalse(CollapseCriterion.parse("accuracy:0.2").critical(broken, intact));
        assertTrue(CollapseCriterion.parse("accuracy:0.25").critical(broken, intact));
        // intact 1.0, chance 0.25: 90% of the way down is 0.325
        assertTrue(CollapseCriterion.parse("fraction:0.9").critical(broken, intact));
        assertFalse(CollapseCriterion.parse("fraction:0.9").critical(intact, intact));
        assertThrows(IllegalArgumentException.class, () -> CollapseCriterion.parse("median:3"));
        assertEquals("binomial:0.01", CollapseCriterion.parse("binomial:0.01").label());
    }

    // Source: analytic result: under a uniform permutation of labels within a subject, the expected number of
    // matches with fixed predictions is sum over classes of (predicted count x label count) / subject size.
    @Test
    void labelPermutationMeanMatchesItsExpectation() {
        int[] subjectOf = {0, 0, 0, 0, 1, 1, 1, 1, 1, 1};
        int[] labels = {0, 1, 2, 0, 0, 1, 1, 2, 2, 2};
        int[] pred = {0, 0, 2, 1, 2, 2, 1, 2, 0, 2};
        double expected = (0 + (2.0 * 2 + 1 * 1 + 1 * 1) / 4 + (1.0 * 1 + 1 * 2 + 4 * 3) / 6) / 10;
        ClusteredStats.PermutationChance pc = ClusteredStats.labelPermutation(pred, labels, subjectOf, 2, 40_000, 3L, 0.95);
        // standard error of a mean of 40 000 accuracies on 10 samples is below 0.0008
        assertEquals(expected, pc.mean(), 0.004);
        assertTrue(pc.pValue() > 0 && pc.pValue() <= 1);
    }

    @Test
    void subjectBootstrapIsSeededAndBracketsTheAccuracy() {
        boolean[] correct = new boolean[200];
        int[] subjectOf = new int[200];
        for (int s = 0; s < 200; s++) {
            subjectOf[s] = s / 10;
            correct[s] = (s * 7) % 10 < 6;
        }
        double[] a = ClusteredStats.subjectBootstrap(correct, subjectOf, 20, 2000, 5L, 0.95);
        double[] b = ClusteredStats.subjectBootstrap(correct, subjectOf, 20, 2000, 5L, 0.95);
        assertEquals(a[0], b[0], 0);
        assertEquals(a[1], b[1], 0);
        assertTrue(a[0] <= 0.6 && 0.6 <= a[1], a[0] + " " + a[1]);
    }
}
