package org.cruxset.cluster;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.Statement;
import java.util.Map;
import java.util.TreeMap;
import java.util.concurrent.atomic.AtomicLong;
import org.cruxset.scoring.kernel.Kernels;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Must show: a real multi-process cluster. A Spark standalone master and two workers run as separate JVMs from the
 * Spark home the build assembles (cluster/target/spark: jars/ holds Spark and Cruxset's dependencies, copied from the
 * Maven artifacts by the dependency plugin; a RELEASE file marks it as a distribution, so workers take executors'
 * class path from jars/). This JVM is the driver: it runs a search on the cluster, and one worker with its executor is
 * killed mid-run. The run completes, every set is stored exactly once, and the result equals the one-machine result.
 */
class SparkStandaloneTest {
    @TempDir
    static Path dir;
    static ClusterFixture fixture;
    /** Logs and work folders of the master, workers and executors, kept after the test for reading. */
    private static final Path LOGS = Path.of("target", "standalone-test").toAbsolutePath();

    @BeforeAll
    static void cohortAndModel() {
        SparkBackend.stop();
        fixture = new ClusterFixture(dir);
    }

    @AfterAll
    static void stopSpark() {
        SparkBackend.stop();
    }

    @Test
    void aSearchSurvivesAWorkerKilledMidRunAndEqualsTheOneMachineResult() throws Exception {
        Path home = Path.of(System.getProperty("cruxset.sparkHome", "target/spark")).toAbsolutePath();
        assertTrue(Files.isDirectory(home.resolve("jars")), "the build assembles the Spark home: " + home);
        String[] search = {"search", "--model", fixture.model.toString(), "--cohort", fixture.cohort.toString(),
            "--strategy", "grow", "--budget", "600", "--threads", "2"};
        CruxsetCommand.Captured here = ClusterFixture.run(concat(search, "--out", dir.resolve("one").toString()))
                .requireSuccess();

        try (StandaloneCluster cluster = StandaloneCluster.start(home, LOGS, 2, 1, "1g")) {
            String url = cluster.url();
            Map<String, String> conf = Map.of("spark.executor.extraClassPath",
                    System.getProperty("cruxset.clusterClasses"), "spark.executor.memory", "768m", "spark.cores.max",
                    "2", "spark.driver.host", "127.0.0.1",
                    "spark.scheduler.minRegisteredResourcesRatio", "1.0",
                    "spark.scheduler.maxRegisteredResourcesWaitingTime", "120s");
            conf.forEach(System::setProperty);
            AtomicLong killedAt = new AtomicLong(-1);
            Thread killer = new Thread(() -> {
                long deadline = System.nanoTime() + 300_000_000_000L;
                while (System.nanoTime() < deadline) {
                    SparkBackend b = SparkBackend.current();
                    if (b != null && b.counts()[2] >= 40) {
                        cluster.kill(1);
                        killedAt.set(b.counts()[2]);
                        return;
                    }
                    try {
                        Thread.sleep(20);
                    } catch (InterruptedException e) {
                        return;
                    }
                }
            });
            killer.start();
            CruxsetCommand.Captured there = ClusterFixture.run(concat(search, "--out", dir.resolve("cluster").toString(),
                    "--spark", url)).requireSuccess();
            killer.join();
            conf.keySet().forEach(System::clearProperty);
            SparkBackend b = SparkBackend.current();
            long decoded = b.counts()[2];
            System.out.printf("Standalone cluster: worker 1 and its executor killed after %d of %d sets decoded; "
                    + "executors that ran tasks: %s; %d jobs, %d tasks%n", killedAt.get(), decoded,
                    b.kernelsByExecutor(), b.counts()[0], b.counts()[1]);
            assertTrue(killedAt.get() > 0 && killedAt.get() < decoded, "a worker was killed mid-run: at " + killedAt
                    + " of " + decoded + " sets");
            // Each executor (one per worker) ran tasks with the driver's kernels.
            Map<String, String> kernels = b.kernelsByExecutor();
            assertEquals(2, kernels.size(), "tasks ran on both workers' executors: " + kernels);
            kernels.values().forEach(k -> assertEquals(Kernels.get().name(), k, "executor kernels " + kernels));
            assertEquals(SparkLocalTest.results(here.out()), SparkLocalTest.results(there.out()));
            Map<String, String> one = evaluations(dir.resolve("one/results.sqlite"));
            Map<String, String> onCluster = evaluations(dir.resolve("cluster/results.sqlite"));
            assertEquals(one, onCluster, "the same sets scored to the same outcomes");
        } finally {
            SparkBackend.stop();
        }
    }

    /** Every stored evaluation, keyed by set, part and mode; fails if any key is stored twice. */
    static Map<String, String> evaluations(Path store) throws Exception {
        Map<String, String> out = new TreeMap<>();
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + store);
             Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT set_hex, data_hash, lesion_mode, mode_seed, n, correct, "
                     + "mean_true_prob FROM evaluations")) {
            while (r.next()) {
                String key = r.getString(1) + "/" + r.getString(2) + "/" + r.getString(3) + "/" + r.getLong(4);
                String old = out.put(key, r.getInt(5) + ":" + r.getInt(6) + ":" + r.getDouble(7));
                assertTrue(old == null, "stored twice: " + key);
            }
        }
        return out;
    }

    private static String[] concat(String[] a, String... b) {
        String[] out = java.util.Arrays.copyOf(a, a.length + b.length);
        System.arraycopy(b, 0, out, a.length, b.length);
        return out;
    }
}
