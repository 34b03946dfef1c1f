package org.cruxset.surrogate;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.commons.math3.stat.regression.OLSMultipleLinearRegression;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;

class AdditiveModelTest {
    // Source: Apache Commons Math OLSMultipleLinearRegression as the reference least-squares fit (a vanishing ridge
    // gives the ordinary least-squares effects).
    @Test
    void aVanishingRidgeGivesTheLeastSquaresEffectsAndIntervalsCoverTheNoise() {
        int n = 8;
        SplittableRandom rng = new SplittableRandom(5);
        double[] effect = new double[n];
        for (int j = 0; j < n; j++) {
            effect[j] = rng.nextDouble() * 2 - 1;
        }
        List<RegionSet> sets = new ArrayList<>();
        double[] y = new double[120];
        double[][] x = new double[120][n];
        for (int i = 0; i < y.length; i++) {
            List<Integer> pos = new ArrayList<>();
            for (int j = 0; j < n; j++) {
                if (rng.nextBoolean()) {
                    pos.add(j);
                    x[i][j] = 1;
                }
            }
            RegionSet s = RegionSet.of(n, pos.stream().mapToInt(Integer::intValue).toArray());
            sets.add(s);
            double v = 0.5;
            for (int p : pos) {
                v += effect[p];
            }
            y[i] = v + 0.05 * rng.nextGaussian();
        }
        AdditiveModel model = new AdditiveModel(n, 1e-9);
        model.fit(sets, y);
        OLSMultipleLinearRegression ols = new OLSMultipleLinearRegression();
        ols.newSampleData(y, x);
        double[] ref = ols.estimateRegressionParameters();
        double[] got = model.effects();
        for (int j = 0; j < n; j++) {
            assertEquals(ref[j + 1], got[j], 1e-6, "effect " + j);
        }
        // Predictive intervals: about 95% of fresh noisy scores fall within ±1.96 sd.
        int inside = 0;
        List<RegionSet> fresh = new ArrayList<>();
        double[] truth = new double[400];
        for (int i = 0; i < truth.length; i++) {
            List<Integer> pos = new ArrayList<>();
            double v = 0.5;
            for (int j = 0; j < n; j++) {
                if (rng.nextBoolean()) {
                    pos.add(j);
                    v += effect[j];
                }
            }
            fresh.add(RegionSet.of(n, pos.stream().mapToInt(Integer::intValue).toArray()));
            truth[i] = v + 0.05 * rng.nextGaussian();
        }
        SurrogateModel.Prediction pr = model.predict(fresh);
        for (int i = 0; i < truth.length; i++) {
            if (Math.abs(truth[i] - pr.mean()[i]) <= 1.96 * pr.sd()[i]) {
                inside++;
            }
        }
        assertTrue(inside >= 360 && inside <= 396, inside + " of 400 inside the 95% predictive intervals");
    }
}
