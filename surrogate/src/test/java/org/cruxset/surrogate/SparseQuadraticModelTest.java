package org.cruxset.surrogate;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;
import org.apache.commons.math3.stat.correlation.SpearmansCorrelation;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;

class SparseQuadraticModelTest {
    static final int D = 10;

    static RegionSet input(int bits) {
        List<Integer> pos = new ArrayList<>();
        for (int i = 0; i < D; i++) {
            if ((bits >> i & 1) == 1) {
                pos.add(i);
            }
        }
        return RegionSet.of(D, pos.stream().mapToInt(Integer::intValue).toArray());
    }

    @Test
    void featuresIndexEveryPairOnce() {
        QuadraticFeatures f = QuadraticFeatures.full(D);
        assertEquals(55, f.size());
        Set<String> names = new HashSet<>();
        for (int k = 0; k < f.size(); k++) {
            assertTrue(names.add(f.name(k)), f.name(k));
        }
        double[] x = f.of(RegionSet.of(D, 2, 7, 9));
        int ones = 0;
        for (int k = 0; k < x.length; k++) {
            if (x[k] == 1) {
                ones++;
                String n = f.name(k);
                assertTrue(List.of("2", "7", "9", "2×7", "2×9", "7×9").contains(n), n);
            }
        }
        assertEquals(6, ones);
    }

    // Source: our own sparse quadratic benchmark of binary inputs, as the surrogate issue states it: d = 10, 8 non-zero
    // coefficients among the 55 first- and second-order terms, each ±U[1, 2] (seeded), noise sigma 0.1, 100 inputs.
    @Test
    void recoversASparseQuadraticFunctionAndRanksTheUnusedInputs() {
        SplittableRandom rng = new SplittableRandom(2024);
        QuadraticFeatures f = QuadraticFeatures.full(D);
        double[] truth = new double[f.size()];
        Set<Integer> chosen = new HashSet<>();
        while (chosen.size() < 8) {
            chosen.add(rng.nextInt(f.size()));
        }
        double largest = 0;
        for (int k : chosen) {
            truth[k] = (rng.nextBoolean() ? 1 : -1) * (1 + rng.nextDouble());
            largest = Math.max(largest, Math.abs(truth[k]));
        }
        List<Integer> order = new ArrayList<>();
        for (int b = 0; b < 1 << D; b++) {
            order.add(b);
        }
        java.util.Collections.shuffle(order, new java.util.Random(7));
        List<RegionSet> train = new ArrayList<>();
        double[] y = new double[100];
        for (int i = 0; i < 100; i++) {
            RegionSet s = input(order.get(i));
            train.add(s);
            y[i] = value(f, truth, s) + 0.1 * rng.nextGaussian();
        }
        SparseQuadraticModel model = new SparseQuadraticModel(f, 500, 1000, 11);
        model.fit(train, y);
        double[] beta = model.coefficients();
        double se = 0;
        for (int k = 0; k < beta.length; k++) {
            se += (beta[k] - truth[k]) * (beta[k] - truth[k]);
        }
        double rmse = Math.sqrt(se / beta.length);
        List<RegionSet> unused = new ArrayList<>();
        for (int i = 100; i < order.size(); i++) {
            unused.add(input(order.get(i)));
        }
        assertEquals(924, unused.size());
        double[] predicted = model.predict(unused).mean();
        double[] actual = new double[unused.size()];
        for (int i = 0; i < actual.length; i++) {
            actual[i] = value(f, truth, unused.get(i));
        }
        double rho = new SpearmansCorrelation().correlation(predicted, actual);
        System.out.printf("sparse quadratic: coefficient RMSE %.4f (%.3f of the largest), Spearman rho on 924 unused "
                + "inputs %.4f; %s%n", rmse, rmse / largest, rho, model.describe());
        assertTrue(rmse <= 0.1 * largest, "RMSE " + rmse + " above 0.1 x " + largest);
        assertTrue(rho >= 0.9, "Spearman rho " + rho);
    }

    @Test
    void theSameSeedGivesTheSameDraws() {
        QuadraticFeatures f = QuadraticFeatures.full(4);
        List<RegionSet> sets = List.of(RegionSet.of(4, 0), RegionSet.of(4, 1, 2), RegionSet.of(4, 3), RegionSet.of(4),
                RegionSet.of(4, 0, 3), RegionSet.of(4, 1, 2, 3));
        double[] y = {1, 2, 0.5, 0, 1.5, 2.5};
        SparseQuadraticModel a = new SparseQuadraticModel(f, 50, 100, 3);
        SparseQuadraticModel b = new SparseQuadraticModel(f, 50, 100, 3);
        a.fit(sets, y);
        b.fit(sets, y);
        assertEquals(java.util.Arrays.toString(a.coefficients()), java.util.Arrays.toString(b.coefficients()));
        assertEquals(java.util.Arrays.toString(a.draw(sets, 7)), java.util.Arrays.toString(b.draw(sets, 7)));
    }

    static int[] all(int n) {
        int[] a = new int[n];
        for (int i = 0; i < n; i++) {
            a[i] = i;
        }
        return a;
    }

    static double value(QuadraticFeatures f, double[] beta, RegionSet s) {
        double[] x = f.of(s);
        double v = 0;
        for (int k = 0; k < x.length; k++) {
            v += x[k] * beta[k];
        }
        return v;
    }
}
