package org.cruxset.scoring.testing;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;

/** Random networks, batches, atlases and samples for tests of every module (shared through the test-jar). */
public final class RandomModels {
    private RandomModels() {
    }

    /** A random network with weights uniform in [-scale, scale] (readout in [-2·scale, 2·scale]). */
    public static GruNetwork randomNetwork(Random rng, int inputs, int[] hidden, boolean[] lbr, int classes, double scale) {
        List<GruLayer> layers = new ArrayList<>();
        int in = inputs;
        for (int i = 0; i < hidden.length; i++) {
            int h = hidden[i];
            layers.add(new GruLayer(in, h, uniform(rng, 3 * h * in, scale), uniform(rng, 3 * h * h, scale),
                    uniform(rng, 3 * h, scale), uniform(rng, 3 * h, scale), lbr[i]));
            in = h;
        }
        return new GruNetwork(layers, classes, uniform(rng, classes * in, 2 * scale), uniform(rng, classes, scale));
    }

    /** {@code n} values uniform in [-scale, scale]. */
    public static float[] uniform(Random rng, int n, double scale) {
        float[] v = new float[n];
        for (int i = 0; i < n; i++) {
            v[i] = (float) ((2 * rng.nextDouble() - 1) * scale);
        }
        return v;
    }

    /** A batch of standard normal samples with the given lengths. */
    public static InputBatch randomBatch(Random rng, int regions, int[] lengths) {
        float[][] series = new float[lengths.length][];
        for (int s = 0; s < lengths.length; s++) {
            series[s] = new float[lengths[s] * regions];
            for (int i = 0; i < series[s].length; i++) {
                series[s][i] = (float) rng.nextGaussian();
            }
        }
        return InputBatch.of(regions, series, lengths);
    }

    /** An atlas of {@code n} regions {@code r00, r01, ...} in networks of {@code perNetwork} regions. */
    public static Atlas atlas(int n, int perNetwork) {
        List<Region> regions = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            regions.add(new Region(i, String.format("r%02d", i), "net" + (i / perNetwork)));
        }
        return Atlas.of(regions);
    }

    /** Test-split samples with random lengths in [minLength, maxLength], labels cycling over {@code classes}, 4 subjects. */
    public static List<Sample> samples(Random rng, int count, int regions, int minLength, int maxLength, List<String> classes) {
        List<Sample> out = new ArrayList<>();
        for (int s = 0; s < count; s++) {
            int len = minLength + rng.nextInt(maxLength - minLength + 1);
            float[] v = new float[len * regions];
            for (int i = 0; i < v.length; i++) {
                v[i] = (float) rng.nextGaussian();
            }
            out.add(new Sample("s" + s, "sub" + (s % 4), classes.get(s % classes.size()), Split.TEST, len, regions, v));
        }
        return out;
    }

    /** A card for a network over {@code atlas}, with the given model hash. */
    public static ModelCard card(GruNetwork net, Atlas atlas, List<String> classes, String hash) {
        return new ModelCard(net.inputs(), atlas.names(), classes, Preprocessing.NONE, "native", "test", hash, Map.of());
    }
}
