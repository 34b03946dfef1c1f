package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.eval.HeldOut;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.lesion.LesionFills;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.ReferenceStats;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.EnumSource;

/** Cruxset's engine and ONNX Runtime give the same probabilities under lesions in every mode. */
class EnginesAgreeUnderLesionsTest {

    // Source: ONNX GRU operator specification; ONNX Runtime as the reference implementation.
    @ParameterizedTest
    @EnumSource(LesionMode.class)
    void nativeAndOnnxRuntimeAgreeOnTheDemoDecoder(LesionMode mode) {
        Cohort c = CohortFiles.read(DemoData.COHORT);
        Path model = DemoData.MODEL;
        try (Decoder nat = OnnxModels.load(model, OnnxOptions.defaults().withEngine(OnnxOptions.Engine.NATIVE));
             Decoder ort = OnnxModels.load(model, OnnxOptions.defaults().withEngine(OnnxOptions.Engine.ONNXRUNTIME))) {
            assertEquals("native", nat.card().engine());
            assertEquals("onnxruntime", ort.card().engine());
            ModelInputs in = ModelInputs.prepare(nat.card(), c.atlas(), HeldOut.of(c, nat.card()).samples());
            ReferenceStats ref = ReferenceStats.fromMetadata(nat.card().metadata(), nat.card().regions());
            LesionFill fill = LesionFills.of(mode, 11L, ref, in.batch(), in.sampleIds());
            SplittableRandom rng = new SplittableRandom(5);
            List<InputMask> masks = new ArrayList<>();
            masks.add(new InputMask(RegionSet.empty(100), fill));
            for (int size : new int[] {1, 3, 10, 40, 99}) {
                int[] pos = new int[size];
                for (int i = 0; i < size; i++) {
                    pos[i] = rng.nextInt(100);
                }
                masks.add(new InputMask(RegionSet.of(100, pos), fill));
            }
            float[][][] a = nat.bind(in.batch()).probabilities(masks, 2);
            float[][][] b = ort.bind(in.batch()).probabilities(masks, 2);
            double worst = 0;
            for (int m = 0; m < a.length; m++) {
                for (int s = 0; s < a[m].length; s++) {
                    for (int k = 0; k < a[m][s].length; k++) {
                        worst = Math.max(worst, Math.abs(a[m][s][k] - b[m][s][k]));
                    }
                }
            }
            assertTrue(worst <= 1e-4, mode + ": max abs difference of probabilities " + worst);
        }
    }

    static java.util.stream.Stream<org.junit.jupiter.params.provider.Arguments> recurrentFixturesAndModes()
            throws java.io.IOException {
        List<org.junit.jupiter.params.provider.Arguments> out = new ArrayList<>();
        for (String json : OnnxFixtureTest.fixtureFiles().toList()) {
            if (OnnxFixtureTest.NON_CANONICAL.containsKey(json.replace(".json", ".onnx"))) {
                continue;
            }
            for (LesionMode mode : LesionMode.values()) {
                out.add(org.junit.jupiter.params.provider.Arguments.of(json, mode));
            }
        }
        return out.stream();
    }

    // Source: ONNX GRU and LSTM operator specifications; ONNX Runtime as the reference implementation, on the models
    // written by an independent exporter (tests/fixtures/onnx).
    @ParameterizedTest
    @org.junit.jupiter.params.provider.MethodSource("recurrentFixturesAndModes")
    void nativeAndOnnxRuntimeAgreeOnTheExportedFixturesUnderLesions(String json, LesionMode mode)
            throws java.io.IOException {
        OnnxFixtureTest.Fixture f = OnnxFixtureTest.read(json);
        OnnxOptions options = OnnxOptions.defaults().withClassesFile(f.classes());
        try (Decoder nat = OnnxModels.load(f.model(), options.withEngine(OnnxOptions.Engine.NATIVE));
             Decoder ort = OnnxModels.load(f.model(), options.withEngine(OnnxOptions.Engine.ONNXRUNTIME))) {
            int n = nat.card().regions();
            org.cruxset.scoring.decoder.InputBatch batch = f.batch();
            String[] ids = new String[batch.size()];
            for (int s = 0; s < ids.length; s++) {
                ids[s] = "sample" + s;
            }
            LesionFill fill = LesionFills.of(mode, 13L, ReferenceStats.of(batch), batch, List.of(ids));
            List<InputMask> masks = new ArrayList<>();
            masks.add(new InputMask(RegionSet.empty(n), fill));
            masks.add(new InputMask(RegionSet.of(n, 0), fill));
            masks.add(new InputMask(RegionSet.of(n, 1, 4), fill));
            masks.add(new InputMask(RegionSet.of(n, 0, 2, 3, 5), fill));
            masks.add(new InputMask(RegionSet.all(n), fill));
            float[][][] a = nat.bind(batch).probabilities(masks, 2);
            float[][][] b = ort.bind(batch).probabilities(masks, 2);
            double worst = 0;
            for (int m = 0; m < a.length; m++) {
                for (int s = 0; s < a[m].length; s++) {
                    for (int k = 0; k < a[m][s].length; k++) {
                        worst = Math.max(worst, Math.abs(a[m][s][k] - b[m][s][k]));
                    }
                }
            }
            assertTrue(worst <= 1e-4, json + " " + mode + ": max abs difference of probabilities " + worst);
        }
    }
}
