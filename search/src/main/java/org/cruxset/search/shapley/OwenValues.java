package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;

/**
 * Owen values (Owen 1977, values of games with a priori unions): players are grouped in unions (regions in networks);
 * the value averages a player's marginal contribution over the orders in which whole unions come one after another
 * and the players of a union keep together. Exact by enumeration for small games; by sampling such orders otherwise
 * (each order a chain of nested coalitions scored as one batch, paired with its reverse when antithetic). With every
 * union a single player, or one union of everyone, the Owen value is the Shapley value; the values of a union's
 * members sum to the union's Shapley value in the game between unions.
 */
public final class OwenValues {
    private OwenValues() {
    }

    /** Exact Owen values; {@code unionOf[i]} is player i's union, numbered from 0. */
    public static Estimate exact(Game game, int[] unionOf) {
        int n = game.players();
        double[] v = ExactShapley.table(game);
        int m = 0;
        for (int u : unionOf) {
            m = Math.max(m, u + 1);
        }
        int[] unionMask = new int[m];
        for (int i = 0; i < n; i++) {
            unionMask[unionOf[i]] |= 1 << i;
        }
        double[] phi = new double[n];
        for (int i = 0; i < n; i++) {
            int k = unionOf[i];
            int t = Integer.bitCount(unionMask[k]);
            // H: a set of the other unions; S: a subset of i's union without i
            for (int h = 0; h < 1 << m; h++) {
                if ((h >>> k & 1) != 0) {
                    continue;
                }
                int hs = Integer.bitCount(h);
                int q = 0;
                for (int u = 0; u < m; u++) {
                    if ((h >>> u & 1) != 0) {
                        q |= unionMask[u];
                    }
                }
                double wh = 1.0 / (m * ExactShapley.binomial(m - 1, hs));
                int rest = unionMask[k] & ~(1 << i);
                for (int s = rest; ; s = (s - 1) & rest) {
                    int ss = Integer.bitCount(s);
                    double ws = 1.0 / (t * ExactShapley.binomial(t - 1, ss));
                    phi[i] += wh * ws * (v[q | s | 1 << i] - v[q | s]);
                    if (s == 0) {
                        break;
                    }
                }
            }
        }
        return new Estimate("exact Owen", phi, new double[n], v.length);
    }

    /**
     * Owen values by sampling {@code orders} orders that keep unions together (rounded up to pairs when antithetic);
     * draws run in a {@link PermutationShapley.Sampler}-like loop, so budget stops keep the draws already complete.
     */
    public static PermutationShapley.Sampler sampler(Game game, int[] unionOf, boolean antithetic, long seed) {
        int n = game.players();
        int m = 0;
        for (int u : unionOf) {
            m = Math.max(m, u + 1);
        }
        List<List<Integer>> members = new ArrayList<>();
        for (int u = 0; u < m; u++) {
            members.add(new ArrayList<>());
        }
        for (int i = 0; i < n; i++) {
            members.get(unionOf[i]).add(i);
        }
        int unions = m;
        return new PermutationShapley.Sampler(game, antithetic, seed, rng -> {
            int[] order = PermutationShapley.shuffled(unions, rng);
            int[] perm = new int[n];
            int at = 0;
            for (int u : order) {
                List<Integer> mem = members.get(u);
                int[] inner = PermutationShapley.shuffled(mem.size(), rng);
                for (int x : inner) {
                    perm[at++] = mem.get(x);
                }
            }
            return perm;
        }, "Owen orders");
    }
}
