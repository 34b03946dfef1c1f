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
