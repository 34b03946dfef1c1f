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
        if (permutations < 2) {
            throw new IllegalArgumentException("at least 2 permutations are needed for a standard error, found "
                    + permutations);
        }
        Sampler s = new Sampler(game, antithetic, seed);
        s.draw(antithetic ? (permutations + 1) / 2 : permutations);
        return s.estimate();
    }

    /**
     * A running estimate: draws are added in rounds (a permutation, or a permutation and its reverse), so a caller can
     * stop at a target interval width or when the budget runs out; draws completed before a stop are kept.
     */
    public static final class Sampler {
        private final Game game;
        private final boolean antithetic;
        private final SplittableRandom rng;
        private final java.util.function.Function<SplittableRandom, int[]> orders;
        private final String name;
        private final double[] mean;
        private final double[] m2;
        private int draws;
        private long evaluations;

        /** Uniform permutations of the players (Shapley values). */
        public Sampler(Game game, boolean antithetic, long seed) {
            this(game, antithetic, seed, r -> shuffled(game.players(), r), "permutations");
        }

        /** Orders drawn by {@code orders} (e.g. keeping unions together, for Owen values), named {@code name}. */
        Sampler(Game game, boolean antithetic, long seed, java.util.function.Function<SplittableRandom, int[]> orders,
                String name) {
            this.game = game;
            this.antithetic = antithetic;
            this.rng = new SplittableRandom(seed);
            this.orders = orders;
            this.name = name;
            this.mean = new double[game.players()];
            this.m2 = new double[game.players()];
        }

        /** Adds {@code count} draws. */
        public void draw(int count) {
            int n = game.players();
            for (int d = 0; d < count; d++) {
                int[] perm = orders.apply(rng);
                double[] x = marginals(game, perm);
                long cost = n + 1;
                if (antithetic) {
                    int[] rev = new int[n];
                    for (int i = 0; i < n; i++) {
                        rev[i] = perm[n - 1 - i];
                    }
                    double[] y = marginals(game, rev);
                    cost += n + 1;
                    for (int i = 0; i < n; i++) {
                        x[i] = (x[i] + y[i]) / 2;
                    }
                }
                // Welford's running mean and sum of squares, updated only once the whole draw is scored
                draws++;
                evaluations += cost;
                for (int i = 0; i < n; i++) {
                    double delta = x[i] - mean[i];
                    mean[i] += delta / draws;
                    m2[i] += delta * (x[i] - mean[i]);
                }
            }
        }

        /** Draws so far. */
        public int draws() {
            return draws;
        }

        /** Coalitions one draw asks for. */
        public long costPerDraw() {
            return (antithetic ? 2L : 1L) * (game.players() + 1);
        }

        /** The estimate from the draws so far (standard errors infinite below two draws). */
        public Estimate estimate() {
            int n = mean.length;
            double[] se = new double[n];
            for (int i = 0; i < n; i++) {
                se[i] = draws < 2 ? Double.POSITIVE_INFINITY : Math.sqrt(m2[i] / (draws - 1) / draws);
            }
            return new Estimate(antithetic ? "antithetic " + name : name, mean, se, evaluations);
        }
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

    /**
     * A uniform random subset of {@code size} of the players in {@code pool}, as a coalition over {@code n} players:
     * the first {@code size} of a partial shuffle of a copy of the pool.
     */
    static RegionSet randomSubset(int[] pool, int size, int n, SplittableRandom rng) {
        int[] o = pool.clone();
        RegionSet s = RegionSet.empty(n);
        for (int a = 0; a < size; a++) {
            int b = a + rng.nextInt(o.length - a);
            int t = o[a];
            o[a] = o[b];
            o[b] = t;
            s = s.with(o[a]);
        }
        return s;
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
