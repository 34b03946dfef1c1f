package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Sampled Shapley interaction indices of chosen pairs (Grabisch &amp; Roubens 1999). The index of {i, j} is the mean of
 * Δ_ij(S) = v(S ∪ {i,j}) − v(S ∪ {i}) − v(S ∪ {j}) + v(S) over coalitions S of the other players drawn with the
 * index's weights, which amounts to a size uniform in 0..n−2 and then a uniform subset of that size. Each draw asks
 * for 4 coalitions; all draws of a pair form one batch. Standard errors from the draws; seeded.
 */
public final class InteractionSampler {
    /** A pair's estimate: the players, the index, its standard error, and the draws behind it. */
    public record Pair(int first, int second, double value, double standardError, int draws) {
        /** Half-width of the 95% interval. */
        public double halfWidth() {
            return Estimate.Z95 * standardError;
        }
    }

    private InteractionSampler() {
    }

    /** Coalitions asked for per pair. */
    public static long cost(int draws) {
        return 4L * draws;
    }

    /** Estimates the interaction index of each pair {@code pairs[k] = {i, j}} from {@code draws} draws. */
    public static List<Pair> estimate(Game game, List<int[]> pairs, int draws, long seed) {
        if (draws < 2) {
            throw new IllegalArgumentException("at least 2 draws per pair are needed, found " + draws);
        }
        int n = game.players();
        SplittableRandom rng = new SplittableRandom(seed);
        List<Pair> out = new ArrayList<>();
        for (int[] p : pairs) {
            int i = p[0];
            int j = p[1];
            int[] others = new int[n - 2];
            int k = 0;
            for (int q = 0; q < n; q++) {
                if (q != i && q != j) {
                    others[k++] = q;
                }
            }
            List<RegionSet> batch = new ArrayList<>(4 * draws);
            for (int d = 0; d < draws; d++) {
                int size = rng.nextInt(n - 1);
                RegionSet s = PermutationShapley.randomSubset(others, size, n, rng);
                batch.add(s.with(i).with(j));
                batch.add(s.with(i));
                batch.add(s.with(j));
                batch.add(s);
            }
            double[] w = game.worth(batch);
            double mean = 0;
            double m2 = 0;
            for (int d = 0; d < draws; d++) {
                double x = w[4 * d] - w[4 * d + 1] - w[4 * d + 2] + w[4 * d + 3];
                double delta = x - mean;
                mean += delta / (d + 1);
                m2 += delta * (x - mean);
            }
            out.add(new Pair(i, j, mean, Math.sqrt(m2 / (draws - 1) / draws), draws));
        }
        return out;
    }
}
