package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A cheap screen before sampling: each player's marginal contribution in two contexts, added to the empty
 * coalition (add-one-in) and removed from the full one (leave-one-out), 2n + 2 coalitions in one batch. A player
 * whose two marginals agree within a tolerance looks additive; if it truly is, its Shapley value is that marginal and
 * the other players' values are those of the game among them with it held in. Two contexts cannot prove additivity,
 * so this is a labelled shortcut, and callers check a sample of the screened players by sampling the full game.
 */
public final class Screen {
    /** Each player's add-one-in and leave-one-out marginals, and whether they agree within the tolerance. */
    public record Result(double[] addOneIn, double[] leaveOneOut, boolean[] screened, double tolerance) {
        /** The shortcut value of player i: the mean of its two marginals. */
        public double value(int i) {
            return (addOneIn[i] + leaveOneOut[i]) / 2;
        }

        /** Number of players that took the shortcut. */
        public int count() {
            int c = 0;
            for (boolean b : screened) {
                c += b ? 1 : 0;
            }
            return c;
        }
    }

    private Screen() {
    }

    /** The coalitions the screen asks for. */
    public static long cost(int players) {
        return 2L * players + 2;
    }

    /** Screens every player of {@code game} at {@code tolerance}. */
    public static Result run(Game game, double tolerance) {
        int n = game.players();
        List<RegionSet> batch = new ArrayList<>(2 * n + 2);
        RegionSet all = RegionSet.all(n);
        batch.add(RegionSet.empty(n));
        batch.add(all);
        for (int i = 0; i < n; i++) {
            batch.add(RegionSet.of(n, i));
            batch.add(all.without(i));
        }
        double[] w = game.worth(batch);
        double[] in = new double[n];
        double[] out = new double[n];
        boolean[] screened = new boolean[n];
        for (int i = 0; i < n; i++) {
            in[i] = w[2 + 2 * i] - w[0];
            out[i] = w[1] - w[3 + 2 * i];
            screened[i] = Math.abs(in[i] - out[i]) <= tolerance;
        }
        return new Result(in, out, screened, tolerance);
    }

    /**
     * The game among the players not screened, the screened ones held in every coalition: its player k is the k-th
     * unscreened player of {@code game} ({@code players} lists them).
     */
    public static Game rest(Game game, boolean[] screened, int[] players) {
        int n = game.players();
        RegionSet held = RegionSet.empty(n);
        for (int i = 0; i < n; i++) {
            if (screened[i]) {
                held = held.with(i);
            }
        }
        RegionSet base = held;
        return new Game() {
            @Override
            public int players() {
                return players.length;
            }

            @Override
            public double[] worth(List<RegionSet> coalitions) {
                List<RegionSet> full = new ArrayList<>(coalitions.size());
                for (RegionSet c : coalitions) {
                    RegionSet s = base;
                    for (int k : c.positions()) {
                        s = s.with(players[k]);
                    }
                    full.add(s);
                }
                return game.worth(full);
            }
        };
    }
}
