package org.cruxset.cluster;

import java.util.Map;
import java.util.Objects;
import java.util.TreeMap;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicLong;
import org.apache.spark.SparkConf;
import org.apache.spark.api.java.JavaSparkContext;
import org.cruxset.scoring.decoder.DecodeBackend;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.DecoderSource;
import org.cruxset.scoring.kernel.Kernels;

/**
 * Lesion sets decoded by Apache Spark. The driver (this JVM) keeps the strategy, the budget and the results store;
 * each batch of sets the scorer decodes becomes one Spark job whose tasks decode several sets each on an executor,
 * against the model and held-out inputs broadcast once ({@link SparkDecoder}). One Spark context per JVM, shared by
 * every scoring session of a command and stopped with the JVM. Spark settings come from {@code spark.*} system
 * properties as usual ({@code -Dspark.executor.memory=4g}); executors get the driver's kernel flags, so they run the
 * same native kernels (each task reports which it used).
 */
public final class SparkBackend implements DecodeBackend {
    /** The Java 17 module openings Spark needs (those its launcher adds), given to executors too. */
    static final String OPENS = String.join(" ", "--add-opens=java.base/java.lang=ALL-UNNAMED",
            "--add-opens=java.base/java.lang.invoke=ALL-UNNAMED", "--add-opens=java.base/java.lang.reflect=ALL-UNNAMED",
            "--add-opens=java.base/java.io=ALL-UNNAMED", "--add-opens=java.base/java.net=ALL-UNNAMED",
            "--add-opens=java.base/java.nio=ALL-UNNAMED", "--add-opens=java.base/java.util=ALL-UNNAMED",
            "--add-opens=java.base/java.util.concurrent=ALL-UNNAMED",
            "--add-opens=java.base/java.util.concurrent.atomic=ALL-UNNAMED",
            "--add-opens=java.base/jdk.internal.ref=ALL-UNNAMED", "--add-opens=java.base/sun.nio.ch=ALL-UNNAMED",
            "--add-opens=java.base/sun.nio.cs=ALL-UNNAMED", "--add-opens=java.base/sun.security.action=ALL-UNNAMED",
            "--add-opens=java.base/sun.util.calendar=ALL-UNNAMED");

    private static SparkBackend open;

    private final String master;
    private final JavaSparkContext sc;
    private final Map<String, String> kernelsByExecutor = new ConcurrentHashMap<>();
    private final AtomicLong jobs = new AtomicLong();
    private final AtomicLong tasks = new AtomicLong();
    private final AtomicLong sets = new AtomicLong();

    private SparkBackend(String master) {
        this.master = master;
        SparkConf conf = new SparkConf(true).setMaster(master).setAppName("cruxset");
        conf.setIfMissing("spark.ui.enabled", "false");
        String kernels = System.getProperty(Kernels.PROPERTY);
        String flags = "--add-modules jdk.incubator.vector " + OPENS
                + (kernels == null ? "" : " -D" + Kernels.PROPERTY + "=" + kernels);
        conf.set("spark.executor.extraJavaOptions", (conf.get("spark.executor.extraJavaOptions", "") + " " + flags)
                .trim());
        this.sc = new JavaSparkContext(conf);
        sc.setLogLevel(System.getProperty("cruxset.sparkLogLevel", "WARN"));
    }

    /** The backend at {@code master}: the JVM's one Spark context, started on first use. */
    public static synchronized SparkBackend at(String master) {
        Objects.requireNonNull(master, "master");
        if (open != null && !open.master.equals(master)) {
            throw new IllegalArgumentException("--spark " + master + ": this JVM is already connected to Spark at "
                    + open.master + " (one Spark context per JVM)");
        }
        if (open == null) {
            open = new SparkBackend(master);
        }
        return open;
    }

    /** The JVM's backend, or null before the first {@link #at}. */
    static synchronized SparkBackend current() {
        return open;
    }

    /** Stops the JVM's Spark context, if any (tests that change master; the JVM's exit does it otherwise). */
    public static synchronized void stop() {
        if (open != null) {
            open.sc.stop();
            open = null;
        }
    }

    @Override
    public Decoder distribute(Decoder local, DecoderSource source) {
        return new SparkDecoder(this, local, sc.broadcast(source));
    }

    @Override
    public String describe() {
        return "Apache Spark " + sc.version() + " at " + master + " (" + sc.defaultParallelism()
                + " task slots by default)";
    }

    JavaSparkContext context() {
        return sc;
    }

    /** Tasks per job: one per task slot, at most one per set. */
    int slices(int sets) {
        return Math.max(1, Math.min(sets, sc.defaultParallelism()));
    }

    void saw(String executor, String kernels) {
        kernelsByExecutor.put(executor, kernels);
    }

    void counted(int jobTasks, int jobSets) {
        jobs.incrementAndGet();
        tasks.addAndGet(jobTasks);
        sets.addAndGet(jobSets);
    }

    /** Which native kernels each executor that decoded a task used ({@code driver} in local mode). */
    public Map<String, String> kernelsByExecutor() {
        return new TreeMap<>(kernelsByExecutor);
    }

    /** Spark jobs, tasks and sets decoded so far. */
    public long[] counts() {
        return new long[] {jobs.get(), tasks.get(), sets.get()};
    }

    /** The master URL. */
    public String master() {
        return master;
    }
}
