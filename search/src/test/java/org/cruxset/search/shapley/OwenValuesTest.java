package org.cruxset.search.shapley;

import static org.cruxset.search.shapley.ShapleyGamesTest.game;
import static org.cruxset.search.shapley.ShapleyGamesTest.synthetic;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;

/** Owen values (Owen 1977): their defining reductions and the quotient-game property, exact and sampled. */
class OwenValuesTest {
    @Test
    void singletonUnionsAndOneUnionGiveShapleyValues() {
        Game g = synthetic();
        double[] shapley = ExactShapley.values(g).values();
        double[] singletons = OwenValues.exact(g, new int[] {0, 1, 2, 3, 4, 5}).values();
        double[] one = OwenValues.exact(g, new int[] {0, 0, 0, 0, 0, 0}).values();
        for (int i = 0; i < shapley.length; i++) {
            assertEquals(shapley[i], singletons[i], 1e-12);
            assertEquals(shapley[i], one[i], 1e-12);
        }
    }

    // Analytic: in the 3-person majority game with players 0 and 1 united, the union wins alone, so the quotient game
    // gives it everything; its members split it equally (1/2, 1/2) and player 2 gets 0, where Shapley gives 1/3 each.
    @Test
    void aUnitedPairInAMajorityGame() {
        Game g = game(3, s -> s.size() >= 2 ? 1 : 0);
        double[] owen = OwenValues.exact(g, new int[] {0, 0, 1}).values();
        assertEquals(0.5, owen[0], 1e-12);
        assertEquals(0.5, owen[1], 1e-12);
        assertEquals(0.0, owen[2], 1e-12);
    }

    // Source: the worked example in the documentation of the R package GameTheoryAllocation (CRAN, version 1.0),
    // function Owen_value, section Examples: the 3-player cost game c = (1, 1, 2, 1, 2, 2, 2) over the coalitions
    // {1}, {2}, {3}, {1,2}, {1,3}, {2,3}, {1,2,3}, unions {1,2} and {3}: Owen value (0.25, 0.25, 1.5), Shapley value
    // (1/3, 1/3, 4/3), as printed there. Values are linear in the game, so a cost game's are computed as any other.
    @Test
    void thePublishedThreePlayerExample() {
        double[] c = {0, 1, 1, 1, 2, 2, 2, 2}; // by bit mask: {}, {1}, {2}, {1,2}, {3}, {1,3}, {2,3}, {1,2,3}
        Game g = game(3, s -> {
            int mask = 0;
            for (int p : s.positions()) {
                mask |= 1 << p;
            }
            return c[mask];
        });
        double[] owen = OwenValues.exact(g, new int[] {0, 0, 1}).values();
        assertEquals(0.25, owen[0], 1e-12);
        assertEquals(0.25, owen[1], 1e-12);
        assertEquals(1.5, owen[2], 1e-12);
        double[] shapley = ExactShapley.values(g).values();
        assertEquals(1.0 / 3, shapley[0], 1e-12);
        assertEquals(1.0 / 3, shapley[1], 1e-12);
        assertEquals(4.0 / 3, shapley[2], 1e-12);
    }

    // The quotient-game property: the Owen values of a union's members sum to the union's Shapley value in the game
    // played between unions.
    @Test
    void unionsGetTheirShapleyValueInTheGameBetweenUnions() {
        Game g = synthetic();
        int[] unionOf = {0, 0, 1, 1, 2, 2};
        double[] owen = OwenValues.exact(g, unionOf).values();
        Game quotient = game(3, h -> {
            RegionSet s = RegionSet.empty(6);
            for (int i = 0; i < 6; i++) {
                if (h.contains(unionOf[i])) {
                    s = s.with(i);
                }
            }
            return g.worth(s);
        });
        double[] q = ExactShapley.values(quotient).values();
        for (int u = 0; u < 3; u++) {
            assertEquals(q[u], owen[2 * u] + owen[2 * u + 1], 1e-12, "union " + u);
        }
    }

    @Test
    void sampledOwenValuesCoverTheExactOnes() {
        Game g = synthetic();
        int[] unionOf = {0, 0, 1, 1, 2, 2};
        double[] exact = OwenValues.exact(g, unionOf).values();
        int covered = 0;
        int total = 0;
        for (int r = 0; r < 200; r++) {
            PermutationShapley.Sampler s = OwenValues.sampler(g, unionOf, r % 2 == 0, 40 + r);
            s.draw(40);
            Estimate e = s.estimate();
            for (int i = 0; i < exact.length; i++) {
                covered += Math.abs(e.value(i) - exact[i]) <= e.halfWidth(i) + 1e-12 ? 1 : 0;
                total++;
            }
        }
        double coverage = (double) covered / total;
        assertTrue(coverage >= 0.92 && coverage <= 0.99, "coverage " + coverage);
    }
}
