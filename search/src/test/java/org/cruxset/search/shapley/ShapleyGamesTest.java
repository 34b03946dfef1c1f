package org.cruxset.search.shapley;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.function.ToDoubleFunction;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;

/** Exact Shapley values of published games, and the honesty of the permutation estimators. */
class ShapleyGamesTest {
    /** A game given by a function of the coalition. */
    static Game game(int n, ToDoubleFunction<RegionSet> v) {
        return new Game() {
            @Override
            public int players() {
                return n;
            }

            @Override
            public double[] worth(List<RegionSet> coalitions) {
                double[] out = new double[coalitions.size()];
                for (int i = 0; i < out.length; i++) {
                    out[i] = v.applyAsDouble(coalitions.get(i));
                }
                return out;
            }
        };
    }

    private static int count(RegionSet s, int from, int to) {
        int c = 0;
        for (int i = from; i < to; i++) {
            c += s.contains(i) ? 1 : 0;
        }
        return c;
    }

    // Source: Shapley & Shubik (1954), American Political Science Review 48, the 11-member Security Council (5
    // permanent members with a veto, passage needs 7 votes): 76/385 per permanent member, 1/462 per other. Checked
    // also by counting pivotal orders: a non-permanent member is pivotal when all 5 permanent members and exactly one
    // of the other 5 come before it, C(5,1) × 6! × 4! / 11! = 1/462.
    @Test
    void theElevenMemberSecurityCouncil() {
        Game g = game(11, s -> count(s, 0, 5) == 5 && s.size() >= 7 ? 1 : 0);
        Estimate e = ExactShapley.values(g);
        for (int i = 0; i < 5; i++) {
            assertEquals(76.0 / 385, e.value(i), 1e-12);
        }
        for (int i = 5; i < 11; i++) {
            assertEquals(1.0 / 462, e.value(i), 1e-12);
        }
        assertEquals(5.0 * 720 * 24 / factorial(11), 1.0 / 462, 1e-15);
    }

    // Source: the 15-member Security Council since 1965 as the weighted voting game [39; 7×5, 1×10] (representation as
    // given in M. Brodie, "Power Voting Systems Like the United Nations Security Council", Wolfram Demonstrations
    // Project); 4/2145 per elected member derived there by the same count, 84 × 6! × 8! / 15!, in the article
    // "Is it me, or is 'Veto' starting to sound really good" (Gonit Sora). 421/2145 for a permanent member is the
    // remainder shared equally (efficiency). The same weighted game [39: 7×5, 1×10] is the textbook exercise in
    // Aufmann, Lockwood, Nation & Clegg, Mathematical Excursions, 4th ed., Section 4.3, Exercise 30 (pointing to the
    // Math Matters box on p. 210), seen only as a solution site's excerpt of the exercise, which asks for Banzhaf
    // indices; no textbook page printing these two Shapley values could be consulted here. Checked analytically as
    // well: an elected member is pivotal when all 5 permanent members and exactly 3 of the other 9 come before it,
    // C(9,3) × 8! × 6! / 15!.
    @Test
    void theFifteenMemberSecurityCouncil() {
        Game g = game(15, s -> 7 * count(s, 0, 5) + count(s, 5, 15) >= 39 ? 1 : 0);
        Estimate e = ExactShapley.values(g);
        double nonPermanent = 84.0 * factorial(8) * factorial(6) / factorial(15);
        assertEquals(4.0 / 2145, nonPermanent, 1e-15);
        assertEquals((1 - 10 * nonPermanent) / 5, 421.0 / 2145, 1e-15);
        for (int i = 0; i < 5; i++) {
            assertEquals(421.0 / 2145, e.value(i), 1e-12);
        }
        for (int i = 5; i < 15; i++) {
            assertEquals(4.0 / 2145, e.value(i), 1e-12);
        }
    }

