package org.cruxset.cluster;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.kernel.Kernels;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.search.bench.ExternalSuite;

/**
 * {@code cruxset bench --suite cluster}: scored sets per second of the reference workload on one machine (the native
 * engine, {@code threads} threads), on Spark {@code local[threads]} and on a standalone cluster of two single-core
 * workers started here, each decoding the sets in calls of 4 x threads sets as the scorer does; and Spark's own
 * overhead: the wall time of an empty job of as many tasks as task slots, per job and per set.
 */
public final class ClusterSuite implements ExternalSuite {
    @Override
    public String name() {
        return "cluster";
    }

    @Override
    public void run(PrintWriter out, Workload w, int threads) {
        out.printf(Locale.ROOT, "Cluster suite. Workload: %s.%nDecoded in calls of as many sets as the scorer would "
                + "ask for at --threads %d (Decoder.setsPerCall); native kernels %s.%n", w.description(), threads,
                Kernels.get().name());
        OnnxOptions options = OnnxOptions.defaults().withEngine(OnnxOptions.Engine.NATIVE);
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"where", "task slots", "sets per call", "sets/s", "s per set", "vs one machine",
            "empty job (ms)", "overhead per set (ms)"});
        try (Decoder local = OnnxModels.load(w.model(), options)) {
            int perCall = local.setsPerCall(threads);
            double one = rate(local, w, perCall, threads);
            rows.add(new String[] {"one machine (" + threads + " threads)", Integer.toString(threads),
                Integer.toString(perCall), fmt(one), fmt(1 / one), "1.00", "-", "-"});
            SparkBackend.stop();
            String master = "local[" + threads + "]";
            measure(rows, master, "Spark " + master, local, w, threads, one);
            SparkBackend.stop();
            Path logs = Path.of(System.getProperty("java.io.tmpdir"), "cruxset-cluster-bench");
            try (StandaloneCluster cluster = StandaloneCluster.start(sparkHome(), logs, 2, 1, "3g")) {
                System.setProperty("spark.executor.memory", "2g");
                System.setProperty("spark.cores.max", "2");
                System.setProperty("spark.driver.host", "127.0.0.1");
                System.setProperty("spark.scheduler.minRegisteredResourcesRatio", "1.0");
                System.setProperty("spark.scheduler.maxRegisteredResourcesWaitingTime", "120s");
                System.setProperty("spark.executor.extraClassPath", classes());
                try {
                    measure(rows, cluster.url(), "standalone, 2 workers x 1 core", local, w, threads, one);
                } finally {
                    SparkBackend.stop(); // before the cluster goes
                }
            } catch (java.io.IOException e) {
                throw new java.io.UncheckedIOException(e);
            }
        }
        int[] width = new int[rows.get(0).length];
        for (String[] r : rows) {
            for (int c = 0; c < r.length; c++) {
                width[c] = Math.max(width[c], r[c].length());
            }
        }
        for (String[] r : rows) {
            StringBuilder b = new StringBuilder();
            for (int c = 0; c < r.length; c++) {
                b.append(String.format("%-" + (width[c] + 2) + "s", r[c]));
            }
            out.println(b.toString().stripTrailing());
        }
        out.println("Overhead per set: an empty job of as many tasks as task slots, divided by the sets per call. "
                + "Before timing, the workload is broadcast and each executor opens the model and binds the samples "
                + "(one warm-up call); Spark's sets/s then include each job's scheduling and result transfer.");
    }

    private static void measure(List<String[]> rows, String master, String label, Decoder local, Workload w,
                                int threads, double one) {
        SparkBackend b = SparkBackend.at(master);
        Decoder d = b.distribute(local, sourceOf(local, w));
        int perCall = d.setsPerCall(threads);
        double rate = rate(d, w, perCall, threads);
        int slots = b.context().defaultParallelism();
        List<Integer> items = new ArrayList<>();
        for (int i = 0; i < slots; i++) {
            items.add(i);
        }
        for (int i = 0; i < 3; i++) {
            b.context().parallelize(items, slots).count();
        }
        int jobs = 20;
        long t0 = System.nanoTime();
        for (int i = 0; i < jobs; i++) {
            b.context().parallelize(items, slots).count();
        }
        double jobMs = (System.nanoTime() - t0) / 1e6 / jobs;
        rows.add(new String[] {label, Integer.toString(slots), Integer.toString(perCall), fmt(rate), fmt(1 / rate),
            String.format(Locale.ROOT,
            "%.2f", rate / one), String.format(Locale.ROOT, "%.1f", jobMs), String.format(Locale.ROOT, "%.1f",
            jobMs / perCall)});
    }

    private static org.cruxset.scoring.decoder.DecoderSource sourceOf(Decoder local, Workload w) {
        return OnnxModels.source(w.model(), OnnxOptions.defaults().withEngine(OnnxOptions.Engine.NATIVE), local, 1);
    }

    /** Sets per second over the workload's masks after one warm-up call, decoded in calls of {@code perCall}. */
    private static double rate(Decoder d, Workload w, int perCall, int threads) {
        Decoder.Bound bound = d.bind(w.batch());
        List<InputMask> masks = w.masks();
        bound.probabilities(masks.subList(0, Math.min(perCall, masks.size())), threads);
        long t0 = System.nanoTime();
        for (int from = 0; from < masks.size(); from += perCall) {
            bound.probabilities(masks.subList(from, Math.min(masks.size(), from + perCall)), threads);
        }
        return masks.size() / ((System.nanoTime() - t0) / 1e9);
    }

    /** The Spark home the build assembles: system property cruxset.sparkHome, else beside this build's jar. */
    private static Path sparkHome() {
        String p = System.getProperty("cruxset.sparkHome");
        if (p != null) {
            return Path.of(p);
        }
        return Path.of(classes()).getParent().resolve("spark");
    }

    /** Where this build's classes are (a jar or a folder): executors add it to their class path. */
    private static String classes() {
        try {
            return Path.of(ClusterSuite.class.getProtectionDomain().getCodeSource().getLocation().toURI()).toString();
        } catch (java.net.URISyntaxException e) {
            throw new IllegalStateException(e);
        }
    }

    private static String fmt(double v) {
        return String.format(Locale.ROOT, v >= 10 ? "%.1f" : "%.3f", v);
    }
}
