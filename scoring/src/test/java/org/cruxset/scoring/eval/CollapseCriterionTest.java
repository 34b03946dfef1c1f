package org.cruxset.scoring.eval;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** The strict {@code upper:D} criterion against hand-computed Wilson bounds, and how it differs from the default. */
class CollapseCriterionTest {
    /**
     * A score of {@code correct} of {@code n} samples whose labels cycle over {@code classes} classes: the first
     * {@code correct} samples are predicted right, the rest wrong; chance is ceil(n / classes) / n.
     */
    static SetScore score(int correct, int n, int classes) {
        int[] labels = new int[n];
        int[] predicted = new int[n];
        float[] ptrue = new float[n];
        for (int s = 0; s < n; s++) {
            labels[s] = s % classes;
            predicted[s] = s < correct ? labels[s] : (labels[s] + 1) % classes;
            ptrue[s] = s < correct ? 0.9f : 0.05f;
        }
        return SetScore.of(new Outcomes(predicted, ptrue), labels, classes);
    }

    // Source: Newcombe RG (1998), "Two-sided confidence intervals for the single proportion: comparison of seven
    // methods", Statistics in Medicine 17:857-872, Table II, method 3 (Wilson score, no continuity correction):
    // upper limits of 81/263, 15/148, 0/20 and 1/29. Values from memory, to four decimals (as in BinomialTest).
    @Test
    void upperMatchesNewcombesWilsonUpperLimits() {
        int[][] cases = {{81, 263}, {15, 148}, {0, 20}, {1, 29}};
        double[] upper = {0.3662, 0.1605, 0.1611, 0.1718};
        for (int i = 0; i < cases.length; i++) {
            SetScore s = score(cases[i][0], cases[i][1], 20);
            double d = upper[i] - s.chance();
            String what = cases[i][0] + "/" + cases[i][1] + " (chance " + s.chance() + ")";
            assertTrue(new CollapseCriterion(CollapseCriterion.Kind.UPPER, d + 1e-4).critical(s, s),
                    what + " is critical when chance + D is just above its Wilson upper limit " + upper[i]);
            assertFalse(new CollapseCriterion(CollapseCriterion.Kind.UPPER, d - 1e-4).critical(s, s),
                    what + " is not critical when chance + D is just below " + upper[i]);
        }
    }

    // Source: analytic result. At chance 1/6 with 30 samples, 9 correct (30%) has one-sided exact binomial
    // P(X >= 9) = 0.0506 >= 0.05, so the default calls it critical; its Wilson interval (0.167, 0.479) reaches far above
    // chance + 0.05 = 0.217, so upper:0.05 does not.
    @Test
    void aSetCriticalOnThirtySamplesUnderTheDefaultIsNotUnderUpper() {
        SetScore s = score(9, 30, 6);
        assertEquals(1.0 / 6, s.chance(), 1e-15);
        assertEquals(0.05057, s.pValue(), 5e-5);
        assertEquals(0.4788, s.wilsonHigh(), 5e-4);
        assertTrue(CollapseCriterion.defaults().critical(s, s));
        assertFalse(CollapseCriterion.parse("upper:0.05").critical(s, s));
        // one more correct sample is significant: the default's boundary on 30 samples is 9 of 30
        assertFalse(CollapseCriterion.defaults().critical(score(10, 30, 6), s));
    }

    // Source: analytic result (Wilson bounds shrink as 1/sqrt(n)): the same accuracy, 20%, is critical under
    // upper:0.1 on 300 samples (upper limit 0.249 <= 0.267) but not on 30 (0.373); the default calls both critical.
    @Test
    void upperGetsHarderAsSamplesShrinkWhileTheDefaultGetsEasier() {
        CollapseCriterion upper = CollapseCriterion.parse("upper:0.1");
        SetScore many = score(60, 300, 6);
        SetScore few = score(6, 30, 6);
        assertTrue(upper.critical(many, many));
        assertFalse(upper.critical(few, few));
        assertTrue(CollapseCriterion.defaults().critical(many, many));
        assertTrue(CollapseCriterion.defaults().critical(few, few));
    }

    @Test
    void upperParsesDescribesAndChecksItsValue() {
        CollapseCriterion c = CollapseCriterion.parse("upper:0.05");
        assertEquals(CollapseCriterion.Kind.UPPER, c.kind());
        assertEquals("upper:0.05", c.label());
        assertTrue(c.describe().contains("Wilson") && c.describe().contains("chance + 0.05"), c.describe());
        IllegalArgumentException missing = assertThrows(IllegalArgumentException.class, () -> CollapseCriterion.parse("upper"));
        assertTrue(missing.getMessage().contains("needs a value"), missing.getMessage());
        assertThrows(IllegalArgumentException.class, () -> CollapseCriterion.parse("upper:1.5"));
        IllegalArgumentException unknown = assertThrows(IllegalArgumentException.class, () -> CollapseCriterion.parse("lower:0.1"));
        assertTrue(unknown.getMessage().contains("upper:D"), unknown.getMessage());
    }
}
