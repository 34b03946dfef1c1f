package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class HypervolumeTest {
    // Source: analytic result: the union of rectangles [x_i, 1] × [y_i, 1] for a staircase of points.
    @Test
    void staircaseAreaIsTheSumOfItsSlabs() {
        double[][] pts = {{0.2, 0.8}, {0.5, 0.4}, {0.9, 0.1}};
        // slabs: [0.2,0.5]×0.2 + [0.5,0.9]×0.6 + [0.9,1]×0.9 = 0.06 + 0.24 + 0.09
        assertEquals(0.39, Hypervolume.of(pts, 1, 1), 1e-12);
    }

    @Test
    void dominatedAndOutsidePointsAddNothing() {
        double[][] pts = {{0.2, 0.8}, {0.3, 0.9}, {0.5, 0.4}, {0.9, 0.1}, {1.2, 0.0}, {0.95, 0.2}};
        assertEquals(0.39, Hypervolume.of(pts, 1, 1), 1e-12);
        assertEquals(0.0, Hypervolume.of(new double[0][], 1, 1), 0.0);
    }

    // Source: analytic result: the ZDT1 Pareto front f2 = 1 - sqrt(f1) (Zitzler, Deb & Thiele 2000) dominates
    // 1 - integral_0^1 (1 - sqrt(x)) dx = 1 - 1/3 = 2/3 of the unit square.
    @Test
    void aDenseSampleOfTheZdt1FrontApproachesTwoThirds() {
        int n = 10_000;
        double[][] pts = new double[n + 1][];
        for (int i = 0; i <= n; i++) {
            double x = (double) i / n;
            pts[i] = new double[] {x, 1 - Math.sqrt(x)};
        }
        assertEquals(2.0 / 3, Hypervolume.of(pts, 1, 1), 1e-3);
    }
}
