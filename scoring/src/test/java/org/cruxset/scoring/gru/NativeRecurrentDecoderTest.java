package org.cruxset.scoring.gru;

import org.cruxset.scoring.testing.RandomModels;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.NativeRecurrentDecoder.Mode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class NativeRecurrentDecoderTest {
    static final int N = 9;
    static final int K = 4;

    @TempDir
    Path dir;

    /** A replacement that is a deterministic function of (sample, region, t). */
    static final LesionFill WAVE = new LesionFill() {
        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            for (int t = 0; t < batch.length(sample); t++) {
                out[t] = (float) (0.9 * Math.sin(0.37 * t + 1.3 * sample + 0.71 * region) + 0.05 * region);
            }
        }

        @Override
        public String toString() {
            return "wave";
        }
    };

    /** A replacement equal to the input for even regions (so no correction is needed there), a constant elsewhere. */
    static final LesionFill SAME_ON_EVEN = new LesionFill() {
        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            float[] x = batch.series(sample);
            for (int t = 0; t < batch.length(sample); t++) {
                out[t] = region % 2 == 0 ? x[t * batch.regions() + region] : 0.25f * (1 + sample % 3);
            }
        }

        @Override
        public String toString() {
            return "same-on-even";
        }
    };

    record Config(int[] hidden, boolean[] lbr) {
        @Override
        public String toString() {
            return java.util.Arrays.toString(hidden) + " lbr " + java.util.Arrays.toString(lbr);
        }
    }

    static List<Config> configs() {
        return List.of(new Config(new int[] {12}, new boolean[] {true}), new Config(new int[] {12}, new boolean[] {false}),
                new Config(new int[] {10, 7}, new boolean[] {true, true}),
                new Config(new int[] {11, 6}, new boolean[] {false, false}),
                new Config(new int[] {5, 13}, new boolean[] {false, true}));
    }

    static GruNetwork randomNetwork(Random rng, int inputs, int[] hidden, boolean[] lbr, int classes, double scale) {
        return RandomModels.randomNetwork(rng, inputs, hidden, lbr, classes, scale);
    }

    /** A batch of standard normal samples of lengths 1..40; region 4 is all zeros in every sample. */
    static InputBatch randomBatch(Random rng, int samples) {
        float[][] series = new float[samples][];
        int[] lengths = new int[samples];
        for (int s = 0; s < samples; s++) {
            lengths[s] = s < 2 ? (s == 0 ? 1 : 40) : 1 + rng.nextInt(40);
            series[s] = new float[lengths[s] * N];
            for (int i = 0; i < series[s].length; i++) {
                series[s][i] = i % N == 4 ? 0f : (float) rng.nextGaussian();
            }
        }
        return InputBatch.of(N, series, lengths);
    }

    static ModelCard card(GruNetwork net) {
        List<String> labels = new ArrayList<>();
        for (int k = 0; k < net.classes(); k++) {
            labels.add("c" + k);
        }
        return new ModelCard(net.inputs(), List.of(), labels, Preprocessing.NONE, "native", "test", "0", Map.of());
    }

    static List<InputMask> masks(LesionFill fill) {
        List<InputMask> m = new ArrayList<>();
        m.add(new InputMask(RegionSet.empty(N), fill));
        m.add(new InputMask(RegionSet.of(N, 0), fill));
        m.add(new InputMask(RegionSet.of(N, 4), fill));
        m.add(new InputMask(RegionSet.of(N, 2, 5), fill));
        m.add(new InputMask(RegionSet.of(N, 1, 3, 4, 6, 8), fill));
        m.add(new InputMask(RegionSet.of(N, 0, 1, 2, 3, 5, 6, 7), fill));
        m.add(new InputMask(RegionSet.all(N), fill));
        return m;
    }

    static double maxAbsDiff(float[][][] a, float[][][] b) {
        double max = 0;
        for (int m = 0; m < a.length; m++) {
            for (int s = 0; s < a[m].length; s++) {
                assertEquals(a[m][s].length, b[m][s].length);
                for (int k = 0; k < a[m][s].length; k++) {
                    max = Math.max(max, Math.abs(a[m][s][k] - b[m][s][k]));
                }
            }
        }
        return max;
    }

    @Test
    void incrementalAgreesWithThePlainPath() {
        Random rng = new Random(41);
        double worst = 0;
        for (Config c : configs()) {
            GruNetwork net = randomNetwork(rng, N, c.hidden(), c.lbr(), K, 0.8);
            NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card(net));
            // 70 samples: two blocks, each with a tail of fewer than four rows.
            InputBatch batch = randomBatch(rng, 70);
            for (LesionFill fill : List.of(LesionFill.ZERO, WAVE, SAME_ON_EVEN)) {
                List<InputMask> masks = masks(fill);
                float[][][] plain = dec.bind(batch, Mode.PLAIN).probabilities(masks, 2);
                float[][][] inc = dec.bind(batch, Mode.INCREMENTAL).probabilities(masks, 2);
                float[][][] auto = dec.bind(batch).probabilities(masks, 2);
                double d = maxAbsDiff(inc, plain);
                double a = maxAbsDiff(auto, plain);
                worst = Math.max(worst, Math.max(d, a));
                assertTrue(d <= 1e-5, c + " fill " + fill + ": incremental vs plain " + d);
                assertTrue(a <= 1e-5, c + " fill " + fill + ": auto vs plain " + a);
            }
        }
        System.out.printf("incremental vs plain: max |diff| %.3g%n", worst);
    }

    @Test
    void plainPathMatchesMaskApplyPerSample() {
        Random rng = new Random(43);
        for (Config c : configs()) {
            GruNetwork net = randomNetwork(rng, N, c.hidden(), c.lbr(), K, 0.8);
            NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card(net));
            InputBatch batch = randomBatch(rng, 11);
            List<InputMask> masks = masks(WAVE);
            float[][][] p = dec.bind(batch).probabilities(masks, 1);
            for (int m = 0; m < masks.size(); m++) {
                for (int s = 0; s < batch.size(); s++) {
                    float[] x = new float[batch.series(s).length];
                    masks.get(m).apply(batch, s, x);
                    assertArrayEquals(dec.probabilities(x, batch.length(s)), p[m][s], 1e-5f, c + " mask " + m + " sample " + s);
                }
            }
        }
    }

    @Test
    void resultsDoNotDependOnThreadsOrCacheLimit() {
        Random rng = new Random(47);
        GruNetwork net = randomNetwork(rng, N, new int[] {14, 9}, new boolean[] {true, false}, K, 0.8);
        InputBatch batch = randomBatch(rng, 150);
        List<InputMask> masks = masks(WAVE);
        NativeRecurrentDecoder cached = new NativeRecurrentDecoder(net, card(net));
        NativeRecurrentDecoder uncached = new NativeRecurrentDecoder(net, card(net), 0);
        assertTrue(cached.cachesProjections(batch));
        assertFalse(uncached.cachesProjections(batch));
        long steps = 0;
        for (int s = 0; s < batch.size(); s++) {
            steps += batch.length(s);
        }
        assertEquals(4L * 3 * 14 * steps, cached.projectionCacheBytes(batch));
        Decoder.Bound bound = cached.bind(batch);
        float[][][] one = bound.probabilities(masks, 1);
        float[][][] three = bound.probabilities(masks, 3);
        assertEquals(0.0, maxAbsDiff(one, three), "thread count changed the result");
        float[][][] fallback = uncached.bind(batch).probabilities(masks, 2);
        float[][][] plain = cached.bind(batch, Mode.PLAIN).probabilities(masks, 2);
        assertEquals(0.0, maxAbsDiff(fallback, plain), "the fallback is the plain path");
        assertTrue(maxAbsDiff(one, plain) <= 1e-5);
    }

    @Test
    void cacheLimitComesFromTheSystemProperty() {
        GruNetwork net = randomNetwork(new Random(67), N, new int[] {4}, new boolean[] {true}, K, 0.8);
        String saved = System.getProperty(NativeRecurrentDecoder.CACHE_PROPERTY);
        try {
            System.clearProperty(NativeRecurrentDecoder.CACHE_PROPERTY);
            assertEquals(NativeRecurrentDecoder.DEFAULT_CACHE_MB, new NativeRecurrentDecoder(net, card(net)).projectionCacheLimitMB());
            System.setProperty(NativeRecurrentDecoder.CACHE_PROPERTY, " 7 ");
            assertEquals(7, new NativeRecurrentDecoder(net, card(net)).projectionCacheLimitMB());
            System.setProperty(NativeRecurrentDecoder.CACHE_PROPERTY, "lots");
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> new NativeRecurrentDecoder(net, card(net)));
            assertTrue(e.getMessage().contains(NativeRecurrentDecoder.CACHE_PROPERTY), e.getMessage());
            assertThrows(IllegalArgumentException.class, () -> new NativeRecurrentDecoder(net, card(net), -1));
        } finally {
            if (saved == null) {
                System.clearProperty(NativeRecurrentDecoder.CACHE_PROPERTY);
            } else {
                System.setProperty(NativeRecurrentDecoder.CACHE_PROPERTY, saved);
            }
        }
    }

    @Test
    void concurrentCallsOnOneBoundBatchAgree() throws Exception {
        Random rng = new Random(53);
        GruNetwork net = randomNetwork(rng, N, new int[] {12}, new boolean[] {true}, K, 0.8);
        NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card(net));
        InputBatch batch = randomBatch(rng, 40);
        Decoder.Bound bound = dec.bind(batch);
        List<InputMask> masks = masks(LesionFill.ZERO);
        float[][][][] results = new float[4][][][];
        Thread[] threads = new Thread[results.length];
        for (int i = 0; i < threads.length; i++) {
            int k = i;
            threads[i] = new Thread(() -> results[k] = bound.probabilities(masks, 2));
            threads[i].start();
        }
        for (Thread t : threads) {
            t.join();
        }
        for (float[][][] r : results) {
            assertEquals(0.0, maxAbsDiff(results[0], r));
        }
    }

    @Test
    void refusesMasksBeyondTheModelsRegions() {
        Random rng = new Random(59);
        GruNetwork net = randomNetwork(rng, N, new int[] {4}, new boolean[] {true}, K, 0.8);
        NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card(net));
        InputBatch batch = randomBatch(rng, 3);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> dec.bind(batch).probabilities(List.of(InputMask.zero(RegionSet.of(N + 2, N + 1))), 1));
        assertTrue(e.getMessage().contains("region position 10"), e.getMessage());
    }

    @Test
    void activationsAreCloseToTheExactFunctions() {
        double t = 0;
        double s = 0;
        for (double v = -30; v <= 30; v += 1e-3) {
            float f = (float) v;
            t = Math.max(t, Math.abs(org.cruxset.scoring.kernel.Activations.tanh(f) - Math.tanh(f)));
            s = Math.max(s, Math.abs(org.cruxset.scoring.kernel.Activations.sigmoid(f) - 1 / (1 + Math.exp(-(double) f))));
        }
        assertTrue(t < 5e-7, "tanh error " + t);
        assertTrue(s < 5e-7, "sigmoid error " + s);
        assertEquals(1f, org.cruxset.scoring.kernel.Activations.tanh(Float.POSITIVE_INFINITY), 1e-6f);
        assertEquals(0f, org.cruxset.scoring.kernel.Activations.sigmoid(Float.NEGATIVE_INFINITY), 1e-6f);
    }

    @Test
    void agreesWithOnnxRuntimeUnderMasks() throws Exception {
        // Source: ONNX GRU operator specification; ONNX Runtime as the reference implementation
        Random rng = new Random(61);
        double worst = 0;
        int index = 0;
        for (Config c : configs()) {
            GruNetwork net = randomNetwork(rng, N, c.hidden(), c.lbr(), K, 0.8);
            List<String> labels = card(net).classLabels();
            Path file = dir.resolve("model" + index++ + ".onnx");
            Files.write(file, OnnxGruWriter.write(net, List.of(), labels, Preprocessing.NONE, Map.of()));
            InputBatch batch = randomBatch(rng, 23);
            try (Decoder nat = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.NATIVE));
                 Decoder ort = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME))) {
                assertTrue(nat instanceof NativeRecurrentDecoder);
                for (LesionFill fill : List.of(LesionFill.ZERO, WAVE)) {
                    List<InputMask> masks = masks(fill);
                    float[][][] pn = nat.bind(batch).probabilities(masks, 2);
                    float[][][] po = ort.bind(batch).probabilities(masks, 2);
                    double d = maxAbsDiff(pn, po);
                    worst = Math.max(worst, d);
                    assertTrue(d <= 1e-4, c + " fill " + fill + ": native vs ONNX Runtime " + d);
                }
            }
        }
        System.out.printf("native vs ONNX Runtime under masks: max |diff| %.3g%n", worst);
    }
}
