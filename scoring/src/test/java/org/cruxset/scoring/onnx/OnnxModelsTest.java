package org.cruxset.scoring.onnx;

import static org.cruxset.scoring.onnx.OnnxTestSupport.randomNetwork;
import static org.cruxset.scoring.onnx.OnnxTestSupport.save;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class OnnxModelsTest {
    static final int N = 7;
    static final List<String> CLASSES = List.of("a", "b", "c", "d");

    @TempDir
    Path dir;

    final GruNetwork net = randomNetwork(new Random(3), N, new int[] {5}, new boolean[] {true}, 4, 0.5);

    ModelProto written() {
        return OnnxGruWriter.model(net, List.of(), CLASSES, Preprocessing.NONE, Map.of());
    }

    static ModelProto withoutMetadata(ModelProto m) {
        return m.toBuilder().clearMetadataProps().build();
    }

    /** The written model with its GRU made bidirectional (weights doubled so ONNX Runtime can run it). */
    ModelProto bidirectional(ModelProto m) {
        GraphProto.Builder g = m.getGraph().toBuilder();
        for (int i = 0; i < g.getInitializerCount(); i++) {
            var t = g.getInitializer(i);
            if (t.getName().startsWith("gru0_")) {
                var b = t.toBuilder().setDims(0, 2).setRawData(t.getRawData().concat(t.getRawData()));
                g.setInitializer(i, b);
            }
        }
        for (int i = 0; i < g.getNodeCount(); i++) {
            NodeProto n = g.getNode(i);
            if (n.getOpType().equals("GRU")) {
                NodeProto.Builder b = n.toBuilder();
                for (int a = 0; a < b.getAttributeCount(); a++) {
                    if (b.getAttribute(a).getName().equals("direction")) {
                        b.setAttribute(a, OnnxTestSupport.attr("direction", "bidirectional"));
                    }
                }
                g.setNode(i, b);
            }
            if (n.getOpType().equals("Squeeze")) {
                // [2, B, H] -> [B, 2, H] -> [B, 2H], read out by the first direction's half only
                g.setNode(i, NodeProto.newBuilder().setOpType("Transpose").setName("to_batch")
                        .addInput(n.getInput(0)).addOutput("yh_b").addAttribute(OnnxTestSupport.ints("perm", 1, 0, 2)));
            }
        }
        g.addInitializer(OnnxGruWriter.int64Tensor("flat", 0, -1));
        g.addNode(3, NodeProto.newBuilder().setOpType("Reshape").addInput("yh_b").addInput("flat").addOutput("last_state"));
        for (int i = 0; i < g.getInitializerCount(); i++) {
            if (g.getInitializer(i).getName().equals("readout_weight")) {
                var t = g.getInitializer(i);
                float[] w = net.readout();
                float[] w2 = new float[w.length * 2];
                for (int c = 0; c < 4; c++) {
                    System.arraycopy(w, c * 5, w2, c * 10, 5);
                }
                g.setInitializer(i, OnnxGruWriter.floatTensor(t.getName(), w2, 4, 10));
            }
        }
        return m.toBuilder().setGraph(g).build();
    }

    @Test
    void missingClassesIsAClearError() {
        Path file = save(dir, "nolabels.onnx", withoutMetadata(written()).toByteArray());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> OnnxModels.load(file, OnnxOptions.defaults()));
        assertEquals("model " + file + " states no class order: pass --classes FILE (one label per line in output order)",
                e.getMessage());
        e = assertThrows(IllegalArgumentException.class,
                () -> OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME)));
        assertTrue(e.getMessage().contains("states no class order"));
    }

    @Test
    void classesFileCompletesOrOverridesMetadata() throws IOException {
        Path file = save(dir, "nolabels.onnx", withoutMetadata(written()).toByteArray());
        Path labels = dir.resolve("classes.txt");
        Files.writeString(labels, "rest\nleft\nright\nfeet\n");
        try (Decoder d = OnnxModels.load(file, OnnxOptions.defaults().withClassesFile(labels))) {
            assertEquals(List.of("rest", "left", "right", "feet"), d.card().classLabels());
            assertEquals(Preprocessing.NONE, d.card().preprocessing());
            assertEquals(List.of(), d.card().regionNames());
            assertEquals(N, d.card().regions());
        }
        Files.writeString(labels, "rest\nleft\nright\n");
        for (Engine engine : List.of(Engine.NATIVE, Engine.ONNXRUNTIME)) {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                    () -> OnnxModels.load(file, OnnxOptions.defaults().withEngine(engine).withClassesFile(labels)));
            assertEquals("model " + file + " gives 4 class scores but 3 class labels were given in " + labels,
                    e.getMessage());
        }
    }

    @Test
    void nativeEngineRefusesNonCanonicalModelsWithTheReason() {
        Path file = save(dir, "bidi.onnx", bidirectional(written()).toByteArray());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> OnnxModels.load(file, OnnxOptions.defaults().withEngine(Engine.NATIVE)));
        assertEquals("model " + file + " is not in canonical GRU or LSTM form, so the native engine cannot run it: node 1 "
                + "(GRU 'gru0'): GRU direction 'bidirectional' is not forward (use engine auto or onnxruntime)",
                e.getMessage());
        try (Decoder d = OnnxModels.load(file, OnnxOptions.defaults())) {
            assertEquals(OnnxModels.ONNXRUNTIME, d.card().engine());
            assertEquals("not in canonical GRU or LSTM form: node 1 (GRU 'gru0'): GRU direction 'bidirectional' is not forward",
                    d.card().engineReason());
            var batch = OnnxTestSupport.randomBatch(new Random(1), N, new int[] {3, 8, 8, 1});
            float[][] p = d.bind(batch).probabilities(List.of(org.cruxset.scoring.decoder.InputMask.none(N)), 1)[0];
            for (float[] row : p) {
                double sum = 0;
                for (float v : row) {
                    sum += v;
                }
                assertEquals(1.0, sum, 1e-5);
            }
        }
    }

    @Test
    void unreadableFilesAndLayoutConflictsNameTheFile() throws IOException {
        Path missing = dir.resolve("missing.onnx");
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> OnnxModels.load(missing, OnnxOptions.defaults()));
        assertTrue(e.getMessage().startsWith("cannot read model " + missing), e.getMessage());

        Path junk = dir.resolve("junk.onnx");
        Files.write(junk, new byte[] {1, 2, 3, 4, 5, 6, 7});
        e = assertThrows(IllegalArgumentException.class, () -> OnnxModels.load(junk, OnnxOptions.defaults()));
        assertTrue(e.getMessage().startsWith("model " + junk + ": not an ONNX model"), e.getMessage());

        Path file = save(dir, "m.onnx", written().toByteArray());
        e = assertThrows(IllegalArgumentException.class, () -> OnnxModels.load(file,
                OnnxOptions.defaults().withEngine(Engine.ONNXRUNTIME).withLayout(Layout.TIME_FIRST)));
        assertTrue(e.getMessage().startsWith("model " + file + " reads input 'input' as batch-first"), e.getMessage());
        assertTrue(e.getMessage().endsWith("but layout time-first was given"), e.getMessage());

        ModelProto.Builder badPre = written().toBuilder();
        for (int i = 0; i < badPre.getMetadataPropsCount(); i++) {
            if (badPre.getMetadataProps(i).getKey().equals(OnnxGruWriter.PREPROCESSING_KEY)) {
                badPre.setMetadataProps(i, badPre.getMetadataProps(i).toBuilder().setValue("minmax"));
            }
        }
        Path pre = save(dir, "pre.onnx", badPre.build().toByteArray());
        e = assertThrows(IllegalArgumentException.class, () -> OnnxModels.load(pre, OnnxOptions.defaults()));
        assertTrue(e.getMessage().startsWith("model " + pre + " metadata cruxset.preprocessing"), e.getMessage());
    }

    @Test
    void writerRefusesInconsistentArguments() {
        assertThrows(IllegalArgumentException.class,
                () -> OnnxGruWriter.write(net, List.of(), List.of("a", "b"), Preprocessing.NONE, Map.of()));
        assertThrows(IllegalArgumentException.class,
                () -> OnnxGruWriter.write(net, List.of("x"), CLASSES, Preprocessing.NONE, Map.of()));
        assertThrows(IllegalArgumentException.class,
                () -> OnnxGruWriter.write(net, List.of(), CLASSES, Preprocessing.NONE, Map.of("cruxset.format", "x")));
    }
}