    // Source: the glove game (common textbook example of the Shapley value; values from memory): one left-glove holder
    // and two right-glove holders, v(S) = number of matched pairs: 2/3, 1/6, 1/6.
    @Test
    void theGloveGame() {
        Estimate e = ExactShapley.values(game(3, s -> Math.min(count(s, 0, 1), count(s, 1, 3))));
        assertEquals(2.0 / 3, e.value(0), 1e-12);
        assertEquals(1.0 / 6, e.value(1), 1e-12);
        assertEquals(1.0 / 6, e.value(2), 1e-12);
    }

    // Source: Littlechild & Owen (1973), Management Science 20, the airport game: with runway costs c1 <= ... <= cn
    // and v(S) = max cost in S, player i pays Σ_{k<=i} (c_k − c_{k−1}) / (n − k + 1).
    @Test
    void anAirportGame() {
        double[] c = {1, 3, 3, 7, 12, 20};
        Estimate e = ExactShapley.values(game(c.length, s -> {
            double m = 0;
            for (int p : s.positions()) {
                m = Math.max(m, c[p]);
            }
            return m;
        }));
        for (int i = 0; i < c.length; i++) {
            double expected = 0;
            for (int k = 0; k <= i; k++) {
                expected += (c[k] - (k == 0 ? 0 : c[k - 1])) / (c.length - k);
            }
            assertEquals(expected, e.value(i), 1e-12, "player " + i);
        }
        assertEquals(20, e.sum(), 1e-12, "efficiency: the values sum to v(all) − v(∅)");
    }

    // Source: Grabisch (1997), Fuzzy Sets and Systems 92: the Shapley interaction index of the unanimity game u_T is
    // 1 / (|T| − 1) for every pair inside T and 0 for every other pair.
    @Test
    void unanimityGamesHaveTheirAnalyticInteractions() {
        int n = 7;
        java.util.Set<Integer> t = java.util.Set.of(1, 3, 4, 6);
        ExactShapley.Full f = ExactShapley.full(game(n, s -> {
            for (int p : t) {
                if (!s.contains(p)) {
                    return 0;
                }
            }
            return 1;
        }));
        for (int i = 0; i < n; i++) {
            for (int j = i + 1; j < n; j++) {
                double expected = t.contains(i) && t.contains(j) ? 1.0 / (t.size() - 1) : 0;
                assertEquals(expected, f.interactions()[i][j], 1e-12, "pair " + i + "," + j);
            }
            assertEquals(t.contains(i) ? 1.0 / t.size() : 0, f.values().value(i), 1e-12);
        }
    }

    // Sampled interaction indices against the exact ones on the synthetic game: intervals cover the exact index in
    // about 95% of 200 seeded repeats, pooled over its pairs.
    @Test
    void sampledInteractionsCoverTheExactIndices() {
        Game g = synthetic();
        double[][] exact = ExactShapley.full(g).interactions();
        List<int[]> pairs = List.of(new int[] {0, 1}, new int[] {2, 3}, new int[] {4, 5}, new int[] {0, 5});
        int covered = 0;
        int total = 0;
        for (int r = 0; r < 200; r++) {
            for (InteractionSampler.Pair p : InteractionSampler.estimate(g, pairs, 200, 300 + r)) {
                covered += Math.abs(p.value() - exact[p.first()][p.second()]) <= p.halfWidth() ? 1 : 0;
                total++;
            }
        }
        double coverage = (double) covered / total;
        System.out.printf("sampled interactions: coverage %.4f%n", coverage);
        assertTrue(coverage >= 0.92 && coverage <= 0.97, "coverage " + coverage);
        assertTrue(exact[0][1] > 0 && exact[4][5] < 0, "synergy positive, redundancy negative");
    }

    private static double factorial(int n) {
        double f = 1;
        for (int i = 2; i <= n; i++) {
            f *= i;
        }
        return f;
    }

