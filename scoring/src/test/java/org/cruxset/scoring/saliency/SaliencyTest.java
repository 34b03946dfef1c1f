package org.cruxset.scoring.saliency;

import static org.cruxset.scoring.testing.RandomModels.randomBatch;
import static org.cruxset.scoring.testing.RandomModels.randomNetwork;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.train.GruGradients;
import org.cruxset.scoring.train.GruParameters;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Input gradients against finite differences, integrated-gradient completeness, and the ONNX Runtime path. */
class SaliencyTest {
    private static final int N = 7;
    private static final int K = 4;

    /** Every GRU form the native engine runs: both gate forms, one and two layers. */
    private record Form(int[] hidden, boolean[] lbr) {
        @Override
        public String toString() {
            return Arrays.toString(hidden) + " linear_before_reset " + Arrays.toString(lbr);
        }
    }

    private static List<Form> forms() {
        return List.of(new Form(new int[] {6}, new boolean[] {false}), new Form(new int[] {6}, new boolean[] {true}),
                new Form(new int[] {5, 4}, new boolean[] {false, true}), new Form(new int[] {5, 4}, new boolean[] {true, false}));
    }

    private static String labelsOf(int k) {
        return "c" + k;
    }

    // Source: central finite differences (common practice for checking gradients), of the same function the native
    // engine computes: the double-precision forward pass is first checked against the engine's outputs.
    @Test
    void inputGradientsMatchCentralDifferencesForEveryNativeForm() {
        Random rng = new Random(5);
        for (Form f : forms()) {
            GruNetwork net = randomNetwork(rng, N, f.hidden(), f.lbr(), K, 0.9);
            InputBatch batch = randomBatch(rng, N, new int[] {9});
            float[] x = batch.series(0);
            int len = batch.length(0);
            GruGradients g = new GruGradients(GruParameters.of(net), len);
            g.refresh();
            double[] p = g.forward(x, len);
            NativeRecurrentDecoder engine = new NativeRecurrentDecoder(net, org.cruxset.scoring.testing.RandomModels.card(net,
                    org.cruxset.scoring.testing.RandomModels.atlas(N, N), List.of("c0", "c1", "c2", "c3"), "h"));
            float[] pe = engine.probabilities(x, len);
            for (int k = 0; k < K; k++) {
                assertEquals(pe[k], p[k], 1e-5, f + ": the double forward pass is the engine's function");
            }
            for (boolean logProb : new boolean[] {false, true}) {
                int target = 2;
                double[] dx = new double[len * N];
                g.forward(x, len);
                g.inputGradient(x, len, target, logProb, dx);
                double scale = 0;
                for (double v : dx) {
                    scale = Math.max(scale, Math.abs(v));
                }
                double h = 1e-5;
                for (int i = 0; i < x.length; i++) {
                    float[] up = x.clone();
                    float[] down = x.clone();
                    // perturb in double through a float input: use the float values actually fed
                    up[i] = (float) (x[i] + h);
                    down[i] = (float) (x[i] - h);
                    double fd = (value(g, up, len, target, logProb) - value(g, down, len, target, logProb))
                            / ((double) up[i] - down[i]);
                    double err = Math.abs(dx[i] - fd) / Math.max(Math.abs(fd), 1e-3 * scale);
                    assertTrue(err <= 1e-3, f + (logProb ? " log-probability" : " score") + " input " + i + ": gradient "
                            + dx[i] + ", central difference " + fd);
                }
            }
        }
    }

    private static double value(GruGradients g, float[] x, int len, int target, boolean logProb) {
        double[] p = g.forward(x, len);
        return logProb ? Math.log(p[target]) : g.logits()[target];
    }

    // The float fast path against the double path, for every native form, every gradient method and both targets.
    @Test
    void theFastPathAgreesWithTheDoublePath() {
        Random rng = new Random(21);
        for (Form f : forms()) {
            GruNetwork net = randomNetwork(rng, N, f.hidden(), f.lbr(), K, 0.9);
            int[] lengths = new int[19];
            int[] targets = new int[lengths.length];
            for (int i = 0; i < lengths.length; i++) {
                lengths[i] = 3 + rng.nextInt(12);
                targets[i] = rng.nextInt(K);
            }
            InputBatch batch = randomBatch(rng, N, lengths);
            for (Saliency.Method m : List.of(Saliency.Method.GRADIENT, Saliency.Method.TIMES_INPUT,
                    Saliency.Method.INTEGRATED, Saliency.Method.SMOOTH)) {
                for (boolean logProb : new boolean[] {false, true}) {
                    Attributions slow = Saliency.gradients(net, batch, targets, LesionFill.ZERO,
                            new Saliency.Settings(m, logProb, 16, 4, 0.1, 5, 1e-2, 2, true));
                    Attributions fast = Saliency.gradients(net, batch, targets, LesionFill.ZERO,
                            new Saliency.Settings(m, logProb, 16, 4, 0.1, 5, 1e-2, 2, false));
                    for (int s = 0; s < lengths.length; s++) {
                        double scale = 0;
                        for (float v : slow.maps()[s]) {
                            scale = Math.max(scale, Math.abs(v));
                        }
                        for (int i = 0; i < slow.maps()[s].length; i++) {
                            assertEquals(slow.maps()[s][i], fast.maps()[s][i], 1e-4 * Math.max(scale, 1e-3),
                                    f + " " + m.label() + (logProb ? " log-probability" : "") + " sample " + s
                                            + " value " + i);
                        }
                    }
                }
            }
        }
    }

