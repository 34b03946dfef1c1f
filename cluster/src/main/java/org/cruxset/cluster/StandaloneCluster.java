package org.cruxset.cluster;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.ServerSocket;
import java.net.Socket;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * A Spark standalone cluster on this machine: a master and workers, each a separate JVM started from a Spark home
 * with Spark's own classes ({@code org.apache.spark.deploy.master.Master}, {@code ...worker.Worker}), as Spark's
 * scripts would start them. For the tests and the cluster benchmark; a lab starts its cluster with Spark's scripts
 * (README: Running on a cluster). The Spark home is the one the build assembles ({@code cluster/target/spark}: its
 * {@code jars/} holds Spark and Cruxset's dependencies); a {@code RELEASE} file is written into it so that workers
 * take their executors' class path from {@code jars/}. Logs and work folders go to {@code logs}.
 */
public final class StandaloneCluster implements AutoCloseable {
    private final List<Process> workers = new ArrayList<>();
    private final List<Process> all = new ArrayList<>();
    private final String url;

    private StandaloneCluster(Path home, Path logs, int workerCount, int cores, String memory) throws IOException {
        if (!Files.isDirectory(home.resolve("jars"))) {
            throw new IllegalArgumentException("no Spark home at " + home + ": expected its jars/ folder (built by "
                    + "'mvn -B -pl cluster -am package -DskipTests')");
        }
        Files.writeString(home.resolve("RELEASE"), "Spark home assembled by the Cruxset build\n");
        Files.createDirectories(logs);
        int port = freePort();
        url = "spark://127.0.0.1:" + port;
        try {
            start(home, logs, "master", "org.apache.spark.deploy.master.Master", "--host", "127.0.0.1", "--port",
                    Integer.toString(port), "--webui-port", Integer.toString(freePort()));
            waitForPort(port, logs);
            for (int w = 1; w <= workerCount; w++) {
                workers.add(start(home, logs, "worker-" + w, "org.apache.spark.deploy.worker.Worker", "--host",
                        "127.0.0.1", "--cores", Integer.toString(cores), "--memory", memory, "--work-dir",
                        logs.resolve("w" + w).toString(), "--webui-port", Integer.toString(freePort()), url));
            }
        } catch (IOException | RuntimeException e) {
            close();
            throw e;
        }
    }

    /**
     * Starts a master and {@code workerCount} workers of {@code cores} cores and {@code memory} (e.g. {@code 1g})
     * each; the master is listening when this returns, the workers register within seconds.
     */
    public static StandaloneCluster start(Path sparkHome, Path logs, int workerCount, int cores, String memory)
            throws IOException {
        return new StandaloneCluster(sparkHome.toAbsolutePath(), logs.toAbsolutePath(), workerCount, cores, memory);
    }

    /** The master's URL, for {@code --spark}. */
    public String url() {
        return url;
    }

    /** Kills worker {@code w} (1-based) and its executors at once, as a failed node would go. */
    public void kill(int w) {
        Process p = workers.get(w - 1);
        p.descendants().forEach(ProcessHandle::destroyForcibly);
        p.destroyForcibly();
    }

    @Override
    public void close() {
        for (Process p : all) {
            p.descendants().forEach(ProcessHandle::destroyForcibly);
            p.destroyForcibly();
        }
    }

    private Process start(Path home, Path logs, String name, String main, String... args) throws IOException {
        List<String> cmd = new ArrayList<>();
        cmd.add(ProcessHandle.current().info().command().orElse("java"));
        cmd.add("-Xmx512m");
        cmd.addAll(List.of(SparkBackend.OPENS.split(" ")));
        cmd.add("-cp");
        cmd.add(home.resolve("jars") + "/*");
        cmd.add(main);
        cmd.addAll(List.of(args));
        ProcessBuilder pb = new ProcessBuilder(cmd).redirectErrorStream(true)
                .redirectOutput(logs.resolve(name + ".log").toFile());
        pb.environment().put("SPARK_HOME", home.toString());
        pb.environment().put("SPARK_LOCAL_IP", "127.0.0.1");
        pb.environment().put("SPARK_SCALA_VERSION", "2.13"); // read by the launcher code workers use for executors
        Process p = pb.start();
        all.add(p);
        return p;
    }

    private static int freePort() {
        try (ServerSocket s = new ServerSocket(0)) {
            return s.getLocalPort();
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static void waitForPort(int port, Path logs) {
        long deadline = System.nanoTime() + 60_000_000_000L;
        while (System.nanoTime() < deadline) {
            try (Socket s = new Socket("127.0.0.1", port)) {
                return;
            } catch (IOException e) {
                try {
                    Thread.sleep(200);
                } catch (InterruptedException ie) {
                    Thread.currentThread().interrupt();
                    throw new IllegalStateException("interrupted", ie);
                }
            }
        }
        throw new IllegalStateException("the Spark master did not open port " + port + " within 60 s (see "
                + logs.resolve("master.log") + ")");
    }
}