    /**
     * A fixed synthetic game of 6 players without heavily skewed marginals: additive terms, two pair synergies, one
     * redundant pair (either member suffices) and a size bonus.
     */
    static Game synthetic() {
        double[] a = {0.3, 0.1, 0.25, 0.05, 0.2, 0.15};
        return game(6, s -> {
            double v = 0;
            for (int p : s.positions()) {
                v += a[p];
            }
            v += s.contains(0) && s.contains(1) ? 0.2 : 0;
            v += s.contains(2) && s.contains(3) ? 0.15 : 0;
            v += s.contains(4) || s.contains(5) ? 0.25 : 0;
            v += 0.05 * Math.max(0, s.size() - 3);
            return v;
        });
    }

    // Must show (estimator honesty): at a fixed number of permutations, 400 seeded repeats, the 95% intervals cover the
    // exact values 92-97% of the time, and the RMSE falls as (scored sets)^-1/2 (log-log slope within [-0.6, -0.4]).
    @Test
    void permutationIntervalsCoverAndErrorsShrinkAsTheSquareRoot() {
        Game g = synthetic();
        double[] exact = ExactShapley.values(g).values();
        int repeats = 400;
        int covered = 0;
        int total = 0;
        for (int r = 0; r < repeats; r++) {
            Estimate e = PermutationShapley.values(g, 60, false, 1000 + r);
            for (int i = 0; i < exact.length; i++) {
                covered += Math.abs(e.value(i) - exact[i]) <= e.halfWidth(i) ? 1 : 0;
                total++;
            }
        }
        double coverage = (double) covered / total;
        assertTrue(coverage >= 0.92 && coverage <= 0.97, "coverage " + coverage);
        int[] ms = {20, 40, 80, 160, 320};
        double[] x = new double[ms.length];
        double[] y = new double[ms.length];
        for (int k = 0; k < ms.length; k++) {
            double sq = 0;
            int cnt = 0;
            for (int r = 0; r < repeats; r++) {
                Estimate e = PermutationShapley.values(g, ms[k], false, 5000 + r);
                for (int i = 0; i < exact.length; i++) {
                    sq += Math.pow(e.value(i) - exact[i], 2);
                    cnt++;
                }
            }
            x[k] = Math.log(ms[k] * PermutationShapley.costPerPermutation(6));
            y[k] = Math.log(Math.sqrt(sq / cnt));
        }
        double slope = slope(x, y);
        System.out.printf("permutations: coverage %.4f; RMSE slope %.3f%n", coverage, slope);
        assertTrue(slope >= -0.6 && slope <= -0.4, "log-log slope of RMSE against scored sets " + slope);
    }

    static double rmse(Game g, double[] exact, int permutations, boolean antithetic, int repeats, long seed) {
        double sq = 0;
        int cnt = 0;
        for (int r = 0; r < repeats; r++) {
            Estimate e = PermutationShapley.values(g, permutations, antithetic, seed + r);
            for (int i = 0; i < exact.length; i++) {
                sq += Math.pow(e.value(i) - exact[i], 2);
                cnt++;
            }
        }
        return Math.sqrt(sq / cnt);
    }

    // Must show: where marginals depend on a player's position (a game of coalition size with increasing returns),
    // antithetic pairs reach plain sampling's RMSE with at least 20% fewer scored sets; in the symmetric majority
    // game with an odd number of players it does not help (a permutation and its reverse put the same player in the
    // pivotal middle position).
    @Test
    void antitheticPairsHelpWhereMarginalsDependOnPosition() {
        Game convex = game(7, s -> Math.pow(s.size(), 1.5) + (s.contains(0) ? 0.5 : 0));
        double[] exact = ExactShapley.values(convex).values();
        double plain = rmse(convex, exact, 100, false, 400, 7);
        double anti = rmse(convex, exact, 80, true, 400, 7);
        assertTrue(anti <= plain, "antithetic with 80% of the scored sets: RMSE " + anti + ", plain " + plain);
        Game majority = game(7, s -> s.size() >= 4 ? 1 : 0);
        double[] exactM = ExactShapley.values(majority).values();
        double plainM = rmse(majority, exactM, 100, false, 400, 9);
        double antiM = rmse(majority, exactM, 80, true, 400, 9);
        System.out.printf("convex game: RMSE plain (100) %.4g, antithetic (80) %.4g; majority: %.4g, %.4g%n", plain, anti,
                plainM, antiM);
        assertTrue(antiM > plainM, "majority game: antithetic " + antiM + " does not beat plain " + plainM);
    }

