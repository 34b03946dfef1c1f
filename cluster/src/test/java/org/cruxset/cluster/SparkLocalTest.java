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
import org.cruxset.search.cli.CruxsetCommand;
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
        CruxsetCommand.Captured here = ClusterFixture.run("search", "--model", fixture.model.toString(), "--cohort",
                fixture.cohort.toString(), "--strategy", "grow", "--budget", "150", "--threads", "2", "--out",
                dir.resolve("one").toString()).requireSuccess();
        CruxsetCommand.Captured there = ClusterFixture.run("search", "--model", fixture.model.toString(), "--cohort",
                fixture.cohort.toString(), "--strategy", "grow", "--budget", "150", "--threads", "2", "--out",
                dir.resolve("spark").toString(), "--spark", "local[2]").requireSuccess();
        assertTrue(there.out().contains("passes decoded by Apache Spark"), there.out());
        assertEquals(results(here.out()), results(there.out()));
        assertTrue(!results(here.out()).isEmpty(), here.out());
    }

    // Faults: a driver killed with SIGKILL mid-run resumes from the store like any run (the store's keys make the
    // replayed sets cost no decoding), and ends where an uninterrupted one-machine run ends.
    @Test
    void aKilledDriverResumesFromTheStore() throws Exception {
        String[] search = {"search", "--model", fixture.model.toString(), "--cohort", fixture.cohort.toString(),
            "--strategy", "genetic", "--budget", "400", "--no-race", "--threads", "2"};
        Path one = dir.resolve("resume-one");
        Path spark = dir.resolve("resume-spark");
        CruxsetCommand.Captured here = ClusterFixture.run(concat(search, "--out", one.toString())).requireSuccess();
        List<String> cmd = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "--add-modules", "jdk.incubator.vector"));
        cmd.addAll(List.of(SparkBackend.OPENS.split(" ")));
        cmd.addAll(List.of("-cp", System.getProperty("java.class.path"), "org.cruxset.search.cli.CruxsetCommand"));
        cmd.addAll(List.of(concat(search, "--out", spark.toString(), "--spark", "local[2]")));
        java.nio.file.Files.createDirectories(spark);
        Process child = new ProcessBuilder(cmd).redirectErrorStream(true)
                .redirectOutput(spark.resolve("child.log").toFile()).start();
        Path db = spark.resolve("results.sqlite");
        long seen = 0;
        long deadline = System.nanoTime() + 180_000_000_000L;
        while (System.nanoTime() < deadline && child.isAlive() && seen < 100) {
            if (java.nio.file.Files.exists(db)) {
                try (java.sql.Connection c = java.sql.DriverManager.getConnection("jdbc:sqlite:" + db);
                     java.sql.ResultSet r = c.createStatement().executeQuery("SELECT COUNT(*) FROM evaluations")) {
                    seen = r.next() ? r.getLong(1) : 0;
                } catch (java.sql.SQLException busyOrNotYetCreated) {
                    seen = 0;
                }
            }
            Thread.sleep(10);
        }
        assertTrue(child.isAlive(), "the driver must still be running when killed (saw " + seen + " sets): "
                + java.nio.file.Files.readString(spark.resolve("child.log")));
        child.destroyForcibly();
        assertTrue(child.waitFor(30, java.util.concurrent.TimeUnit.SECONDS));
        CruxsetCommand.Captured resumed = ClusterFixture.run(concat(search, "--out", spark.toString(), "--spark",
                "local[2]")).requireSuccess();
        assertEquals(results(here.out()), results(resumed.out()));
        assertEquals(SparkStandaloneTest.evaluations(one.resolve("results.sqlite")), SparkStandaloneTest.evaluations(db),
                "the same sets, each stored once, with the same outcomes");
    }

    static String[] concat(String[] a, String... b) {
        String[] out = java.util.Arrays.copyOf(a, a.length + b.length);
        System.arraycopy(b, 0, out, a.length, b.length);
        return out;
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