    // Source: the completeness axiom of integrated gradients (Sundararajan, Taly & Yan 2017): attributions sum to
    // f(x) − f(baseline), up to the Riemann sum's error.
    @org.junit.jupiter.params.ParameterizedTest(name = "double path: {0}")
    @org.junit.jupiter.params.provider.ValueSource(booleans = {true, false})
    void integratedGradientsAreCompleteAt256Steps(boolean precise) {
        Random rng = new Random(9);
        for (Form f : forms()) {
            GruNetwork net = randomNetwork(rng, N, f.hidden(), f.lbr(), K, 0.9);
            InputBatch batch = randomBatch(rng, N, new int[] {8, 12, 5});
            Attributions a = Saliency.gradients(net, batch, new int[] {0, 1, 3}, LesionFill.ZERO,
                    new Saliency.Settings(Saliency.Method.INTEGRATED, false, 256, 1, 0, 1, 1e-2, 2, precise));
            assertTrue(a.maxSampleGap() <= 0.01, f + ": largest completeness gap of a sample " + a.maxSampleGap());
            assertTrue(a.relativeCompletenessGap() <= 0.01, f + ": completeness gap " + a.relativeCompletenessGap());
        }
    }

    @Test
    void smoothGradIsSeededAndAveragesGradients() {
        Random rng = new Random(13);
        GruNetwork net = randomNetwork(rng, N, new int[] {6}, new boolean[] {true}, K, 0.9);
        InputBatch batch = randomBatch(rng, N, new int[] {8, 10});
        Saliency.Settings smooth = new Saliency.Settings(Saliency.Method.SMOOTH, false, 1, 8, 0.1, 3, 1e-2, 2, false);
        Attributions a = Saliency.gradients(net, batch, new int[] {0, 1}, LesionFill.ZERO, smooth);
        Attributions b = Saliency.gradients(net, batch, new int[] {0, 1}, LesionFill.ZERO, smooth);
        assertTrue(Arrays.equals(a.maps()[1], b.maps()[1]), "same seed, same maps");
        // With no noise SmoothGrad is the plain gradient.
        Attributions still = Saliency.gradients(net, batch, new int[] {0, 1}, LesionFill.ZERO,
                new Saliency.Settings(Saliency.Method.SMOOTH, false, 1, 3, 0.0, 3, 1e-2, 1, false));
        Attributions plain = Saliency.gradients(net, batch, new int[] {0, 1}, LesionFill.ZERO,
                new Saliency.Settings(Saliency.Method.GRADIENT, false, 1, 1, 0.0, 3, 1e-2, 1, false));
        for (int i = 0; i < plain.maps()[0].length; i++) {
            assertEquals(plain.maps()[0][i], still.maps()[0][i], 1e-6);
        }
    }

    // Source: ONNX Runtime as an independent engine: its region-level central differences (±h added to a region's
    // whole series) must equal the signed time-sum of the native engine's exact input gradient of the log-probability.
    @Test
    void onnxRuntimeDifferencesMatchTimeSummedNativeGradients(@TempDir Path dir) throws Exception {
        Random rng = new Random(17);
        int regions = 12;
        GruNetwork net = randomNetwork(rng, regions, new int[] {10}, new boolean[] {true}, K, 0.9);
        Path file = dir.resolve("m.onnx");
        Files.write(file, OnnxGruWriter.write(net, List.of(), List.of("c0", "c1", "c2", "c3"), Preprocessing.NONE, Map.of()));
        InputBatch batch = randomBatch(rng, regions, new int[] {15, 11, 20, 9});
        int[] targets = {0, 1, 2, 3};
        Attributions exact = Saliency.gradients(net, batch, targets, LesionFill.ZERO,
                new Saliency.Settings(Saliency.Method.GRADIENT, true, 1, 1, 0, 1, 1e-2, 2, false));
        try (Decoder ort = OnnxModels.load(file, OnnxOptions.defaults().withEngine(OnnxOptions.Engine.ONNXRUNTIME))) {
            Attributions fd = Saliency.differences(ort.bind(batch), batch, targets,
                    new Saliency.Settings(Saliency.Method.DIFFERENCES, true, 1, 1, 0, 1, 1e-2, 2, false));
            for (int s = 0; s < batch.size(); s++) {
                double[] a = exact.regionSums(s);
                double[] b = fd.regionSums(s);
                double num = 0;
                double den = 0;
                for (int i = 0; i < regions; i++) {
                    num += (a[i] - b[i]) * (a[i] - b[i]);
                    den += b[i] * b[i];
                }
                assertTrue(Math.sqrt(num / den) <= 1e-2, "sample " + s + ": relative error " + Math.sqrt(num / den)
                        + "\nexact " + Arrays.toString(a) + "\nfd    " + Arrays.toString(b));
                assertEquals(top(a, 5), top(b, 5), "sample " + s + ": the same top-5 regions");
            }
        }
    }

    private static List<Integer> top(double[] v, int k) {
        List<Integer> idx = new ArrayList<>();
        for (int i = 0; i < v.length; i++) {
            idx.add(i);
        }
        idx.sort((x, y) -> Double.compare(Math.abs(v[y]), Math.abs(v[x])));
        return List.copyOf(new java.util.TreeSet<>(idx.subList(0, k)));
    }
}