    // Must show: stratified sampling by position, on the same synthetic game: intervals cover the exact values; and on
    // the game of coalition size with increasing returns, where marginals depend on position, it reaches plain
    // sampling's RMSE with at least 20% fewer scored sets.
    @Test
    void stratifiedSamplingCoversAndHelpsWhereMarginalsDependOnPosition() {
        Game g = synthetic();
        double[] exact = ExactShapley.values(g).values();
        int covered = 0;
        int total = 0;
        for (int r = 0; r < 400; r++) {
            Estimate e = StratifiedShapley.values(g, 5, 700 + r);
            for (int i = 0; i < exact.length; i++) {
                covered += Math.abs(e.value(i) - exact[i]) <= e.halfWidth(i) + 1e-12 ? 1 : 0;
                total++;
            }
        }
        double coverage = (double) covered / total;
        Game convex = game(7, s -> Math.pow(s.size(), 1.5) + (s.contains(0) ? 0.5 : 0));
        double[] ex = ExactShapley.values(convex).values();
        int perStratum = 2;
        long stratCost = StratifiedShapley.cost(7, perStratum);
        int permutations = (int) Math.ceil(stratCost / 0.8 / PermutationShapley.costPerPermutation(7));
        double plain = rmse(convex, ex, permutations, false, 400, 11);
        double sq = 0;
        int cnt = 0;
        for (int r = 0; r < 400; r++) {
            Estimate e = StratifiedShapley.values(convex, perStratum, 11 + r);
            for (int i = 0; i < ex.length; i++) {
                sq += Math.pow(e.value(i) - ex[i], 2);
                cnt++;
            }
        }
        double strat = Math.sqrt(sq / cnt);
        System.out.printf("stratified: coverage %.4f; convex game RMSE %.4g with %d sets, plain %.4g with %d%n", coverage,
                strat, stratCost, plain, permutations * PermutationShapley.costPerPermutation(7));
        assertTrue(coverage >= 0.92 && coverage <= 0.99, "coverage " + coverage);
        assertTrue(strat <= plain, "stratified " + strat + " with 80% of plain's scored sets, plain " + plain);
    }

    // The regression estimator with paired sampling, measured against permutations on the same synthetic game at equal
    // scored sets: its bootstrap intervals cover the exact values, and its RMSE is printed beside the others'.
    @Test
    void regressionWithPairedSamplingCoversAndIsMeasuredAgainstPermutations() {
        // Paired sampling fits games with interactions of order at most two exactly, so this game adds a three-way
        // synergy and a two-of-three threshold to the synthetic game.
        Game base = synthetic();
        Game g = game(6, s -> base.worth(s) + (s.contains(0) && s.contains(2) && s.contains(4) ? 0.3 : 0)
                + (count(s, 1, 2) + count(s, 3, 4) + count(s, 5, 6) >= 2 ? 0.2 : 0));
        double[] exact = ExactShapley.values(g).values();
        int pairs = 40;
        long cost = RegressionShapley.cost(pairs);
        int covered = 0;
        int total = 0;
        double sq = 0;
        for (int r = 0; r < 400; r++) {
            Estimate e = RegressionShapley.values(g, pairs, 900 + r);
            assertEquals(exact[0] + exact[1] + exact[2] + exact[3] + exact[4] + exact[5], e.sum(), 1e-9,
                    "the values sum to v(all) − v(∅) exactly");
            for (int i = 0; i < exact.length; i++) {
                covered += Math.abs(e.value(i) - exact[i]) <= e.halfWidth(i) ? 1 : 0;
                sq += Math.pow(e.value(i) - exact[i], 2);
                total++;
            }
        }
        double coverage = (double) covered / total;
        double regression = Math.sqrt(sq / total);
        int permutations = (int) (cost / PermutationShapley.costPerPermutation(6));
        double plain = rmse(g, exact, permutations, false, 400, 900);
        double anti = rmse(g, exact, permutations, true, 400, 900);
        System.out.printf("regression (%d sets): coverage %.4f, RMSE %.4g; permutations (%d sets) %.4g, antithetic %.4g%n",
                cost, coverage, regression, permutations * PermutationShapley.costPerPermutation(6), plain, anti);
        assertTrue(coverage >= 0.92 && coverage <= 0.97, "coverage " + coverage);
    }

