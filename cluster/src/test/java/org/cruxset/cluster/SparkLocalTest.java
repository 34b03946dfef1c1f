package org.cruxset.cluster;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.kernel.Kernels;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Must show: scores through Spark local[2] equal the one-machine scores bit for bit, and a search gives the same sets. */
class SparkLocalTest {
    @TempDir
    static Path dir;
    static ClusterFixture fixture;

    @BeforeAll
    static void cohortAndModel() {
        fixture = new ClusterFixture(dir);
    }

    @AfterAll
    static void stopSpark() {
        SparkBackend.stop();
    }

    private static List<LesionScorer.Scored> score(LesionMode mode, List<RegionSet> sets, boolean spark, int threads) {
        Cohort c = CohortFiles.read(fixture.cohort);
        OnnxOptions options = OnnxOptions.defaults();
        try (Decoder d = OnnxModels.load(fixture.model, options)) {
            java.util.function.UnaryOperator<Decoder> distribute = !spark ? null
                    : local -> SparkBackend.at("local[2]").distribute(local, OnnxModels.source(fixture.model, options,
                    local, 1));
            ScoringSession.Settings s = new ScoringSession.Settings(mode, 3, null, CollapseCriterion.parse(
                    "binomial:0.05"), Double.POSITIVE_INFINITY, threads, null, "test", "test", 1, 1, 0.5, distribute);
            try (ScoringSession session = ScoringSession.open(d, c, s)) {
                List<RegionSet> inputs = new ArrayList<>();
                for (RegionSet r : sets) {
                    inputs.add(RegionSet.of(session.inputs().batch().regions(), r.positions()));
                }
                return session.scorer().score(inputs);
            }
        }
    }

    // Source: the definition of the backend (it must change where passes run, never what they return); the
    // one-machine scorer is the reference.
    @Test
    void sparkLocalScoresEqualOneMachineScoresBitForBit() {
        SplittableRandom rng = new SplittableRandom(15);
        List<RegionSet> sets = new ArrayList<>();
        for (int i = 0; i < 60; i++) {
            RegionSet s = RegionSet.empty(30);
            int k = 1 + rng.nextInt(8);
            while (s.size() < k) {
                s = s.with(rng.nextInt(30));
            }
            sets.add(s);
        }
        for (LesionMode mode : List.of(LesionMode.ZERO, LesionMode.NOISE)) {
            List<LesionScorer.Scored> here = score(mode, sets, false, 2);
            List<LesionScorer.Scored> there = score(mode, sets, true, 2);
            assertEquals(here.size(), there.size());
            for (int i = 0; i < here.size(); i++) {
                assertArrayEquals(here.get(i).outcomes().predicted(), there.get(i).outcomes().predicted(),
                        mode + " set " + i);
                float[] a = here.get(i).outcomes().trueClassProbability();
                float[] b = there.get(i).outcomes().trueClassProbability();
                for (int q = 0; q < a.length; q++) {
                    assertEquals(Float.floatToRawIntBits(a[q]), Float.floatToRawIntBits(b[q]), mode + " set " + i
                            + " sample " + q + ": " + a[q] + " vs " + b[q]);
                }
            }
        }
        // In local mode the executor is the driver's JVM: the same kernels, reported by every task.
        Map<String, String> kernels = SparkBackend.at("local[2]").kernelsByExecutor();
        assertEquals(Map.of("driver", Kernels.get().name()), kernels);
        assertTrue(SparkBackend.at("local[2]").counts()[1] > 0, "tasks ran");
    }

    @Test
    void aShortGrowAndPruneSearchFindsTheSameSets() {
        ClusterFixture.Run here = ClusterFixture.run("search", "--model", fixture.model.toString(), "--cohort",
                fixture.cohort.toString(), "--strategy", "grow", "--budget", "150", "--threads", "2", "--out",
                dir.resolve("one").toString()).requireSuccess();
        ClusterFixture.Run there = ClusterFixture.run("search", "--model", fixture.model.toString(), "--cohort",
                fixture.cohort.toString(), "--strategy", "grow", "--budget", "150", "--threads", "2", "--out",
                dir.resolve("spark").toString(), "--spark", "local[2]").requireSuccess();
        assertTrue(there.out().contains("passes decoded by Apache Spark"), there.out());
        assertEquals(results(here.out()), results(there.out()));
        assertTrue(!results(here.out()).isEmpty(), here.out());
    }

    /** The lines of a search's output that name its reported sets and their scores. */
    static List<String> results(String out) {
        List<String> lines = new ArrayList<>();
        for (String line : out.split("\\R")) {
            if (line.contains("CRITICAL") || line.contains("irreducible") || line.startsWith("Best critical size")) {
                lines.add(line.strip());
            }
        }
        return lines;
    }
}
