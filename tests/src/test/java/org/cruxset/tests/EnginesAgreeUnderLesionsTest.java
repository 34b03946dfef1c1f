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
}
