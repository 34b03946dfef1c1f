package org.cruxset.scoring.onnx;

import org.cruxset.scoring.testing.RandomModels;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.OperatorSetIdProto;
import ai.onnx.proto.OnnxMl.StringStringEntryProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import ai.onnx.proto.OnnxMl.TensorShapeProto;
import ai.onnx.proto.OnnxMl.TypeProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import com.google.protobuf.ByteString;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;

/** Shared helpers of the ONNX tests: random networks and batches, a small graph builder, and a float64 reference. */
final class OnnxTestSupport {
    private OnnxTestSupport() {
    }

    /** A random network with weights uniform in [-scale, scale]. */
    static GruNetwork randomNetwork(Random rng, int inputs, int[] hidden, boolean[] lbr, int classes, double scale) {
        return RandomModels.randomNetwork(rng, inputs, hidden, lbr, classes, scale);
    }

    /** A batch of standard normal samples with the given lengths. */
    static InputBatch randomBatch(Random rng, int regions, int[] lengths) {
        return RandomModels.randomBatch(rng, regions, lengths);
    }

    static Path save(Path dir, String name, byte[] bytes) {
        try {
            Path p = dir.resolve(name);
            Files.write(p, bytes);
            return p;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    static double maxAbsDiff(float[][][] a, float[][][] b) {
        double[][][] wide = new double[b.length][][];
        for (int m = 0; m < b.length; m++) {
            wide[m] = new double[b[m].length][];
            for (int s = 0; s < b[m].length; s++) {
                wide[m][s] = new double[b[m][s].length];
                for (int k = 0; k < b[m][s].length; k++) {
                    wide[m][s][k] = b[m][s][k];
                }
            }
        }
        return maxAbsDiff(a, wide);
    }

    static double maxAbsDiff(float[][][] a, double[][][] b) {
        double max = 0;
        for (int m = 0; m < a.length; m++) {
            for (int s = 0; s < a[m].length; s++) {
                for (int k = 0; k < a[m][s].length; k++) {
                    max = Math.max(max, Math.abs(a[m][s][k] - b[m][s][k]));
                }
            }
        }
        return max;
    }

    // ---------------------------------------------------------------- float64 reference

    /** Reference probabilities of every sample under every mask. */
    static double[][][] reference(GruNetwork net, InputBatch batch, List<InputMask> masks) {
        double[][][] out = new double[masks.size()][batch.size()][];
        for (int m = 0; m < masks.size(); m++) {
            for (int s = 0; s < batch.size(); s++) {
                float[] x = new float[batch.series(s).length];
                masks.get(m).apply(batch, s, x);
                out[m][s] = reference(net, x, batch.length(s));
            }
        }
        return out;
    }

    /**
     * Class probabilities of one time-major input by the ONNX GRU operator's equations in double precision, written
     * from the specification (gate order z, r, h; Y_h is the state after the sample's last step).
     */
    static double[] reference(GruNetwork net, float[] x, int len) {
        int in = net.inputs();
        double[] seq = new double[x.length];
        for (int i = 0; i < x.length; i++) {
            seq[i] = x[i];
        }
        double[] h = null;
        for (GruLayer l : net.layers()) {
            int hid = l.hidden();
            float[] w = l.w();
            float[] r = l.r();
            float[] wb = l.wb();
            float[] rb = l.rb();
            h = new double[hid];
            double[] ys = new double[len * hid];
            for (int t = 0; t < len; t++) {
                double[] z = new double[hid];
                double[] rr = new double[hid];
                for (int j = 0; j < hid; j++) {
                    z[j] = sigmoid(dot(w, j * in, seq, t * in, in) + dot(r, j * hid, h, 0, hid) + wb[j] + rb[j]);
                    int jr = hid + j;
                    rr[j] = sigmoid(dot(w, jr * in, seq, t * in, in) + dot(r, jr * hid, h, 0, hid) + wb[jr] + rb[jr]);
                }
                double[] rh = new double[hid];
                for (int j = 0; j < hid; j++) {
                    rh[j] = rr[j] * h[j];
                }
                double[] next = new double[hid];
                for (int j = 0; j < hid; j++) {
                    int jh = 2 * hid + j;
                    double xh = dot(w, jh * in, seq, t * in, in) + wb[jh];
                    double cand;
                    if (l.linearBeforeReset()) {
                        cand = Math.tanh(xh + rr[j] * (dot(r, jh * hid, h, 0, hid) + rb[jh]));
                    } else {
                        cand = Math.tanh(xh + dot(r, jh * hid, rh, 0, hid) + rb[jh]);
                    }
                    next[j] = (1 - z[j]) * cand + z[j] * h[j];
                }
                h = next;
                System.arraycopy(h, 0, ys, t * hid, hid);
            }
            seq = ys;
            in = hid;
        }
        int k = net.classes();
        float[] ro = net.readout();
        float[] b = net.bias();
        double[] scores = new double[k];
        double max = Double.NEGATIVE_INFINITY;
        for (int c = 0; c < k; c++) {
            scores[c] = b[c] + dot(ro, c * in, h, 0, in);
            max = Math.max(max, scores[c]);
        }
        double sum = 0;
        for (int c = 0; c < k; c++) {
            scores[c] = Math.exp(scores[c] - max);
            sum += scores[c];
        }
        for (int c = 0; c < k; c++) {
            scores[c] /= sum;
        }
        return scores;
    }

    private static double dot(float[] a, int ao, double[] b, int bo, int n) {
        double s = 0;
        for (int i = 0; i < n; i++) {
            s += a[ao + i] * b[bo + i];
        }
        return s;
    }

    private static double sigmoid(double v) {
        return 1 / (1 + Math.exp(-v));
    }

    // ---------------------------------------------------------------- graph building

    /** A minimal builder of ONNX graphs for tests. */
    static final class Graph {
        final GraphProto.Builder g = GraphProto.newBuilder().setName("test");
        final List<StringStringEntryProto> meta = new ArrayList<>();
        long opset = 13;

        Graph input(String name, TensorProto.DataType type, Object... dims) {
            g.addInput(valueInfo(name, type, dims));
            return this;
        }

        Graph output(String name, Object... dims) {
            g.addOutput(valueInfo(name, TensorProto.DataType.FLOAT, dims));
            return this;
        }

        Graph floats(String name, float[] v, long... dims) {
            g.addInitializer(OnnxGruWriter.floatTensor(name, v, dims));
            return this;
        }

        Graph longs(String name, long... v) {
            g.addInitializer(OnnxGruWriter.int64Tensor(name, v));
            return this;
        }

        Graph scalar(String name, long v) {
            g.addInitializer(TensorProto.newBuilder().setName(name).setDataType(TensorProto.DataType.INT64_VALUE)
                    .addInt64Data(v).build());
            return this;
        }

        Graph node(String op, List<String> in, List<String> out, AttributeProto... attrs) {
            NodeProto.Builder n = NodeProto.newBuilder().setOpType(op).setName(op.toLowerCase() + g.getNodeCount())
                    .addAllInput(in).addAllOutput(out);
            for (AttributeProto a : attrs) {
                n.addAttribute(a);
            }
            g.addNode(n);
            return this;
        }

        Graph classes(String... labels) {
            meta.add(StringStringEntryProto.newBuilder().setKey(OnnxGruWriter.CLASSES_KEY)
                    .setValue(String.join("\n", labels)).build());
            return this;
        }

        ModelProto model() {
            return ModelProto.newBuilder().setIrVersion(8).setProducerName("test")
                    .addOpsetImport(OperatorSetIdProto.newBuilder().setDomain("").setVersion(opset))
                    .setGraph(g).addAllMetadataProps(meta).build();
        }
    }

    static AttributeProto attr(String name, long v) {
        return OnnxGruWriter.integer(name, v);
    }

    static AttributeProto attr(String name, float v) {
        return AttributeProto.newBuilder().setName(name).setType(AttributeProto.AttributeType.FLOAT).setF(v).build();
    }

    static AttributeProto attr(String name, String v) {
        return AttributeProto.newBuilder().setName(name).setType(AttributeProto.AttributeType.STRING)
                .setS(ByteString.copyFromUtf8(v)).build();
    }

    static AttributeProto ints(String name, long... v) {
        return OnnxGruWriter.ints(name, v);
    }

    static AttributeProto strings(String name, String... v) {
        AttributeProto.Builder a = AttributeProto.newBuilder().setName(name).setType(AttributeProto.AttributeType.STRINGS);
        for (String x : v) {
            a.addStrings(ByteString.copyFromUtf8(x));
        }
        return a.build();
    }

    static ValueInfoProto valueInfo(String name, TensorProto.DataType type, Object... dims) {
        return OnnxGruWriter.valueInfo(name, type, dims);
    }

    /** The GRU's [1, 6H] bias initializer values: Wb then Rb. */
    static float[] bias(GruLayer l) {
        int h = l.hidden();
        float[] b = new float[6 * h];
        System.arraycopy(l.wb(), 0, b, 0, 3 * h);
        System.arraycopy(l.rb(), 0, b, 3 * h, 3 * h);
        return b;
    }
}
