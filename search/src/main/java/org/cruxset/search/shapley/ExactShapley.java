package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Exact Shapley values by enumerating all 2^n coalitions (Shapley 1953): φ_i = Σ_{S ⊆ N∖{i}} |S|! (n − |S| − 1)! / n!
 * × (v(S ∪ {i}) − v(S)). Coalitions are asked for in batches of {@link #BATCH}.
 */
public final class ExactShapley {
    /** Largest number of players enumerated. */
    public static final int MAX_PLAYERS = 24;
    static final int BATCH = 4096;

    private ExactShapley() {
    }

    /** The number of coalitions enumeration asks for. */
    public static long cost(int players) {
        return 1L << players;
    }

    /** The worth of every coalition, indexed by its bit mask. */
    static double[] table(Game game) {
        int n = game.players();
        if (n > MAX_PLAYERS) {
            throw new IllegalArgumentException("exact enumeration takes at most " + MAX_PLAYERS + " players, found " + n);
        }
        int total = 1 << n;
        double[] v = new double[total];
        for (int from = 0; from < total; from += BATCH) {
            int to = Math.min(total, from + BATCH);
            List<RegionSet> batch = new ArrayList<>(to - from);
            for (int mask = from; mask < to; mask++) {
                batch.add(coalition(n, mask));
            }
            double[] w = game.worth(batch);
            System.arraycopy(w, 0, v, from, w.length);
        }
        return v;
    }

    /** Exact values of {@code game}. */
    public static Estimate values(Game game) {
        int n = game.players();
        double[] v = table(game);
        double[] weight = new double[n];
        // weight[s] = s! (n − s − 1)! / n!, computed as 1 / (n × C(n − 1, s))
        for (int s = 0; s < n; s++) {
            weight[s] = 1.0 / (n * binomial(n - 1, s));
        }
        double[] phi = new double[n];
        for (int mask = 0; mask < v.length; mask++) {
            int size = Integer.bitCount(mask);
            for (int i = 0; i < n; i++) {
                if ((mask >>> i & 1) == 0) {
                    phi[i] += weight[size] * (v[mask | 1 << i] - v[mask]);
                }
            }
        }
        return new Estimate("exact", phi, new double[n], v.length);
    }

    static RegionSet coalition(int n, int mask) {
        RegionSet s = RegionSet.empty(n);
        for (int i = 0; i < n; i++) {
            if ((mask >>> i & 1) != 0) {
                s = s.with(i);
            }
        }
        return s;
    }

    static double binomial(int n, int k) {
        double r = 1;
        for (int i = 1; i <= k; i++) {
            r = r * (n - k + i) / i;
        }
        return r;
    }
}
