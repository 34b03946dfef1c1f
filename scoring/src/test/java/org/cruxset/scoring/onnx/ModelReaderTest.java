package org.cruxset.scoring.onnx;

import static org.cruxset.scoring.onnx.OnnxTestSupport.attr;
import static org.cruxset.scoring.onnx.OnnxTestSupport.bias;
import static org.cruxset.scoring.onnx.OnnxTestSupport.ints;
import static org.cruxset.scoring.onnx.OnnxTestSupport.maxAbsDiff;
import static org.cruxset.scoring.onnx.OnnxTestSupport.randomBatch;
import static org.cruxset.scoring.onnx.OnnxTestSupport.randomNetwork;
import static org.cruxset.scoring.onnx.OnnxTestSupport.reference;
import static org.cruxset.scoring.onnx.OnnxTestSupport.save;
import static org.cruxset.scoring.onnx.OnnxTestSupport.strings;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertTrue;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.TensorProto.DataType;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.reader.ModelReader.Analysis;
import org.cruxset.scoring.onnx.reader.ModelReader.Canonical;
import org.cruxset.scoring.onnx.reader.ModelReader.Output;
import org.cruxset.scoring.onnx.reader.ModelReader.Refused;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.OnnxTestSupport.Graph;
import org.cruxset.scoring.onnx.reader.ModelReader;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class ModelReaderTest {
    static final int N = 5;
    static final int H = 6;
    static final int K = 3;
    static final int[] LENGTHS = {4, 9, 1, 9, 6, 2};

    @TempDir
    Path dir;

    final Random rng = new Random(5);
    final GruNetwork net = randomNetwork(rng, N, new int[] {H}, new boolean[] {true}, K, 0.8);
    final GruLayer layer = net.layers().get(0);

    /** Input, Transpose, one GRU with the given extra attributes and optional inputs 4 and 5; outputs Y and Y_h. */
    Graph gruGraph(boolean lengths, String initialH, AttributeProto... extra) {
        Graph g = new Graph().input("input", DataType.FLOAT, "batch", "time", N);
        if (lengths) {
            g.input("lengths", DataType.INT32, "batch");
        }
        g.floats("W", layer.w(), 1, 3 * H, N).floats("R", layer.r(), 1, 3 * H, H).floats("B", bias(layer), 1, 6 * H)
                .floats("readout", net.readout(), K, H).floats("bias", net.bias(), K)
                .longs("axes0", 0).longs("axes1", 1).scalar("last", -1).scalar("zero", 0)
                .node("Transpose", List.of("input"), List.of("x_tm"), ints("perm", 1, 0, 2));
        List<AttributeProto> attrs = new ArrayList<>(List.of(attr("hidden_size", (long) H), attr("linear_before_reset", 1L)));
        attrs.addAll(List.of(extra));
        List<String> in = new ArrayList<>(List.of("x_tm", "W", "R", "B"));
        if (lengths || initialH != null) {
            in.add(lengths ? "lengths" : "");
        }
        if (initialH != null) {
            in.add(initialH);
        }
        g.node("GRU", in, List.of("Y", "Y_h"), attrs.toArray(AttributeProto[]::new));
        return g.classes("x", "y", "z");
    }

    /** The plain Y_h readout after {@link #gruGraph}: Squeeze, Gemm to "scores". */
    static Graph yhReadout(Graph g) {
        return g.node("Squeeze", List.of("Y_h", "axes0"), List.of("h"))
                .node("Gemm", List.of("h", "readout", "bias"), List.of("scores"), attr("transB", 1L))
                .output("scores", "batch", K);
    }

    static String refusal(ModelProto m) {
        Analysis a = ModelReader.analyse(m);
        return assertInstanceOf(Refused.class, a, () -> "expected a refusal, got " + a).reason();
    }

    static Canonical canonical(ModelProto m) {
        Analysis a = ModelReader.analyse(m);
        return assertInstanceOf(Canonical.class, a, () -> "expected canonical form, got " + a);
    }

    @Test
    void plainGraphIsCanonical() {
        Canonical c = canonical(yhReadout(gruGraph(true, null)).model());
        assertEquals("canonical GRU form: 1 GRU layer, Y_h readout, Gemm, batch-first input, lengths input 'lengths'",
                c.description());
        assertEquals(Output.LOGITS, c.output());
    }

    @Test
    void refusesBidirectionalGru() {
        String r = refusal(yhReadout(gruGraph(false, null, attr("direction", "bidirectional"))).model());
        assertEquals("node 1 (GRU 'gru1'): GRU direction 'bidirectional' is not forward", r);
    }

    @Test
    void refusesReverseGru() {
        String r = refusal(yhReadout(gruGraph(false, null, attr("direction", "reverse"))).model());
        assertTrue(r.endsWith("GRU direction 'reverse' is not forward"), r);
    }

    @Test
    void refusesReluAfterTheReadout() {
        Graph g = gruGraph(false, null)
                .node("Squeeze", List.of("Y_h", "axes0"), List.of("h"))
                .node("Gemm", List.of("h", "readout", "bias"), List.of("gemm_out"), attr("transB", 1L))
                .node("Relu", List.of("gemm_out"), List.of("scores"))
                .output("scores", "batch", K);
        assertEquals("node 4 (Relu 'relu4') after the readout Gemm: only Softmax or LogSoftmax may follow",
                refusal(g.model()));
    }

    @Test
    void refusesOtherActivationsAndClip() {
        String r = refusal(yhReadout(gruGraph(false, null, strings("activations", "Relu", "Tanh"))).model());
        assertTrue(r.endsWith("GRU activations [Relu, Tanh] are not the default [Sigmoid, Tanh]"), r);
        r = refusal(yhReadout(gruGraph(false, null, attr("clip", 3f))).model());
        assertTrue(r.contains("GRU clip 3.0 is set"), r);
        // Default activations spelled out are fine.
        canonical(yhReadout(gruGraph(false, null, strings("activations", "Sigmoid", "Tanh"))).model());
    }

    @Test
    void refusesNonzeroInitialStateAcceptsZeroOne() {
        float[] h0 = new float[H];
        Graph g = gruGraph(false, "h0").floats("h0", h0, 1, 1, H);
        canonical(yhReadout(g).model());
        h0[2] = 0.5f;
        g = gruGraph(false, "h0").floats("h0", h0, 1, 1, H);
        assertTrue(refusal(yhReadout(g).model()).endsWith("GRU initial_h is not all zeros"));
    }

    /** Sequence lengths with a readout of Y at the last padded step: short samples read zeros, so not canonical. */
    @Test
    void refusesSequenceLensWithLastPaddedStepOfY() {
        Graph g = gruGraph(true, null)
                .node("Squeeze", List.of("Y", "axes1"), List.of("y3"))
                .node("Gather", List.of("y3", "last"), List.of("h"), attr("axis", 0L))
                .node("Gemm", List.of("h", "readout", "bias"), List.of("scores"), attr("transB", 1L))
                .output("scores", "batch", K);
        String r = refusal(g.model());
        assertEquals("node 3 (Gather 'gather3') reads Y of node 1 (GRU 'gru1') at the last padded time step, but that "
                + "GRU has sequence_lens: samples shorter than the padded length read zeros there, not their last "
                + "valid step (read Y_h instead)", r);

        // ONNX Runtime still runs it, with the ONNX semantics: a sample shorter than the batch reads a zero state.
        Path file = save(dir, "ylast.onnx", g.model().toByteArray());
        InputBatch batch = randomBatch(rng, N, LENGTHS);
        try (Decoder d = OnnxModels.load(file, OnnxOptions.defaults())) {
            assertEquals(OnnxModels.ONNXRUNTIME, d.card().engine());
            assertEquals("not in canonical GRU or LSTM form: " + r, d.card().engineReason());
            float[][] p = d.bind(batch).probabilities(List.of(InputMask.none(N)), 1)[0];
            double[] fromBias = softmax(net.bias());
            double[] full = reference(net, batch.series(1), batch.length(1));
            for (int k = 0; k < K; k++) {
                assertEquals(fromBias[k], p[0][k], 1e-6, "length 4 of 9 reads zeros");
                assertEquals(full[k], p[1][k], 1e-4, "the longest sample reads its last step");
            }
        }
    }

    @Test
    void refusesAnEarlyTimeStepAndAnUnusedLengthsInput() {
        Graph g = gruGraph(false, null)
                .node("Squeeze", List.of("Y", "axes1"), List.of("y3"))
                .node("Gather", List.of("y3", "zero"), List.of("h"), attr("axis", 0L))
                .node("Gemm", List.of("h", "readout", "bias"), List.of("scores"), attr("transB", 1L))
                .output("scores", "batch", K);
        assertTrue(refusal(g.model()).contains("takes time step 0"));

        Graph unused = yhReadout(gruGraph(false, null).input("lengths", DataType.INT32, "batch"));
        assertEquals("graph input 'lengths' does not feed the GRUs' sequence_lens, so padded steps would change the "
                + "result", refusal(unused.model()));
    }

    @Test
    void refusesExtraGraphInputs() {
        Graph g = gruGraph(false, null)
                .input("w_in", DataType.FLOAT, K, H)
                .node("Squeeze", List.of("Y_h", "axes0"), List.of("h"))
                .node("Gemm", List.of("h", "w_in", "bias"), List.of("scores"), attr("transB", 1L))
                .output("scores", "batch", K);
        String r = refusal(g.model());
        assertTrue(r.contains("'w_in'") && r.contains("neither the float"), r);
    }

    /** Exporter-style variations: time-first, zero initial_h from ConstantOfShape, Gather, MatMul+Add, LogSoftmax. */
    @Test
    void acceptsExporterGlueAndAgreesWithOnnxRuntime() {
        float[] readoutT = new float[H * K];
        float[] ro = net.readout();
        for (int c = 0; c < K; c++) {
            for (int j = 0; j < H; j++) {
                readoutT[j * K + c] = ro[c * H + j];
            }
        }
        Graph g = new Graph().input("x", DataType.FLOAT, "T", "B", N)
                .floats("W", layer.w(), 1, 3 * H, N).floats("R", layer.r(), 1, 3 * H, H).floats("Bias", bias(layer), 1, 6 * H)
                .floats("ro_t", readoutT, H, K).floats("bias", net.bias(), 1, K)
                .longs("one", 1).longs("hid", H).longs("ax0", 0).scalar("idx1", 1).scalar("first", 0)
                .node("Shape", List.of("x"), List.of("shape"))
                .node("Gather", List.of("shape", "idx1"), List.of("batch"), attr("axis", 0L))
                .node("Unsqueeze", List.of("batch", "ax0"), List.of("batch1"))
                .node("Concat", List.of("one", "batch1", "hid"), List.of("h0_shape"), attr("axis", 0L))
                .node("ConstantOfShape", List.of("h0_shape"), List.of("h0"))
                .node("GRU", List.of("x", "W", "R", "Bias", "", "h0"), List.of("", "Y_h"), attr("hidden_size", (long) H),
                        attr("linear_before_reset", 1L))
                .node("Gather", List.of("Y_h", "first"), List.of("h"), attr("axis", 0L))
                .node("Identity", List.of("h"), List.of("h_id"))
                .node("MatMul", List.of("h_id", "ro_t"), List.of("mm"))
                .node("Add", List.of("mm", "bias"), List.of("logits"))
                .node("LogSoftmax", List.of("logits"), List.of("logp"), attr("axis", -1L))
                .output("logp", "B", K)
                .classes("x", "y", "z");
        Canonical c = canonical(g.model());
        assertEquals(Layout.TIME_FIRST, c.layout());
        assertEquals(Output.LOG_PROBABILITIES, c.output());
        assertEquals("canonical GRU form: 1 GRU layer, Y_h readout, MatMul+Add, LogSoftmax output, time-first input",
                c.description());
        agree(g.model(), "exporter glue", net);
    }

    /** Last step of Y through Slice and Reshape, Gemm with transB=0 and alpha/beta, batch-first, no lengths. */
    @Test
    void acceptsSliceOfYAndHonoursGemmAlphaBeta() {
        float[] roT = new float[H * K];
        float[] ro = net.readout();
        for (int c = 0; c < K; c++) {
            for (int j = 0; j < H; j++) {
                roT[j * K + c] = ro[c * H + j] * 2f;
            }
        }
        float[] b = net.bias();
        float[] halfBias = new float[K];
        for (int k = 0; k < K; k++) {
            halfBias[k] = b[k] / 4f;
        }
        Graph g = gruGraph(false, null)
                .longs("start", -1).longs("end", Long.MAX_VALUE).longs("shape", -1, H)
                .floats("ro_t", roT, H, K).floats("qbias", halfBias, K)
                .node("Slice", List.of("Y", "start", "end", "axes0"), List.of("y_last"))
                .node("Reshape", List.of("y_last", "shape"), List.of("h"))
                .node("Gemm", List.of("h", "ro_t", "qbias"), List.of("scores"), attr("alpha", 0.5f), attr("beta", 4f))
                .node("Softmax", List.of("scores"), List.of("probabilities"), attr("axis", 1L))
                .output("probabilities", "batch", K);
        Canonical c = canonical(g.model());
        assertEquals("canonical GRU form: 1 GRU layer, last step of Y readout, Gemm, Softmax output, batch-first input",
                c.description());
        assertFalse(c.hasLengths());
        agree(g.model(), "slice of Y", net);
    }

    /** Opset 11 states Squeeze axes as an attribute. */
    @Test
    void acceptsOpset11SqueezeAttribute() {
        Graph g = gruGraph(false, null)
                .node("Squeeze", List.of("Y_h"), List.of("h"), ints("axes", 0))
                .node("Gemm", List.of("h", "readout", "bias"), List.of("scores"), attr("transB", 1L))
                .output("scores", "batch", K);
        g.opset = 11;
        canonical(g.model());
        agree(g.model(), "opset 11", net);
    }

    /** Both engines and the float64 reference agree on a batch of different lengths under masks. */
    void agree(ModelProto m, String what, GruNetwork expected) {
        // Source: ONNX GRU operator specification; ONNX Runtime as the reference implementation
        Path file = save(dir, what.replace(' ', '_') + ".onnx", m.toByteArray());
        InputBatch batch = randomBatch(rng, N, LENGTHS);
        List<InputMask> masks = List.of(InputMask.none(N), InputMask.zero(RegionSet.of(N, 1, 3)));
        try (Decoder nat = OnnxModels.load(file, OnnxOptions.defaults());
             Decoder ort = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME))) {
            assertEquals(OnnxModels.NATIVE, nat.card().engine());
            float[][][] pn = nat.bind(batch).probabilities(masks, 2);
            float[][][] po = ort.bind(batch).probabilities(masks, 2);
            double d = maxAbsDiff(pn, po);
            double r = maxAbsDiff(pn, reference(expected, batch, masks));
            System.out.printf("%s: |native-ort| %.3g, |native-ref| %.3g%n", what, d, r);
            assertTrue(d <= 1e-4, what + ": native vs ONNX Runtime " + d);
            assertTrue(r <= 1e-4, what + ": native vs reference " + r);
        }
    }

    static double[] softmax(float[] z) {
        double max = Double.NEGATIVE_INFINITY;
        for (float v : z) {
            max = Math.max(max, v);
        }
        double[] e = new double[z.length];
        double sum = 0;
        for (int i = 0; i < z.length; i++) {
            e[i] = Math.exp(z[i] - max);
            sum += e[i];
        }
        for (int i = 0; i < z.length; i++) {
            e[i] /= sum;
        }
        return e;
    }

    /** An LSTM classifier as the writer produces it, with its LSTM node changed by {@code edit}. */
    static ModelProto lstmModel(java.util.function.Consumer<ai.onnx.proto.OnnxMl.GraphProto.Builder> edit) {
        Random rng = new Random(3);
        int n = 5;
        int h = 4;
        org.cruxset.scoring.lstm.LstmLayer layer = new org.cruxset.scoring.lstm.LstmLayer(n, h,
                org.cruxset.scoring.testing.RandomModels.uniform(rng, 4 * h * n, 0.5), org.cruxset.scoring.testing.RandomModels.uniform(rng, 4 * h * h, 0.5),
                org.cruxset.scoring.testing.RandomModels.uniform(rng, 4 * h, 0.5), org.cruxset.scoring.testing.RandomModels.uniform(rng, 4 * h, 0.5));
        org.cruxset.scoring.lstm.LstmNetwork net = new org.cruxset.scoring.lstm.LstmNetwork(List.of(layer), 2,
                org.cruxset.scoring.testing.RandomModels.uniform(rng, 2 * h, 0.5), org.cruxset.scoring.testing.RandomModels.uniform(rng, 2, 0.5));
        ModelProto m = ModelReader.parse(OnnxGruWriter.write(net, List.of(), List.of("a", "b"),
                org.cruxset.scoring.decoder.Preprocessing.NONE, java.util.Map.of()));
        ModelProto.Builder b = m.toBuilder();
        edit.accept(b.getGraphBuilder());
        return b.build();
    }

    static ai.onnx.proto.OnnxMl.NodeProto.Builder lstmNode(ai.onnx.proto.OnnxMl.GraphProto.Builder g) {
        for (ai.onnx.proto.OnnxMl.NodeProto.Builder node : g.getNodeBuilderList()) {
            if (node.getOpType().equals("LSTM")) {
                return node;
            }
        }
        throw new AssertionError("no LSTM node");
    }

    /** Sets attribute {@code a} on {@code node}, replacing one of the same name. */
    static void set(ai.onnx.proto.OnnxMl.NodeProto.Builder node, AttributeProto a) {
        for (int i = 0; i < node.getAttributeCount(); i++) {
            if (node.getAttribute(i).getName().equals(a.getName())) {
                node.setAttribute(i, a);
                return;
            }
        }
        node.addAttribute(a);
    }

    @Test
    void readsTheWrittenLstmAndRefusesEachNonCanonicalLstmPrecisely() {
        Analysis ok = ModelReader.analyse(lstmModel(g -> { }));
        Canonical c = assertInstanceOf(Canonical.class, ok, ok::toString);
        assertEquals("canonical LSTM form: 1 LSTM layer, Y_h readout, Gemm, Softmax output, batch-first input, lengths "
                + "input 'lengths'", c.description());
        assertEquals("node 1 (LSTM 'lstm0'): LSTM direction 'bidirectional' is not forward",
                refusal(lstmModel(g -> set(lstmNode(g), attr("direction", "bidirectional")))));
        assertEquals("node 1 (LSTM 'lstm0'): LSTM input_forget 1 couples the input and forget gates; only uncoupled "
                + "LSTMs are canonical", refusal(lstmModel(g -> set(lstmNode(g), attr("input_forget", 1L)))));
        assertEquals("node 1 (LSTM 'lstm0'): LSTM activations [Sigmoid, Tanh, Relu] are not the default [Sigmoid, "
                + "Tanh, Tanh]", refusal(lstmModel(g -> set(lstmNode(g), strings("activations", "Sigmoid",
                "Tanh", "Relu")))));
        assertEquals("node 1 (LSTM 'lstm0'): LSTM clip 2.0 is set; only unclipped LSTMs are canonical",
                refusal(lstmModel(g -> set(lstmNode(g), attr("clip", 2f)))));
        // Peepholes: input 7 (P), a constant that is not all zeros.
        assertEquals("node 1 (LSTM 'lstm0'): LSTM P (peepholes) is not all zeros", refusal(lstmModel(g -> {
            g.addInitializer(ai.onnx.proto.OnnxMl.TensorProto.newBuilder().setName("peep")
                    .setDataType(DataType.FLOAT.getNumber()).addDims(1).addDims(12)
                    .addAllFloatData(java.util.Collections.nCopies(12, 0.5f)));
            ai.onnx.proto.OnnxMl.NodeProto.Builder node = lstmNode(g);
            node.addInput("").addInput("").addInput("peep");
        })));
        // A readout from the cell state Y_c instead of Y_h.
        String r = refusal(lstmModel(g -> {
            ai.onnx.proto.OnnxMl.NodeProto.Builder node = lstmNode(g);
            String yh = node.getOutput(1);
            node.addOutput("cell_state");
            for (ai.onnx.proto.OnnxMl.NodeProto.Builder other : g.getNodeBuilderList()) {
                for (int i = 0; i < other.getInputCount(); i++) {
                    if (other.getInput(i).equals(yh)) {
                        other.setInput(i, "cell_state");
                    }
                }
            }
        }));
        assertEquals("node 1 (LSTM 'lstm0'): the readout reads the LSTM cell state Y_c; canonical LSTMs are read out "
                + "from the hidden state (Y_h or the last step of Y)", r);
    }
}
