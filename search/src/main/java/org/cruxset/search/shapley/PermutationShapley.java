package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Shapley values by sampling permutations (Castro, Gómez &amp; Tejada 2009): each permutation is a chain of nested
 * coalitions ∅ ⊂ {π1} ⊂ {π1, π2} ⊂ ... ⊂ N, asked for as one batch, and gives every player one marginal contribution.
 * With {@code antithetic}, each permutation is paired with its reverse and the pair's mean is one draw. The standard
 * error is the sample standard deviation of the draws over √draws; intervals are normal. Seeded.
 */
public final class PermutationShapley {
    private PermutationShapley() {
    }

    /** The coalitions one permutation asks for. */
    public static long costPerPermutation(int players) {
        return players + 1L;
    }

    /** Estimates from {@code permutations} permutations (rounded up to pairs when antithetic). */
    public static Estimate values(Game game, int permutations, boolean antithetic, long seed) {
        int n = game.players();
        if (permutations < 2) {
            throw new IllegalArgumentException("at least 2 permutations are needed for a standard error, found "
                    + permutations);
        }
        SplittableRandom rng = new SplittableRandom(seed);
        int draws = antithetic ? (permutations + 1) / 2 : permutations;
        double[] mean = new double[n];
        double[] m2 = new double[n];
        long evaluations = 0;
        for (int d = 0; d < draws; d++) {
            int[] perm = shuffled(n, rng);
            double[] x = marginals(game, perm);
            evaluations += n + 1;
            if (antithetic) {
                int[] rev = new int[n];
                for (int i = 0; i < n; i++) {
                    rev[i] = perm[n - 1 - i];
                }
                double[] y = marginals(game, rev);
                evaluations += n + 1;
                for (int i = 0; i < n; i++) {
                    x[i] = (x[i] + y[i]) / 2;
                }
            }
            // Welford's running mean and sum of squares
            for (int i = 0; i < n; i++) {
                double delta = x[i] - mean[i];
                mean[i] += delta / (d + 1);
                m2[i] += delta * (x[i] - mean[i]);
            }
        }
        double[] se = new double[n];
        for (int i = 0; i < n; i++) {
            se[i] = Math.sqrt(m2[i] / (draws - 1) / draws);
        }
        return new Estimate(antithetic ? "antithetic permutations" : "permutations", mean, se, evaluations);
    }

    /** Each player's marginal contribution along the chain of {@code perm}, scored as one batch. */
    static double[] marginals(Game game, int[] perm) {
        int n = perm.length;
        List<RegionSet> chain = new ArrayList<>(n + 1);
        RegionSet s = RegionSet.empty(n);
        chain.add(s);
        for (int p : perm) {
            s = s.with(p);
            chain.add(s);
        }
        double[] w = game.worth(chain);
        double[] out = new double[n];
        for (int k = 0; k < n; k++) {
            out[perm[k]] = w[k + 1] - w[k];
        }
        return out;
    }

    static int[] shuffled(int n, SplittableRandom rng) {
        int[] a = new int[n];
        for (int i = 0; i < n; i++) {
            a[i] = i;
        }
        for (int i = n - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = a[i];
            a[i] = a[j];
            a[j] = t;
        }
        return a;
    }
}
