package org.cruxset.scoring.train;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.cruxset.scoring.gru.GruNetwork;
import org.junit.jupiter.api.Test;

class GruTrainerTest {

    /** Two classes told apart by the sign of a level in input 0, other inputs noise, lengths 3..12. */
    static GruTrainer.Data data(long seed, int n) {
        SplittableRandom rng = new SplittableRandom(seed);
        float[][] series = new float[n][];
        int[] lengths = new int[n];
        int[] labels = new int[n];
        for (int s = 0; s < n; s++) {
            int len = 3 + rng.nextInt(10);
            labels[s] = s % 2;
            lengths[s] = len;
            series[s] = new float[len * 4];
            for (int t = 0; t < len; t++) {
                for (int r = 0; r < 4; r++) {
                    series[s][t * 4 + r] = (float) rng.nextGaussian() + (r == 0 ? (labels[s] == 0 ? -1f : 1f) : 0f);
                }
            }
        }
        return new GruTrainer.Data(4, series, lengths, labels);
    }

    private static TrainingResult train(int threads) {
        TrainingConfig cfg = new TrainingConfig(6, 1, 15, 16, 0.01, 1e-4, 5.0, 15, 99L, threads);
        return new GruTrainer(cfg).train(data(1, 160), data(2, 60), 2, null);
    }

    @Test
    void sameSeedSameNetworkWhateverTheThreadCount() {
        GruNetwork a = train(1).network();
        GruNetwork b = train(3).network();
        assertEquals(a.layers(), a.layers());
        for (int l = 0; l < a.layers().size(); l++) {
            assertArrayEquals(a.layers().get(l).w(), b.layers().get(l).w());
            assertArrayEquals(a.layers().get(l).r(), b.layers().get(l).r());
        }
        assertArrayEquals(a.readout(), b.readout());
    }

    @Test
    void learnsAnEasyProblemAndKeepsTheBestEpoch() {
        TrainingResult r = train(2);
        TrainingResult.Epoch best = r.epochs().get(r.bestEpoch() - 1);
        for (TrainingResult.Epoch e : r.epochs()) {
            assertTrue(best.validationLoss() <= e.validationLoss());
        }
        assertTrue(best.validationAccuracy() >= 0.9, "validation accuracy " + best.validationAccuracy());
        assertTrue(r.epochs().get(0).trainLoss() > r.epochs().get(r.epochs().size() - 1).trainLoss());
    }
}
