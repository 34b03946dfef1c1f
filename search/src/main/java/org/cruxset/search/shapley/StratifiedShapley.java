package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Shapley values by sampling stratified by position (Maleki et al. 2013; Castro et al. 2017): a player's value is the
 * mean over positions k = 0..n−1 of its mean marginal contribution to coalitions of k other players, so each
 * (player, position) stratum is sampled on its own ({@code perStratum} uniform coalitions of that size, two
 * coalitions asked for each) and the strata's means are averaged. Its standard error is
 * √(Σ_k var_k / m_k) / n. Every stratum needs samples, so it suits up to about {@link #MAX_PLAYERS} players. All of a
 * player's coalitions are asked for as one batch. Seeded.
 */
public final class StratifiedShapley {
    /** The most players the estimator is offered for. */
    public static final int MAX_PLAYERS = 20;

    private StratifiedShapley() {
    }

    /** The coalitions asked for. */
    public static long cost(int players, int perStratum) {
        return 2L * players * players * perStratum;
    }

    /** Estimates from {@code perStratum} samples in every (player, position) stratum. */
    public static Estimate values(Game game, int perStratum, long seed) {
        int n = game.players();
        if (n > MAX_PLAYERS) {
            throw new IllegalArgumentException("stratified sampling is offered up to " + MAX_PLAYERS + " players, found "
                    + n);
        }
        if (perStratum < 2) {
            throw new IllegalArgumentException("at least 2 samples per stratum are needed, found " + perStratum);
        }
        SplittableRandom rng = new SplittableRandom(seed);
        double[] phi = new double[n];
        double[] se = new double[n];
        long evaluations = 0;
        for (int i = 0; i < n; i++) {
            int[] others = new int[n - 1];
            int c = 0;
            for (int q = 0; q < n; q++) {
                if (q != i) {
                    others[c++] = q;
                }
            }
            List<RegionSet> batch = new ArrayList<>(2 * n * perStratum);
            for (int k = 0; k < n; k++) {
                for (int d = 0; d < perStratum; d++) {
                    RegionSet s = PermutationShapley.randomSubset(others, k, n, rng);
                    batch.add(s.with(i));
                    batch.add(s);
                }
            }
            double[] w = game.worth(batch);
            evaluations += batch.size();
            double sum = 0;
            double var = 0;
            for (int k = 0; k < n; k++) {
                double mean = 0;
                double m2 = 0;
                for (int d = 0; d < perStratum; d++) {
                    int at = 2 * (k * perStratum + d);
                    double x = w[at] - w[at + 1];
                    double delta = x - mean;
                    mean += delta / (d + 1);
                    m2 += delta * (x - mean);
                }
                sum += mean;
                var += m2 / (perStratum - 1) / perStratum;
            }
            phi[i] = sum / n;
            se[i] = Math.sqrt(var) / n;
        }
        return new Estimate("stratified by position", phi, se, evaluations);
    }
}
