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
        return fromTable(table(game), game.players());
    }

    private static Estimate fromTable(double[] v, int n) {
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

    /**
     * The Shapley interaction index of every pair (Grabisch &amp; Roubens 1999) from the worth table of all
     * coalitions: I_ij = Σ_{S ⊆ N∖{i,j}} |S|! (n − |S| − 2)! / (n − 1)! × (v(S ∪ {i,j}) − v(S ∪ {i}) − v(S ∪ {j}) + v(S)).
     * Positive: the pair is worth more together than apart (synergy); negative: redundancy.
     */
    static double[][] interactions(double[] v, int n) {
        double[][] out = new double[n][n];
        if (n < 2) {
            return out;
        }
        double[] weight = new double[n - 1];
        for (int s = 0; s <= n - 2; s++) {
            weight[s] = 1.0 / ((n - 1) * binomial(n - 2, s));
        }
        for (int mask = 0; mask < v.length; mask++) {
            int size = Integer.bitCount(mask);
            if (size > n - 2) {
                continue;
            }
            for (int i = 0; i < n; i++) {
                if ((mask >>> i & 1) != 0) {
                    continue;
                }
                for (int j = i + 1; j < n; j++) {
                    if ((mask >>> j & 1) != 0) {
                        continue;
                    }
                    double d = v[mask | 1 << i | 1 << j] - v[mask | 1 << i] - v[mask | 1 << j] + v[mask];
                    out[i][j] += weight[size] * d;
                }
            }
        }
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                out[j][i] = out[i][j];
            }
        }
        return out;
    }

    /** Exact values and pairwise interaction indices of {@code game} from one enumeration. */
    public record Full(Estimate values, double[][] interactions) {
    }

    /** Exact values and every pair's interaction index. */
    public static Full full(Game game) {
        int n = game.players();
        double[] v = table(game);
        return new Full(fromTable(v, n), interactions(v, n));
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
