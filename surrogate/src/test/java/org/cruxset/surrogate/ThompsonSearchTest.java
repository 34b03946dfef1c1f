package org.cruxset.surrogate;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;

class ThompsonSearchTest {
    static final int D = 10;

    /**
     * The binary quadratic problem of the BOCS paper as its authors define it (Baptista & Poloczek 2018, ICML,
     * section "Binary Quadratic Programming"; from memory): minimise xᵀQx over x ∈ {0,1}^10, Q = N ⊙ K with N_ij
     * ~ N(0, 1) and K_ij = exp(−(i − j)²/α), α = 10, no size penalty (λ = 0).
     */
    static double[][] instance(long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[][] q = new double[D][D];
        for (int i = 0; i < D; i++) {
            for (int j = 0; j < D; j++) {
                q[i][j] = rng.nextGaussian() * Math.exp(-(double) (i - j) * (i - j) / 10);
            }
        }
        return q;
    }

    static double value(double[][] q, RegionSet s) {
        double v = 0;
        for (int i : s.positions()) {
            for (int j : s.positions()) {
                v += q[i][j];
            }
        }
        return v;
    }

    // Source: exact optimum by brute force over all 2^10 inputs.
    @Test
    void reachesTheBruteForceOptimumWithin150EvaluationsOnMostInstances() {
        int reached = 0;
        StringBuilder log = new StringBuilder();
        for (long seed = 1; seed <= 10; seed++) {
            double[][] q = instance(seed);
            double optimum = Double.POSITIVE_INFINITY;
            for (int bits = 0; bits < 1 << D; bits++) {
                int[] pos = new int[Integer.bitCount(bits)];
                int k = 0;
                for (int i = 0; i < D; i++) {
                    if ((bits >> i & 1) == 1) {
                        pos[k++] = i;
                    }
                }
                optimum = Math.min(optimum, value(q, RegionSet.of(D, pos)));
            }
            ThompsonSearch.Result r = ThompsonSearch.minimise(D, SparseQuadraticModelTest.all(D),
                    s -> value(q, s), new ThompsonSearch.Settings(20, 150, 0, 100, 1000, seed));
            int firstAt = -1;
            for (int i = 0; i < r.values().length; i++) {
                if (r.values()[i] <= optimum + 1e-9) {
                    firstAt = i + 1;
                    break;
                }
            }
            if (firstAt > 0) {
                reached++;
            }
            log.append(String.format(java.util.Locale.ROOT, " seed %d: optimum %.3f, best %.3f, reached at %d;", seed,
                    optimum, r.bestValue(), firstAt));
        }
        System.out.println("BOCS binary quadratic:" + log);
        assertTrue(reached >= 7, reached + " of 10 instances reached the optimum within 150 evaluations:" + log);
    }
}
