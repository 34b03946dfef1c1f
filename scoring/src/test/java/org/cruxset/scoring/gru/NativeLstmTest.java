package org.cruxset.scoring.gru;

import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.K;
import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.N;
import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.SAME_ON_EVEN;
import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.WAVE;
import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.masks;
import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.maxAbsDiff;
import static org.cruxset.scoring.gru.NativeRecurrentDecoderTest.randomBatch;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
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
import org.cruxset.scoring.lstm.LstmLayer;
import org.cruxset.scoring.lstm.LstmNetwork;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.cruxset.scoring.onnx.reader.ModelReader;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The native engine on LSTM networks: against a float64 definition, its own plain path, and ONNX Runtime. */
class NativeLstmTest {
    @TempDir
    Path dir;

    static final int[][] HIDDEN = {{12}, {10, 7}, {17}};

    static LstmNetwork randomLstm(Random rng, int inputs, int[] hidden, int classes, double scale) {
        List<LstmLayer> layers = new ArrayList<>();
        int in = inputs;
        for (int h : hidden) {
            layers.add(new LstmLayer(in, h, uniform(rng, 4 * h * in, scale / Math.sqrt(in)),
                    uniform(rng, 4 * h * h, scale / Math.sqrt(h)), uniform(rng, 4 * h, scale), uniform(rng, 4 * h, scale)));
            in = h;
        }
        return new LstmNetwork(layers, classes, uniform(rng, classes * in, 1), uniform(rng, classes, 0.5));
    }

    static float[] uniform(Random rng, int n, double scale) {
        float[] v = new float[n];
        for (int i = 0; i < n; i++) {
            v[i] = (float) ((2 * rng.nextDouble() - 1) * scale);
        }
        return v;
    }

    static ModelCard card(LstmNetwork net) {
        List<String> labels = new ArrayList<>();
        for (int k = 0; k < net.classes(); k++) {
            labels.add("c" + k);
        }
        return new ModelCard(net.inputs(), List.of(), labels, Preprocessing.NONE, "native", "test", "0", Map.of());
    }

    /**
     * Class probabilities of one time-major input by the definition of the ONNX LSTM operator (default activations,
     * no peepholes), in float64 with exact nonlinearities.
     */
    // Source: ONNX operator specification, LSTM (gate order i, o, f, c; c = f*c + i*g, h = o*tanh(c)).
    static double[] reference(LstmNetwork net, float[] x, int length) {
        double[] seq = new double[length * net.inputs()];
        for (int i = 0; i < seq.length; i++) {
            seq[i] = x[i];
        }
        int in = net.inputs();
        double[] h = null;
        for (LstmLayer l : net.layers()) {
            int hid = l.hidden();
            float[] w = l.w();
            float[] r = l.r();
            float[] wb = l.wb();
            float[] rb = l.rb();
            double[] out = new double[length * hid];
            h = new double[hid];
            double[] c = new double[hid];
            for (int t = 0; t < length; t++) {
                double[] a = new double[4 * hid];
                for (int g = 0; g < 4 * hid; g++) {
                    double v = wb[g] + rb[g];
                    for (int i = 0; i < in; i++) {
                        v += (double) w[g * in + i] * seq[t * in + i];
                    }
                    for (int j = 0; j < hid; j++) {
                        v += (double) r[g * hid + j] * h[j];
                    }
                    a[g] = v;
                }
                double[] nh = new double[hid];
                for (int j = 0; j < hid; j++) {
                    double ig = 1 / (1 + Math.exp(-a[j]));
                    double og = 1 / (1 + Math.exp(-a[hid + j]));
                    double fg = 1 / (1 + Math.exp(-a[2 * hid + j]));
                    double gg = Math.tanh(a[3 * hid + j]);
                    c[j] = fg * c[j] + ig * gg;
                    nh[j] = og * Math.tanh(c[j]);
                }
                h = nh;
                System.arraycopy(h, 0, out, t * hid, hid);
            }
            seq = out;
            in = hid;
        }
        float[] ro = net.readout();
        float[] b = net.bias();
        double[] z = new double[net.classes()];
        double max = Double.NEGATIVE_INFINITY;
        for (int k = 0; k < z.length; k++) {
            double v = b[k];
            for (int j = 0; j < in; j++) {
                v += ro[k * in + j] * h[j];
            }
            z[k] = v;
            max = Math.max(max, v);
        }
        double sum = 0;
        for (int k = 0; k < z.length; k++) {
            z[k] = Math.exp(z[k] - max);
            sum += z[k];
        }
        for (int k = 0; k < z.length; k++) {
            z[k] /= sum;
        }
        return z;
    }

