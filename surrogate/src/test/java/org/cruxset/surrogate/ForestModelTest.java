package org.cruxset.surrogate;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;

class ForestModelTest {
    static final int D = 12;

    /** A score with an interaction a single first-order model cannot express: an AND of regions 0 and 1. */
    static double score(RegionSet s) {
        double v = 0.9 - 0.05 * (s.contains(2) ? 1 : 0) - 0.05 * (s.contains(3) ? 1 : 0);
        return s.contains(0) && s.contains(1) ? v - 0.5 : v;
    }

    static RegionSet random(SplittableRandom rng) {
        List<Integer> pos = new ArrayList<>();
        for (int i = 0; i < D; i++) {
            if (rng.nextBoolean()) {
                pos.add(i);
            }
        }
        return RegionSet.of(D, pos.stream().mapToInt(Integer::intValue).toArray());
    }

    @Test
    void learnsAnInteractionAndItsMembersAreItsDraws() {
        SplittableRandom rng = new SplittableRandom(5);
        List<RegionSet> train = new ArrayList<>();
        double[] y = new double[200];
        for (int i = 0; i < y.length; i++) {
            RegionSet s = random(rng);
            train.add(s);
            y[i] = score(s) + 0.01 * rng.nextGaussian();
        }
        ForestModel forest = new ForestModel(D, 30, 6, 0.7, 3);
        forest.fit(train, y);
        List<RegionSet> test = new ArrayList<>();
        double[] actual = new double[300];
        for (int i = 0; i < actual.length; i++) {
            RegionSet s = random(rng);
            test.add(s);
            actual[i] = score(s);
        }
        SurrogateModel.Prediction p = forest.predict(test);
        Quality q = Quality.of(p, actual);
        assertTrue(q.r2() > 0.9, "R² " + q.r2());
        assertTrue(q.spearman() > 0.8, "Spearman " + q.spearman());
        // The prediction is the mean of the members, each a draw.
        double[] mean = new double[test.size()];
        for (int k = 0; k < 30; k++) {
            double[] d = forest.draw(test, k);
            for (int i = 0; i < mean.length; i++) {
                mean[i] += d[i] / 30;
            }
        }
        assertArrayEquals(p.mean(), mean, 1e-9);
        // Seeded: a second forest fitted the same way predicts the same.
        ForestModel again = new ForestModel(D, 30, 6, 0.7, 3);
        again.fit(train, y);
        assertArrayEquals(p.mean(), again.predict(test).mean(), 0);
        assertTrue(forest.describe().contains("30 trees"), forest.describe());
    }

    @Test
    void qualityOfKnownPredictions() {
        // R² = 1 − SSE/SST by hand: actual (1, 2, 3, 4), predicted (1, 2, 3, 5): SSE 1, SST 5, R² 0.8.
        SurrogateModel.Prediction p = new SurrogateModel.Prediction(new double[] {1, 2, 3, 5},
                new double[] {0.1, 0.1, 0.1, 0.4});
        Quality q = Quality.of(p, new double[] {1, 2, 3, 4});
        assertEquals(0.8, q.r2(), 1e-12);
        assertEquals(1.0, q.spearman(), 1e-12);
        // |4 − 5| = 1 > 1.96 × 0.4: three of four inside.
        assertEquals(0.75, q.coverage(), 1e-12);
        assertTrue(Double.isNaN(Quality.of(p, new double[] {2, 2, 2, 2}).r2()));
    }

    @Test
    void additiveDrawsCentreOnTheFit() {
        SplittableRandom rng = new SplittableRandom(9);
        List<RegionSet> train = new ArrayList<>();
        double[] y = new double[150];
        for (int i = 0; i < y.length; i++) {
            RegionSet s = random(rng);
            train.add(s);
            y[i] = score(s) + 0.02 * rng.nextGaussian();
        }
        AdditiveModel m = new AdditiveModel(D, 1.0);
        m.fit(train, y);
        List<RegionSet> one = List.of(RegionSet.of(D, 4, 5));
        double mean = m.predict(one).mean()[0];
        double sum = 0;
        for (int k = 0; k < 400; k++) {
            sum += m.draw(one, k)[0];
        }
        assertEquals(mean, sum / 400, 0.02);
        assertEquals(m.draw(one, 7)[0], m.draw(one, 7)[0], 0);
    }
}
