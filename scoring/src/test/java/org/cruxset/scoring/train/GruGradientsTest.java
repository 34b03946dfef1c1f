package org.cruxset.scoring.train;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.junit.jupiter.api.Test;

class GruGradientsTest {

    private static float[] randomInput(SplittableRandom rng, int length, int inputs) {
        float[] x = new float[length * inputs];
        for (int i = 0; i < x.length; i++) {
            x[i] = (float) (rng.nextGaussian());
        }
        return x;
    }

    private static double loss(GruParameters p, float[] x, int len, int label) {
        GruGradients g = new GruGradients(p, len);
        g.refresh();
        return -Math.log(g.forward(x, len)[label]);
    }

    // Source: central finite differences (analytic result: the error of a central difference is O(eps^2)).
    @Test
    void backpropagationThroughTimeMatchesCentralDifferences() {
        SplittableRandom rng = new SplittableRandom(7);
        for (int[] hiddens : new int[][] {{4}, {4, 3}}) {
            GruParameters p = new GruParameters(3, hiddens, 3);
            p.initialise(new SplittableRandom(11));
            // larger weights so that gates are away from their linear regime
            for (int i = 0; i < p.count(); i++) {
                p.values()[i] *= 2.5;
            }
            int len = 6;
            float[] x = randomInput(rng, len, 3);
            int label = 2;
            GruGradients g = new GruGradients(p, len);
            g.refresh();
            g.forward(x, len);
            double[] grad = new double[p.count()];
            double l0 = g.backward(x, len, label, grad);
            assertEquals(loss(p, x, len, label), l0, 1e-12);
            double eps = 1e-6;
            double worst = 0;
            for (int i = 0; i < p.count(); i++) {
                double keep = p.values()[i];
                p.values()[i] = keep + eps;
                double lp = loss(p, x, len, label);
                p.values()[i] = keep - eps;
                double lm = loss(p, x, len, label);
                p.values()[i] = keep;
                double numeric = (lp - lm) / (2 * eps);
                double rel = Math.abs(numeric - grad[i]) / Math.max(Math.abs(numeric) + Math.abs(grad[i]), 1e-7);
                worst = Math.max(worst, rel);
            }
            assertTrue(worst <= 1e-3, "worst relative gradient error " + worst + " for layers " + hiddens.length);
        }
    }

    @Test
    void doublePrecisionForwardAgreesWithTheNativeEngine() {
        SplittableRandom rng = new SplittableRandom(3);
        GruParameters p = new GruParameters(5, new int[] {6, 4}, 3);
        p.initialise(new SplittableRandom(5));
        var net = p.toNetwork();
        var card = new ModelCard(5, java.util.List.of(), java.util.List.of("a", "b", "c"), Preprocessing.NONE,
                "native", "test", "0", java.util.Map.of());
        NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card);
        float[][] series = new float[3][];
        int[] lengths = {1, 7, 13};
        for (int s = 0; s < 3; s++) {
            series[s] = randomInput(rng, lengths[s], 5);
        }
        float[][][] out = dec.bind(InputBatch.of(5, series, lengths)).probabilities(java.util.List.of(InputMask.none(5)), 2);
        GruGradients g = new GruGradients(p, 13);
        g.refresh();
        for (int s = 0; s < 3; s++) {
            double[] ref = g.forward(series[s], lengths[s]);
            float[] refF = new float[ref.length];
            for (int k = 0; k < ref.length; k++) {
                refF[k] = (float) ref[k];
            }
            assertArrayEquals(refF, out[0][s], 1e-5f);
        }
    }
}
