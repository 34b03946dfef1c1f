package org.cruxset.scoring.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.apache.commons.math3.distribution.BinomialDistribution;
import org.junit.jupiter.api.Test;

class BinomialTest {

    // Source: Newcombe RG (1998), "Two-sided confidence intervals for the single proportion: comparison of seven
    // methods", Statistics in Medicine 17:857-872, Table II, method 3 (Wilson score, no continuity correction).
    // Values from memory, to four decimals.
    @Test
    void wilsonIntervalMatchesNewcombesWorkedExamples() {
        assertInterval(81, 263, 0.2553, 0.3662);
        assertInterval(15, 148, 0.0624, 0.1605);
        assertInterval(0, 20, 0.0000, 0.1611);
        assertInterval(1, 29, 0.0061, 0.1718);
    }

    private static void assertInterval(int x, int n, double lo, double hi) {
        double[] ci = Binomial.wilson(x, n, Binomial.Z95);
        assertEquals(lo, ci[0], 5e-5, x + "/" + n + " lower");
        assertEquals(hi, ci[1], 5e-5, x + "/" + n + " upper");
    }

    // Source: Apache Commons Math 3.6.1 BinomialDistribution as the reference implementation.
    @Test
    void upperTailMatchesCommonsMath() {
        int[][] cases = {{10, 20}, {0, 5}, {5, 5}, {61, 288}, {12, 60}, {200, 660}};
        double[] p0 = {0.5, 1.0 / 6, 1.0 / 15, 0.3};
        for (int[] c : cases) {
            for (double p : p0) {
                BinomialDistribution ref = new BinomialDistribution(null, c[1], p);
                double expected = 0;
                for (int k = c[0]; k <= c[1]; k++) {
                    expected += ref.probability(k);
                }
                double got = Binomial.pValueAtLeast(c[0], c[1], p);
                assertEquals(expected, got, 1e-12 + 1e-9 * expected, c[0] + "/" + c[1] + " at " + p);
            }
        }
    }

    // Source: analytic result: P(X >= 10) for X ~ Binomial(10, 1/2) is 2^-10.
    @Test
    void upperTailAnalyticValue() {
        assertEquals(Math.pow(2, -10), Binomial.pValueAtLeast(10, 10, 0.5), 1e-15);
        assertEquals(1.0, Binomial.pValueAtLeast(0, 10, 0.5), 0.0);
        // P(X >= 9) = (C(10,9) + C(10,10)) / 2^10 = 11/1024
        assertEquals(11.0 / 1024, Binomial.pValueAtLeast(9, 10, 0.5), 1e-15);
    }
}