    @Test
    void matchesTheOperatorDefinitionUnderMasks() {
        Random rng = new Random(71);
        double worst = 0;
        for (int[] hidden : HIDDEN) {
            LstmNetwork net = randomLstm(rng, N, hidden, K, 0.9);
            NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card(net));
            assertEquals("LSTM", dec.cell());
            assertTrue(dec.gruNetwork().isEmpty());
            InputBatch batch = randomBatch(rng, 13);
            for (LesionFill fill : List.of(LesionFill.ZERO, WAVE, SAME_ON_EVEN)) {
                List<InputMask> masks = masks(fill);
                float[][][] p = dec.bind(batch).probabilities(masks, 2);
                for (int m = 0; m < masks.size(); m++) {
                    for (int s = 0; s < batch.size(); s++) {
                        float[] x = new float[batch.series(s).length];
                        masks.get(m).apply(batch, s, x);
                        double[] ref = reference(net, x, batch.length(s));
                        for (int k = 0; k < K; k++) {
                            worst = Math.max(worst, Math.abs(ref[k] - p[m][s][k]));
                            assertEquals(ref[k], p[m][s][k], 2e-5, java.util.Arrays.toString(hidden) + " fill " + fill
                                    + " mask " + m + " sample " + s);
                        }
                    }
                }
            }
        }
        System.out.printf("LSTM native vs float64 definition: max |diff| %.3g%n", worst);
    }

    @Test
    void incrementalAgreesWithThePlainPathAndThreadsDoNotMatter() {
        Random rng = new Random(73);
        for (int[] hidden : HIDDEN) {
            LstmNetwork net = randomLstm(rng, N, hidden, K, 0.9);
            NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, card(net));
            InputBatch batch = randomBatch(rng, 70);
            for (LesionFill fill : List.of(LesionFill.ZERO, WAVE)) {
                List<InputMask> masks = masks(fill);
                float[][][] plain = dec.bind(batch, Mode.PLAIN).probabilities(masks, 1);
                float[][][] inc = dec.bind(batch, Mode.INCREMENTAL).probabilities(masks, 2);
                assertTrue(maxAbsDiff(inc, plain) <= 1e-5, "incremental vs plain " + maxAbsDiff(inc, plain));
                float[][][] again = dec.bind(batch, Mode.INCREMENTAL).probabilities(masks, 3);
                for (int m = 0; m < masks.size(); m++) {
                    for (int s = 0; s < batch.size(); s++) {
                        assertArrayEquals(inc[m][s], again[m][s]);
                    }
                }
            }
        }
    }

    @Test
    void writtenAsOnnxItIsReadBackAndAgreesWithOnnxRuntimeUnderMasks() throws Exception {
        // Source: ONNX Runtime's LSTM kernel as the reference implementation of the ONNX operator.
        Random rng = new Random(79);
        double worst = 0;
        int index = 0;
        for (int[] hidden : HIDDEN) {
            LstmNetwork net = randomLstm(rng, N, hidden, K, 0.9);
            Path file = dir.resolve("lstm" + index++ + ".onnx");
            Files.write(file, OnnxGruWriter.write(net, List.of(), card(net).classLabels(), Preprocessing.NONE, Map.of()));
            ModelReader.Analysis a = ModelReader.analyse(ModelReader.parse(Files.readAllBytes(file)));
            assertTrue(a instanceof ModelReader.Canonical, a.toString());
            ModelReader.Canonical c = (ModelReader.Canonical) a;
            assertEquals(hidden.length, c.lstm().layers().size());
            assertArrayEquals(net.layers().get(0).w(), c.lstm().layers().get(0).w());
            assertTrue(c.description().startsWith("canonical LSTM form: " + (hidden.length == 1 ? "1 LSTM layer"
                    : hidden.length + " stacked LSTM layers")), c.description());
            InputBatch batch = randomBatch(rng, 23);
            try (Decoder nat = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.NATIVE));
                 Decoder ort = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME))) {
                assertTrue(nat instanceof NativeRecurrentDecoder);
                for (LesionFill fill : List.of(LesionFill.ZERO, WAVE, SAME_ON_EVEN)) {
                    List<InputMask> masks = masks(fill);
                    float[][][] pn = nat.bind(batch).probabilities(masks, 2);
                    float[][][] po = ort.bind(batch).probabilities(masks, 2);
                    double d = maxAbsDiff(pn, po);
                    worst = Math.max(worst, d);
                    assertTrue(d <= 1e-4, java.util.Arrays.toString(hidden) + " fill " + fill + ": " + d);
                }
            }
        }
        System.out.printf("LSTM native vs ONNX Runtime under masks: max |diff| %.3g%n", worst);
    }
}
