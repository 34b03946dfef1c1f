package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertInstanceOf;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.stream.Stream;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.OnnxRuntimeDecoder;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/** Loads the third-party ONNX fixtures under tests/fixtures/onnx and checks both engines against their expected outputs. */
class OnnxFixtureTest {
    static final double TOLERANCE = 1e-4;

    /** Fixtures that are valid models but not in canonical GRU or LSTM form, with a word their refusal must name. */
    static final Map<String, String> NON_CANONICAL = Map.of(
            "torch_mlp_head.onnx", "(Relu '/head/head.1/Relu') after the readout Gemm: only Softmax or LogSoftmax may follow",
            "torch_bidirectional.onnx", "GRU direction 'bidirectional' is not forward");

    static Path fixtures() {
        String root = System.getProperty("cruxset.root", "..");
        return Path.of(root).resolve("tests/fixtures/onnx").normalize();
    }

    static Stream<String> fixtureFiles() throws IOException {
        try (Stream<Path> s = Files.list(fixtures())) {
            List<String> names = s.map(p -> p.getFileName().toString()).filter(n -> n.endsWith(".json")).sorted().toList();
            assertFalse(names.isEmpty(), "no fixtures in " + fixtures());
            return names.stream();
        }
    }

    record Fixture(Path model, Path classes, JsonNode json, InputBatch batch, double[][] expected, String source) {
    }

    static Fixture read(String jsonName) throws IOException {
        Path dir = fixtures();
        JsonNode j = new ObjectMapper().readTree(dir.resolve(jsonName).toFile());
        Path model = dir.resolve(j.get("model").asText());
        String stem = j.get("model").asText().replaceFirst("\\.onnx$", "");
        Path classes = dir.resolve(stem + ".classes.txt");
        int regions = j.get("regions").asInt();
        JsonNode inputs = j.get("inputs");
        JsonNode lens = j.get("lengths");
        int n = inputs.size();
        float[][] series = new float[n][];
        int[] lengths = new int[n];
        for (int s = 0; s < n; s++) {
            lengths[s] = lens.get(s).asInt();
            series[s] = new float[lengths[s] * regions];
            for (int t = 0; t < lengths[s]; t++) {
                for (int r = 0; r < regions; r++) {
                    series[s][t * regions + r] = (float) inputs.get(s).get(t).get(r).asDouble();
                }
            }
        }
        JsonNode e = j.get("expected_probabilities");
        double[][] expected = new double[e.size()][];
        for (int s = 0; s < expected.length; s++) {
            expected[s] = new double[e.get(s).size()];
            for (int k = 0; k < expected[s].length; k++) {
                expected[s][k] = e.get(s).get(k).asDouble();
            }
        }
        return new Fixture(model, Files.exists(classes) ? classes : null, j, InputBatch.of(regions, series, lengths),
                expected, j.get("source").asText());
    }

    static double maxAbsDiff(float[][] got, double[][] expected) {
        double max = 0;
        for (int s = 0; s < expected.length; s++) {
            for (int k = 0; k < expected[s].length; k++) {
                max = Math.max(max, Math.abs(got[s][k] - expected[s][k]));
            }
        }
        return max;
    }

    @ParameterizedTest
    @MethodSource("fixtureFiles")
    void fixtureDecodesAsItsFrameworkDid(String jsonName) throws IOException {
        // Source: each fixture's "source" field: PyTorch 1.13 nn.GRU or nn.LSTM forward (torch.onnx.export of the same
        // module), PyTorch 1.13 nn.GRU or nn.LSTM on a pack_padded_sequence batch (seqlens_graph, lstm_seqlens_graph),
        // or the float64 numpy implementation of the ONNX GRU operator specification in make_fixtures.py (lbr0_graph);
        // see tests/fixtures/onnx/README.md
        Fixture f = read(jsonName);
        String name = f.model().getFileName().toString();
        OnnxOptions options = OnnxOptions.defaults().withClassesFile(f.classes());
        List<String> classes = new ArrayList<>();
        f.json().get("classes").forEach(c -> classes.add(c.asText()));
        Layout layout = f.json().get("layout").asText().equals("batch_first") ? Layout.BATCH_FIRST : Layout.TIME_FIRST;
        List<InputMask> intact = List.of(InputMask.none(f.batch().regions()));
        String why = name + " (expected from: " + f.source() + ")";

        List<Engine> engines = new ArrayList<>();
        String refusal = NON_CANONICAL.get(name);
        if (refusal == null) {
            try (Decoder auto = OnnxModels.load(f.model(), options)) {
                assertInstanceOf(NativeRecurrentDecoder.class, auto, why);
                assertEquals(OnnxModels.NATIVE, auto.card().engine());
                String cell = name.contains("lstm") ? "LSTM" : "GRU";
                assertTrue(auto.card().engineReason().startsWith("canonical " + cell + " form: "),
                        auto.card().engineReason());
                System.out.println(name + ": " + auto.card().engineReason());
            }
            engines.add(Engine.NATIVE);
        } else {
            try (Decoder auto = OnnxModels.load(f.model(), options)) {
                assertEquals(OnnxModels.ONNXRUNTIME, auto.card().engine(), why);
                assertTrue(auto.card().engineReason().startsWith("not in canonical GRU or LSTM form: "), auto.card().engineReason());
                assertTrue(auto.card().engineReason().contains(refusal), auto.card().engineReason());
                System.out.println(name + ": " + auto.card().engineReason());
            }
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                    () -> OnnxModels.load(f.model(), options.withEngine(Engine.NATIVE)));
            assertTrue(e.getMessage().contains(refusal), e.getMessage());
        }
        engines.add(Engine.ONNXRUNTIME);

        for (Engine engine : engines) {
            try (Decoder d = OnnxModels.load(f.model(), options.withEngine(engine))) {
                assertEquals(classes, d.card().classLabels(), why);
                if (d instanceof OnnxRuntimeDecoder ort) {
                    assertEquals(layout, ort.layout(), why);
                    assertEquals(f.json().get("has_lengths_input").asBoolean(), ort.hasLengths(), why);
                }
                float[][] p = d.bind(f.batch()).probabilities(intact, 2)[0];
                double diff = maxAbsDiff(p, f.expected());
                System.out.printf("%s with %s: max |p - expected| %.3g%n", name, d.card().engine(), diff);
                assertTrue(diff <= TOLERANCE, why + " with " + d.card().engine() + ": max abs diff " + diff);
            }
        }
    }
}
