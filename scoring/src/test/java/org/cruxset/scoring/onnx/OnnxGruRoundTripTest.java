package org.cruxset.scoring.onnx;

import static org.cruxset.scoring.onnx.OnnxTestSupport.maxAbsDiff;
import static org.cruxset.scoring.onnx.OnnxTestSupport.randomBatch;
import static org.cruxset.scoring.onnx.OnnxTestSupport.randomNetwork;
import static org.cruxset.scoring.onnx.OnnxTestSupport.reference;
import static org.cruxset.scoring.onnx.OnnxTestSupport.save;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertTrue;

import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.reader.ModelReader;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class OnnxGruRoundTripTest {
    static final int N = 7;
    static final int K = 4;
    static final int[] LENGTHS = {1, 20, 3, 7, 12, 2, 20, 5, 16, 9, 1, 14, 19, 4, 11};
    static final List<String> CLASSES = List.of("a", "b", "c", "d");
    static final List<String> REGIONS = List.of("r0", "r1", "r2", "r3", "r4", "r5", "r6");
    static final double TOLERANCE = 1e-4;

    @TempDir
    Path dir;

    static List<InputMask> masks() {
        return List.of(InputMask.none(N), InputMask.zero(RegionSet.of(N, 0)), InputMask.zero(RegionSet.of(N, 2, 5)),
                InputMask.zero(RegionSet.of(N, 1, 3, 4, 6)));
    }

    record Config(int[] hidden, boolean[] lbr) {
    }

    static List<Config> configs() {
        return List.of(new Config(new int[] {5}, new boolean[] {true}), new Config(new int[] {16}, new boolean[] {false}),
                new Config(new int[] {9, 12}, new boolean[] {true, true}),
                new Config(new int[] {16, 5}, new boolean[] {false, false}),
                new Config(new int[] {7, 11}, new boolean[] {false, true}));
    }

    @Test
    void writtenModelsAgreeNativeOnnxRuntimeAndReference() {
        // Source: ONNX GRU operator specification; ONNX Runtime as the reference implementation
        Random rng = new Random(20240611);
        double worstOrt = 0;
        double worstRefNative = 0;
        double worstRefOrt = 0;
        int index = 0;
        for (Config c : configs()) {
            GruNetwork net = randomNetwork(rng, N, c.hidden(), c.lbr(), K, 0.8);
            byte[] bytes = OnnxGruWriter.write(net, REGIONS, CLASSES, Preprocessing.ZSCORE, Map.of("trained.on", "test"));
            Path file = save(dir, "model" + index++ + ".onnx", bytes);
            InputBatch batch = randomBatch(rng, N, LENGTHS);
            List<InputMask> masks = masks();
            try (Decoder nat = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.NATIVE));
                 Decoder ort = OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME))) {
                assertEquals(OnnxModels.NATIVE, nat.card().engine());
                assertEquals(OnnxModels.ONNXRUNTIME, ort.card().engine());
                assertTrue(((OnnxRuntimeDecoder) ort).hasLengths());
                assertEquals(Layout.BATCH_FIRST, ((OnnxRuntimeDecoder) ort).layout());
                assertEquals("probabilities", ((OnnxRuntimeDecoder) ort).output());
                float[][][] pn = nat.bind(batch).probabilities(masks, 3);
                float[][][] po = ort.bind(batch).probabilities(masks, 3);
                double[][][] ref = reference(net, batch, masks);
                double dOrt = maxAbsDiff(pn, po);
                double dRefNative = maxAbsDiff(pn, ref);
                double dRefOrt = maxAbsDiff(po, ref);
                System.out.printf("round trip %s lbr %s: |native-ort| %.3g, |native-ref| %.3g, |ort-ref| %.3g%n",
                        java.util.Arrays.toString(c.hidden()), java.util.Arrays.toString(c.lbr()), dOrt, dRefNative, dRefOrt);
                assertTrue(dOrt <= TOLERANCE, "native vs ONNX Runtime " + dOrt);
                assertTrue(dRefNative <= TOLERANCE, "native vs reference " + dRefNative);
                assertTrue(dRefOrt <= TOLERANCE, "ONNX Runtime vs reference " + dRefOrt);
                worstOrt = Math.max(worstOrt, dOrt);
                worstRefNative = Math.max(worstRefNative, dRefNative);
                worstRefOrt = Math.max(worstRefOrt, dRefOrt);
                // The masks must matter, or the comparison under masks says nothing.
                assertTrue(maxAbsDiff(new float[][][] {pn[0]}, new float[][][] {pn[3]}) > 1e-3);
            }
        }
        System.out.printf("round trip worst: |native-ort| %.3g, |native-ref| %.3g, |ort-ref| %.3g%n",
                worstOrt, worstRefNative, worstRefOrt);
    }

    @Test
    void readerRecoversTheWrittenNetworkAndCard() {
        Random rng = new Random(7);
        GruNetwork net = randomNetwork(rng, N, new int[] {6, 8}, new boolean[] {false, true}, K, 0.5);
        byte[] bytes = OnnxGruWriter.write(net, REGIONS, CLASSES, Preprocessing.ZSCORE, Map.of("note", "x"));
        ModelReader.Canonical c = assertInstanceOf(ModelReader.Canonical.class,
                ModelReader.analyse(ModelReader.parse(bytes)));
        assertEquals(Layout.BATCH_FIRST, c.layout());
        assertEquals(ModelReader.Output.PROBABILITIES, c.output());
        assertTrue(c.hasLengths());
        assertEquals("canonical GRU form: 2 stacked GRU layers, Y_h readout, Gemm, Softmax output, batch-first input, "
                + "lengths input 'lengths'", c.description());
        GruNetwork back = c.network();
        assertEquals(net.layers().size(), back.layers().size());
        for (int i = 0; i < net.layers().size(); i++) {
            GruLayer a = net.layers().get(i);
            GruLayer b = back.layers().get(i);
            assertEquals(a.linearBeforeReset(), b.linearBeforeReset());
            assertArrayEquals(a.w(), b.w());
            assertArrayEquals(a.r(), b.r());
            assertArrayEquals(a.wb(), b.wb());
            assertArrayEquals(a.rb(), b.rb());
        }
        assertArrayEquals(net.readout(), back.readout());
        assertArrayEquals(net.bias(), back.bias());

        Path file = save(dir, "m.onnx", bytes);
        try (Decoder d = OnnxModels.load(file, OnnxOptions.defaults())) {
            ModelCard card = d.card();
            assertInstanceOf(NativeRecurrentDecoder.class, d);
            assertEquals("native", card.engine());
            assertEquals(c.description(), card.engineReason());
            assertEquals(CLASSES, card.classLabels());
            assertEquals(REGIONS, card.regionNames());
            assertEquals(Preprocessing.ZSCORE, card.preprocessing());
            assertEquals(OnnxModels.sha256(bytes), card.modelHash());
            assertEquals(64, card.modelHash().length());
            assertEquals("gru/1", card.metadata().get("cruxset.format"));
            assertEquals("x", card.metadata().get("note"));
        }
        try (Decoder d = OnnxModels.load(file, OnnxOptions.defaults().withPreprocessing(Preprocessing.NONE))) {
            assertEquals(Preprocessing.NONE, d.card().preprocessing());
        }
    }

    /** The written graph rewritten time-first and without a lengths input: ONNX Runtime then runs equal-length groups. */
    @Test
    void timeFirstModelWithoutLengthsRunsInEqualLengthGroups() {
        // Source: ONNX GRU operator specification; ONNX Runtime as the reference implementation
        Random rng = new Random(99);
        GruNetwork net = randomNetwork(rng, N, new int[] {10, 6}, new boolean[] {true, false}, K, 0.8);
        ModelProto m = OnnxGruWriter.model(net, List.of(), CLASSES, Preprocessing.NONE, Map.of());
        GraphProto.Builder g = m.getGraph().toBuilder();
        g.removeInput(1);
        g.setInput(0, OnnxTestSupport.valueInfo("input", ai.onnx.proto.OnnxMl.TensorProto.DataType.FLOAT, "time", "batch", N));
        g.clearNode();
        for (NodeProto n : m.getGraph().getNodeList()) {
            if (n.getOpType().equals("Transpose")) {
                continue;
            }
            NodeProto.Builder b = n.toBuilder();
            for (int i = 0; i < b.getInputCount(); i++) {
                if (b.getInput(i).equals("input_tm")) {
                    b.setInput(i, "input");
                }
                if (b.getInput(i).equals("lengths")) {
                    b.setInput(i, "");
                }
            }
            g.addNode(b);
        }
        byte[] bytes = m.toBuilder().setGraph(g).build().toByteArray();
        ModelReader.Canonical c = assertInstanceOf(ModelReader.Canonical.class,
                ModelReader.analyse(ModelReader.parse(bytes)));
        assertEquals(Layout.TIME_FIRST, c.layout());
        assertTrue(!c.hasLengths());
        Path file = save(dir, "tf.onnx", bytes);
        InputBatch batch = randomBatch(rng, N, LENGTHS);
        List<InputMask> masks = masks();
        try (Decoder nat = OnnxModels.load(file, OnnxOptions.defaults());
             OnnxRuntimeDecoder ort = (OnnxRuntimeDecoder) OnnxModels.load(file,
                     OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME))) {
            assertEquals(Layout.TIME_FIRST, ort.layout());
            assertTrue(!ort.hasLengths());
            assertTrue(ort.card().engineReason().startsWith("engine onnxruntime requested"));
            float[][][] pn = nat.bind(batch).probabilities(masks, 2);
            float[][][] po = ort.bind(batch).probabilities(masks, 2);
            double d = maxAbsDiff(pn, po);
            double r = maxAbsDiff(po, reference(net, batch, masks));
            System.out.printf("time-first, no lengths: |native-ort| %.3g, |ort-ref| %.3g%n", d, r);
            assertTrue(d <= TOLERANCE, "native vs ONNX Runtime " + d);
            assertTrue(r <= TOLERANCE, "ONNX Runtime vs reference " + r);
        }
    }
}
