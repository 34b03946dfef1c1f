package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.eval.HeldOut;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * A decoder that only ONNX Runtime runs (a 1-D convolution trained and exported by PyTorch, see
 * {@code tests/fixtures/conv/}): Cruxset's scores agree with the exporter's own outputs, and a search runs end to end.
 */
class ConvModelSearchTest {
    static final Path DIR = Cli.root().resolve("tests/fixtures/conv");
    static final Path MODEL = DIR.resolve("conv.onnx");
    static final Path COHORT = DIR.resolve("cohort");

    // Source: the exporter's outputs (PyTorch 1.13, tests/fixtures/conv/conv.json) for sets whose top-two margins are
    // at least 1e-3 on every sample, so accuracies must be equal and probabilities agree within 1e-4.
    @Test
    void scoresAgreeWithTheExportersOwnOutputs() throws Exception {
        JsonNode ref = new ObjectMapper().readTree(DIR.resolve("conv.json").toFile());
        Cohort c = CohortFiles.read(COHORT);
        try (Decoder d = OnnxModels.load(MODEL, OnnxOptions.defaults().withEngine(OnnxOptions.Engine.ONNXRUNTIME))) {
            assertEquals("onnxruntime", d.card().engine());
            ModelInputs in = ModelInputs.prepare(d.card(), c.atlas(), HeldOut.of(c, d.card()).samples());
            assertEquals(ref.get("samples").asInt(), in.size(), "the whole cohort is held out for a model from elsewhere");
            List<InputMask> masks = new ArrayList<>();
            for (JsonNode set : ref.get("sets")) {
                List<String> names = new ArrayList<>();
                set.get("regions").forEach(n -> names.add(n.asText()));
                RegionSet s = names.isEmpty() ? RegionSet.empty(c.atlas().size())
                        : LesionSpec.parse(String.join(",", names), c.atlas());
                masks.add(InputMask.zero(s));
            }
            assertTrue(masks.size() >= 4, "the fixture has several lesion sets: " + masks.size());
            float[][][] probs = d.bind(in.batch()).probabilities(masks, 2);
            for (int m = 0; m < masks.size(); m++) {
                JsonNode set = ref.get("sets").get(m);
                SetScore q = SetScore.of(probs[m], in);
                assertEquals(set.get("correct").asInt(), q.correct(), "set " + set.get("regions"));
                for (int s = 0; s < in.size(); s++) {
                    for (int k = 0; k < probs[m][s].length; k++) {
                        assertEquals(set.get("probabilities").get(s).get(k).asDouble(), probs[m][s][k], 1e-4,
                                "set " + set.get("regions") + ", sample " + s + ", class " + k);
                    }
                }
            }
        }
    }

    @Test
    void aSearchRunsEndToEndAndFindsACriticalSet(@TempDir Path out) {
        CruxsetCommand.Captured r = Cli.run("search", "--model", MODEL.toString(), "--cohort", COHORT.toString(), "--engine",
                "onnxruntime", "--strategy", "grow", "--budget", "1000", "--out", out.toString(), "--threads", "2")
                .requireSuccess();
        assertTrue(r.out().contains("whole cohort"), r.out());
        int best = SearchCommandTest.bestSize(r.out());
        assertTrue(best > 0 && best < 16, "a critical set of fewer than all 16 regions:\n" + r.out());
    }
}