    // The screen: in a game where some players are additive, they take the shortcut with their exact values, and the
    // others' values from the game among them (screened players held in) equal the full game's.
    @Test
    void theScreenTakesAdditivePlayersAndKeepsTheOthersValues() {
        double[] a = {0.1, 0.2, 0.05, 0.3, 0.15};
        Game g = game(5, s -> {
            double v = 0;
            for (int p : s.positions()) {
                v += a[p];
            }
            return v + (s.contains(0) && s.contains(1) ? 0.4 : 0);
        });
        double[] exact = ExactShapley.values(g).values();
        Screen.Result r = Screen.run(g, 1e-9);
        assertTrue(!r.screened()[0] && !r.screened()[1], "the synergistic pair is not additive");
        for (int i = 2; i < 5; i++) {
            assertTrue(r.screened()[i], "player " + i + " is additive");
            assertEquals(exact[i], r.value(i), 1e-12);
        }
        Estimate rest = ExactShapley.values(Screen.rest(g, r.screened(), new int[] {0, 1}));
        assertEquals(exact[0], rest.value(0), 1e-12);
        assertEquals(exact[1], rest.value(1), 1e-12);
        // Two contexts cannot prove additivity: a player whose effect shows only in middle-sized coalitions passes.
        Game fooled = game(4, s -> s.size() == 2 && s.contains(3) ? 0.5 : 0);
        assertTrue(Screen.run(fooled, 1e-9).screened()[3], "the screen is fooled, as the output says it can be");
    }

    // The redundancy trap: an any-of-K game (any member suffices) and a unanimity game (all are needed) give their K
    // members equal values, 1/K each (analytic, by symmetry and efficiency), though their minimal lesion sets differ
    // (all K members against any one).
    @Test
    void anyOfKAndUnanimityGamesGiveEqualValues() {
        int n = 6;
        int k = 3;
        Estimate any = ExactShapley.values(game(n, s -> count(s, 0, k) > 0 ? 1 : 0));
        Estimate all = ExactShapley.values(game(n, s -> count(s, 0, k) == k ? 1 : 0));
        for (int i = 0; i < k; i++) {
            assertEquals(1.0 / k, any.value(i), 1e-12);
            assertEquals(1.0 / k, all.value(i), 1e-12);
        }
        for (int i = k; i < n; i++) {
            assertEquals(0, any.value(i), 1e-12);
            assertEquals(0, all.value(i), 1e-12);
        }
    }

    static double slope(double[] x, double[] y) {
        double mx = 0;
        double my = 0;
        for (int i = 0; i < x.length; i++) {
            mx += x[i] / x.length;
            my += y[i] / y.length;
        }
        double num = 0;
        double den = 0;
        for (int i = 0; i < x.length; i++) {
            num += (x[i] - mx) * (y[i] - my);
            den += (x[i] - mx) * (x[i] - mx);
        }
        return num / den;
    }
}
