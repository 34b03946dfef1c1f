package org.cruxset.search.cli;

import java.io.IOException;
import java.io.PrintWriter;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.Callable;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.kernel.Kernels;
import org.cruxset.scoring.kernel.MachineReference;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset bench}: scored lesion sets per second of the native engine and of ONNX Runtime on one workload. */
@Command(name = "bench", mixinStandardHelpOptions = true,
        description = {
            "Measure scored lesion sets per second of Cruxset's own engine and of ONNX Runtime on a reference workload: "
                + "a random GRU (or, with --cell lstm, LSTM) classifier written as ONNX and loaded by both engines, "
                + "random inputs and random zero-fill lesion sets. A scored set is one set decoded on every sample. "
                + "--suite search and --suite soak run the strategy and store benchmarks instead; --suite cluster (the cluster "
                + "build) compares one machine with Spark local[N] and a two-worker standalone cluster.",
            "",
            "ONNX Runtime is measured in two configurations: as Cruxset loads it (one intra-op thread per run, runs spread "
                + "over --threads callers) and with --threads intra-op threads per run and one caller. The engines "
                + "alternate in rounds so that background load affects all alike. Also printed: useful GFLOP/s, a "
                + "blocked float32 matrix product as the machine reference, the theoretical FMA peak where the OS "
                + "reports vector width and clock, the projection cache against its limit, and peak memory."
        })
public final class BenchCommand implements Callable<Integer> {
    /** Lesion sets per probabilities call. */
    static final int SETS_PER_CALL = 4;
    /** Measuring rounds per engine, alternating between the engines. */
    static final int ROUNDS = 4;
    /** Most sets whose probabilities are kept for the comparison of the engines. */
    static final int KEPT_SETS = 1000;
    /** Least warm-up wall time per engine, in seconds. */
    static final double WARMUP_SECONDS = 3;

    @Spec
    CommandSpec spec;

    @Option(names = "--seconds", paramLabel = "S", defaultValue = "20",
            description = "Measured wall time per engine (unless --sets is given). Default: ${DEFAULT-VALUE}.")
    double seconds;

    @Option(names = "--sets", paramLabel = "N", defaultValue = "0",
            description = "Measure this many sets per engine instead of a wall time (0: use --seconds). Default: ${DEFAULT-VALUE}.")
    int sets;

    @Option(names = "--samples", paramLabel = "N", defaultValue = "660", description = "Samples scored per set. Default: ${DEFAULT-VALUE}.")
    int samples;

    @Option(names = "--regions", paramLabel = "N", defaultValue = "300", description = "Input regions. Default: ${DEFAULT-VALUE}.")
    int regions;

    @Option(names = "--hidden", paramLabel = "H", defaultValue = "128", description = "Hidden size of the recurrent layer. Default: ${DEFAULT-VALUE}.")
    int hidden;

    @Option(names = "--steps", paramLabel = "T", defaultValue = "200", description = "Time points per sample. Default: ${DEFAULT-VALUE}.")
    int steps;

    @Option(names = "--classes", paramLabel = "K", defaultValue = "15", description = "Classes. Default: ${DEFAULT-VALUE}.")
    int classes;

    @Option(names = "--lesion-size", paramLabel = "N", defaultValue = "10", description = "Regions per lesion set. Default: ${DEFAULT-VALUE}.")
    int lesionSize;

    @Option(names = "--seed", paramLabel = "SEED", defaultValue = "1", description = "Seed of weights, inputs and sets. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Mixin
    ThreadOptions threads;

    @Option(names = "--cell", paramLabel = "CELL", defaultValue = "gru",
            description = "engine suite: the recurrent cell of the workload model, gru or lstm. Default: ${DEFAULT-VALUE}.")
    String cell;

    @Option(names = "--suite", paramLabel = "NAME", defaultValue = "engine",
            description = "engine (scored sets per second of both engines on the reference workload), search (strategies "
                    + "on planted lesion problems with a proven minimum and traps) or soak (many sets through the scorer "
                    + "and store: sets per second, store bytes per set, heap in use) or cluster (the cluster build: sets "
                    + "per second on one machine, Spark local[N] and a two-worker standalone cluster, with Spark's "
                    + "overhead per job and per set). Default: ${DEFAULT-VALUE}.")
    String suite;

    @Option(names = "--seeds", paramLabel = "N", defaultValue = "5",
            description = "search suite: instances (seeds 1..N), each run in a fresh store. Default: ${DEFAULT-VALUE}.")
    int seeds;

    @Option(names = "--budgets", paramLabel = "N", split = ",", defaultValue = "6000",
            description = "search suite: budgets in scored sets, comma-separated. Default: ${DEFAULT-VALUE}.")
    List<Long> budgets;

    @Option(names = "--strategies", paramLabel = "S", split = ",", defaultValue = "random,grow,grow+prune,ranked+prune,genetic,local",
            description = "search suite: strategies, comma-separated; a name ending in ~race (e.g. grow+prune~race) runs "
                    + "it with racing. Default: ${DEFAULT-VALUE}.")
    List<String> strategies;

    @Option(names = "--config", paramLabel = "FILE",
            description = "search suite: a YAML file of strategy settings, as for search --config (default: the defaults).")
    java.nio.file.Path config;

    @Override
    public Integer call() throws java.io.IOException {
        switch (suite) {
            case "engine" -> {
                return engineSuite();
            }
            case "search" -> {
                return searchSuite();
            }
            case "soak" -> {
                return soakSuite();
            }
            case "cluster" -> {
                return clusterSuite();
            }
            default -> throw new IllegalArgumentException("--suite must be engine, search, soak or cluster, found '"
                    + suite + "'");
        }
    }

    /**
     * The cluster suite (the cluster build only): the engine suite's workload model and samples, {@code --sets}
     * lesion sets (default 48), measured by the suite the cluster build registers.
     */
    private int clusterSuite() {
        validate();
        org.cruxset.search.bench.ExternalSuite found = null;
        for (org.cruxset.search.bench.ExternalSuite x : java.util.ServiceLoader.load(
                org.cruxset.search.bench.ExternalSuite.class)) {
            if (x.name().equals("cluster")) {
                found = x;
            }
        }
        if (found == null) {
            throw new IllegalArgumentException("--suite cluster needs the cluster build of Cruxset (Apache Spark is not "
                    + "in the default application): build it with 'mvn -B -pl cluster -am package -DskipTests' and run "
                    + "./cruxset-cluster bench --suite cluster");
        }
        SplittableRandom rng = new SplittableRandom(seed);
        GruNetwork net = network(rng);
        InputBatch batch = inputs(rng);
        List<String> labels = new ArrayList<>();
        for (int k = 0; k < classes; k++) {
            labels.add("class" + k);
        }
        Path file;
        try {
            file = Files.createTempFile("cruxset-bench-", ".onnx");
            file.toFile().deleteOnExit();
            Files.write(file, OnnxGruWriter.write(net, List.of(), labels, Preprocessing.NONE, Map.of()));
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write the benchmark model: " + e.getMessage(), e);
        }
        int count = sets > 0 ? sets : 48;
        String description = String.format(Locale.ROOT, "%d samples x %d steps x %d regions; 1 GRU layer of %d units; "
                + "%d classes; %d lesion sets of %d regions, zero fill; seed %d", samples, steps, regions, hidden,
                classes, count, lesionSize, seed);
        found.run(spec.commandLine().getOut(), new org.cruxset.search.bench.ExternalSuite.Workload(file, batch,
                masks(0, count), description), threads.threads());
        return 0;
    }

    private static String fmtSets(double v) {
        return Double.isInfinite(v) ? "never" : String.format(Locale.ROOT, "%.0f", v);
    }

    private int searchSuite() throws java.io.IOException {
        PrintWriter out = spec.commandLine().getOut();
        if (seeds < 1) {
            throw new IllegalArgumentException("--seeds must be at least 1, found " + seeds);
        }
        org.cruxset.search.bench.PlantedProblem.Config cfg = org.cruxset.search.bench.PlantedProblem.benchmark();
        out.printf(Locale.ROOT, "Search suite: planted lesion problems of %d regions (%d redundant groups of %d, %d "
                        + "synergistic pairs: proven minimum %d; traps of %d-%d regions), %d samples from %d subjects, "
                        + "half of them in the search part; criterion binomial:0.05; seeds 1-%d, each run in a fresh "
                        + "store.%n", cfg.regions(), cfg.groups(), cfg.groupSize(), cfg.pairs(),
                cfg.groups() * cfg.groupSize() + cfg.pairs(), cfg.pairs() + cfg.trapsMin(), cfg.pairs() + cfg.trapsMax(),
                cfg.subjects() * cfg.samplesPerSubject(), cfg.subjects(), seeds);
        List<Long> seedList = new ArrayList<>();
        for (long s = 1; s <= seeds; s++) {
            seedList.add(s);
        }
        java.nio.file.Path dir = java.nio.file.Files.createTempDirectory("cruxset-bench-search-");
        long t0 = System.nanoTime();
        List<org.cruxset.search.bench.SearchSuite.Run> runs = new ArrayList<>();
        List<org.cruxset.search.bench.SearchSuite.Row> rows = org.cruxset.search.bench.SearchSuite.run(cfg,
                org.cruxset.search.SearchConfig.read(config), strategies,
                budgets, seedList, dir, out, runs);
        List<String[]> table = new ArrayList<>();
        table.add(new String[] {"strategy", "budget", "runs", "success rate", "median best size", "median sets to best",
            "trapped", "median sample-evaluations", "median seconds", "raced decisions", "surrogate fits (median, s)",
            "skipped (false skips / spot checks)"});
        for (org.cruxset.search.bench.SearchSuite.Row r : rows) {
            table.add(new String[] {r.strategy(), Long.toString(r.budget()), Integer.toString(r.runs()),
                String.format(Locale.ROOT, "%d/%d", r.successes(), r.runs()),
                Double.isInfinite(r.medianBest()) ? "none" : String.format(Locale.ROOT, "%.1f", r.medianBest()),
                Double.isNaN(r.medianSetsToBest()) ? "-" : String.format(Locale.ROOT, "%.0f", r.medianSetsToBest()),
                Integer.toString(r.trapped()), String.format(Locale.ROOT, "%.0f", r.medianSampleEvaluations()),
                String.format(Locale.ROOT, "%.1f", r.medianSeconds()),
                r.strategy().contains("~race") ? String.format(Locale.ROOT, "%.0f%%", 100 * r.racedShare()) : "-",
                r.medianFits() == 0 ? "-" : String.format(Locale.ROOT, "%.0f, %.1f s", r.medianFits(),
                        r.medianFitSeconds()),
                r.candidates() == 0 ? "-" : String.format(Locale.ROOT, "%.1f%% (%d / %d)",
                        100.0 * r.skipped() / r.candidates(), r.falseSkips(), r.spotChecked())});
        }
        // Surrogate-assisted strategies against the plain strategy (genetic for surrogate) with the same racing, paired
        // by seed.
        for (String s : strategies) {
            String plain = s.startsWith("surrogate") ? "genetic" : s.replace("~screen", "").replace("~race", "");
            String baseline = plain + (s.contains("~race") ? "~race" : "");
            if (!strategies.contains(baseline) || !(s.startsWith("surrogate") || s.contains("~screen"))) {
                continue;
            }
            for (org.cruxset.search.bench.SearchSuite.Paired pr
                    : org.cruxset.search.bench.SearchSuite.paired(runs, s, baseline)) {
                    out.printf(Locale.ROOT, "%s at budget %d: scored sets charged until %s's best size was "
                                    + "first reached, median %s vs %.0f (ratio %s; per seed %s vs %s)%n", s, pr.budget(),
                            baseline, fmtSets(pr.median()), pr.baselineMedian(),
                            Double.isInfinite(pr.median()) ? "-" : String.format(Locale.ROOT, "%.2f", pr.ratio()),
                            java.util.Arrays.toString(java.util.Arrays.stream(pr.setsToBaselineBest())
                                    .mapToObj(BenchCommand::fmtSets).toArray()),
                            java.util.Arrays.toString(java.util.Arrays.stream(pr.baselineSetsToBest())
                                    .mapToObj(BenchCommand::fmtSets).toArray()));
            }
        }
        // Racing against the same strategy without it, at the same budget.
        for (org.cruxset.search.bench.SearchSuite.Row raced : rows) {
            if (!raced.strategy().contains("~race")) {
                continue;
            }
            for (org.cruxset.search.bench.SearchSuite.Row plain : rows) {
                if (plain.strategy().equals(raced.strategy().replace("~race", "")) && plain.budget() == raced.budget()) {
                    out.printf(Locale.ROOT, "%s at budget %d: median best size %.1f vs %.1f without racing; "
                                    + "sample-evaluations %.0f vs %.0f (ratio %.2f); wall time %.1f s vs %.1f s "
                                    + "(ratio %.2f)%n", raced.strategy(), raced.budget(), raced.medianBest(),
                            plain.medianBest(), raced.medianSampleEvaluations(), plain.medianSampleEvaluations(),
                            raced.medianSampleEvaluations() / plain.medianSampleEvaluations(),
                            raced.medianSeconds(), plain.medianSeconds(), raced.medianSeconds() / plain.medianSeconds());
                }
            }
        }
        out.println();
        Table.print(out, table);
        out.printf(Locale.ROOT, "%nWall time %.1f s.%n", (System.nanoTime() - t0) / 1e9);
        keepOrDelete(out, dir, "Stores");
        return 0;
    }

    private int soakSuite() throws java.io.IOException {
        PrintWriter out = spec.commandLine().getOut();
        long n = sets > 0 ? sets : 1_000_000;
        java.nio.file.Path dir = java.nio.file.Files.createTempDirectory("cruxset-bench-soak-");
        out.printf(Locale.ROOT, "Soak: %,d random sets (1-30 of 300 regions) of a planted problem scored through the "
                + "scorer and the results store in batches of 1,000; max heap %.0f MB; score cache %d MB.%n", n,
                Runtime.getRuntime().maxMemory() / 1048576.0, org.cruxset.scoring.eval.LesionScorer.CACHE_MB);
        org.cruxset.search.bench.Soak.Result r = org.cruxset.search.bench.Soak.run(n, 1000, dir, out);
        out.printf(Locale.ROOT, "Scored %,d sets of %d samples in %.1f s: %.0f sets/s. Store %,d bytes: %.0f bytes per "
                        + "scored set (%.1f per sample). Heap in use after a collection: %.0f MB at 10%%, %.0f MB at the end.%n",
                r.sets(), r.samples(), r.seconds(), r.setsPerSecond(), r.storeBytes(), r.bytesPerSet(),
                r.bytesPerSet() / r.samples(), r.points().get(0).heapMb(), r.points().get(r.points().size() - 1).heapMb());
        keepOrDelete(out, dir, "Store");
        return 0;
    }

    /** Deletes the suite's stores, or says where they are kept ({@code --keep}). */
    private void keepOrDelete(PrintWriter out, java.nio.file.Path dir, String what) throws java.io.IOException {
        if (keep) {
            out.println(what + " kept in " + dir);
            return;
        }
        try (java.util.stream.Stream<java.nio.file.Path> files = java.nio.file.Files.walk(dir)) {
            for (java.nio.file.Path f : files.sorted(java.util.Comparator.reverseOrder()).toList()) {
                java.nio.file.Files.deleteIfExists(f);
            }
        }
    }

    @Option(names = "--keep", description = "search and soak: keep the stores (default: deleted after measuring).")
    boolean keep;

    private int engineSuite() {
        validate();
        PrintWriter out = spec.commandLine().getOut();
        int nThreads = threads.threads();
        SplittableRandom rng = new SplittableRandom(seed);
        boolean lstm = switch (cell) {
            case "gru" -> false;
            case "lstm" -> true;
            default -> throw new IllegalArgumentException("--cell must be gru or lstm, found '" + cell + "'");
        };
        int gates = lstm ? 4 : 3;
        GruNetwork net = lstm ? null : network(rng);
        org.cruxset.scoring.lstm.LstmNetwork lnet = lstm ? lstmNetwork(rng) : null;
        InputBatch batch = inputs(rng);
        List<String> labels = new ArrayList<>();
        for (int k = 0; k < classes; k++) {
            labels.add("class" + k);
        }
        out.printf(Locale.ROOT, "Workload: %d samples x %d steps x %d regions; 1 %s layer of %d units%s; %d classes; "
                + "seed %d%n", samples, steps, regions, lstm ? "LSTM" : "GRU", hidden, lstm ? ""
                : " (linear_before_reset 1)", classes, seed);
        out.printf(Locale.ROOT, "Lesion sets: %d regions drawn at random, zero fill, %d sets per call on %d thread%s%n",
                lesionSize, SETS_PER_CALL, nThreads, nThreads == 1 ? "" : "s");
        Path file;
        try {
            file = Files.createTempFile("cruxset-bench-", ".onnx");
            Files.write(file, lstm ? OnnxGruWriter.write(lnet, List.of(), labels, Preprocessing.NONE, Map.of())
                    : OnnxGruWriter.write(net, List.of(), labels, Preprocessing.NONE, Map.of()));
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write the benchmark model: " + e.getMessage(), e);
        }
        OnnxOptions options = OnnxOptions.defaults();
        double gflopPerSet = usefulGflopPerSet(gates, batch);
        out.printf(Locale.ROOT, "Useful work per scored set: %.2f GFLOP (recurrence 2 x H x %dH per sample-step, plus the "
                + "%d-region input correction 2 x %d x %dH)%n", gflopPerSet, gates, lesionSize, lesionSize, gates);
        try (Decoder nat = OnnxModels.load(file, options.withEngine(Engine.NATIVE));
             Decoder ort = OnnxModels.load(file, options.withEngine(Engine.ONNXRUNTIME));
             Decoder ortIntra = OnnxModels.load(file, options.withEngine(Engine.ONNXRUNTIME), nThreads)) {
            if (nat instanceof NativeRecurrentDecoder g) {
                double mb = g.projectionCacheBytes(batch) / (double) (1 << 20);
                out.printf(Locale.ROOT, "Projection cache: %.1f MB (4 bytes x %d x %d units x %d sample-steps), limit %d MB: %s%n",
                        mb, gates, hidden, (long) samples * steps, g.projectionCacheLimitMB(),
                        g.cachesProjections(batch) ? "cached" : "not cached, full projection per set");
            }
            out.printf(Locale.ROOT, "Native kernels: %s%s%n", Kernels.get().name(), Kernels.vectorAvailable() ? ""
                    : " (module jdk.incubator.vector absent: plain-Java fallback; the cruxset launcher adds it)");
            Meter n = new Meter(OnnxModels.NATIVE, nat.bind(batch), nThreads);
            List<Meter> meters = new ArrayList<>(List.of(n,
                    new Meter(OnnxModels.ONNXRUNTIME + " (1 intra-op thread per run, " + nThreads + " callers)",
                            ort.bind(batch), nThreads),
                    new Meter(OnnxModels.ONNXRUNTIME + " (" + nThreads + " intra-op threads, 1 caller)",
                            ortIntra.bind(batch), 1)));
            for (Meter m : meters) {
                m.warmUp(out);
            }
            // Alternate the engines in rounds so that all see the same background load.
            for (int round = 0; round < ROUNDS; round++) {
                int quota = sets > 0 ? sets / ROUNDS + (round < sets % ROUNDS ? 1 : 0) : 0;
                for (Meter m : meters) {
                    m.round(sets > 0, quota, seconds / ROUNDS);
                }
            }
            Meter best = meters.get(1);
            for (Meter m : meters) {
                m.report(out, gflopPerSet);
                if (m != n && m.rate() > best.rate()) {
                    best = m;
                }
            }
            out.printf(Locale.ROOT, "Ratio native / %s (the faster ONNX Runtime configuration): %.2f%n", best.engine,
                    n.rate() / best.rate());
            double reference = MachineReference.blockedProduct(Kernels.get(), nThreads, 5);
            out.printf(Locale.ROOT, "Machine reference: blocked float32 product [%d x %d] x [%d x %d] on the native "
                            + "kernels, %d thread%s: %.1f GFLOP/s; native useful work = %.0f%% of it%n",
                    MachineReference.ROWS, MachineReference.DEPTH, MachineReference.DEPTH, MachineReference.COLUMNS,
                    nThreads, nThreads == 1 ? "" : "s", reference, 100 * n.rate() * gflopPerSet / reference);
            MachineReference.reportedPeak().ifPresentOrElse(p -> out.printf(Locale.ROOT,
                    "Theoretical FMA peak: %.0f GFLOP/s = %s; native useful work = %.0f%% of it%s%n", p.gflops(), p.basis(),
                    100 * n.rate() * gflopPerSet / p.gflops(), reference > p.gflops()
                            ? " (the measured reference exceeds it: the reported clock is below the running clock)" : ""),
                    () -> out.println("Theoretical FMA peak: not reported (no /proc/cpuinfo with flags and cpu MHz)"));
            if (net != null) {
                gradientPass(out, net, batch, n.rate(), nThreads);
            }
            for (Meter m : meters.subList(1, meters.size())) {
                int common = Math.min(n.results.size(), m.results.size());
                double diff = 0;
                for (int i = 0; i < common; i++) {
                    diff = Math.max(diff, maxAbsDiff(n.results.get(i), m.results.get(i)));
                }
                out.printf(Locale.ROOT, "Max |p_native - p_%s| over the %d sets both scored: %.3g%n", m.engine, common, diff);
            }
            printMemory(out);
        } finally {
            try {
                Files.deleteIfExists(file);
            } catch (IOException ignored) {
                // a temporary file left behind is harmless
            }
        }
        return 0;
    }

    /** GFLOP of one scored set of the one-layer workload: the recurrence plus the lesioned regions' correction. */
    private double usefulGflopPerSet(int gates, InputBatch batch) {
        long sampleSteps = 0;
        for (int s = 0; s < batch.size(); s++) {
            sampleSteps += batch.length(s);
        }
        double perStep = 2.0 * hidden * gates * hidden + 2.0 * lesionSize * gates * hidden;
        return perStep * sampleSteps / 1e9;
    }

    /** Peak heap (sum of the pools' peaks) and, on Linux, the process's peak resident memory. */
    private static void printMemory(PrintWriter out) {
        long heap = 0;
        for (java.lang.management.MemoryPoolMXBean pool : java.lang.management.ManagementFactory.getMemoryPoolMXBeans()) {
            if (pool.getType() == java.lang.management.MemoryType.HEAP && pool.getPeakUsage() != null) {
                heap += pool.getPeakUsage().getUsed();
            }
        }
        String rss = "not reported";
        try {
            for (String line : Files.readAllLines(Path.of("/proc/self/status"))) {
                if (line.startsWith("VmHWM:")) {
                    rss = String.format(Locale.ROOT, "%.0f MB", Long.parseLong(line.replaceAll("[^0-9]", "")) / 1024.0);
                }
            }
        } catch (IOException | RuntimeException e) {
            // not Linux: leave "not reported"
        }
        out.printf(Locale.ROOT, "Peak memory: heap %.0f MB (sum of the pools' peaks, max heap %.0f MB); process "
                + "resident peak %s (includes ONNX Runtime's native memory)%n", heap / 1048576.0,
                Runtime.getRuntime().maxMemory() / 1048576.0, rss);
    }

    /**
     * Times one gradient pass (the true-class score's input gradient of every sample, as {@code saliency --method
     * gradient} computes it) after a warm-up pass on a few samples, and states it in scored sets of the native engine.
     */
    private static void gradientPass(PrintWriter out, GruNetwork net, InputBatch batch, double nativeRate, int threads) {
        int[] targets = new int[batch.size()];
        for (int s = 0; s < targets.length; s++) {
            targets[s] = s % net.classes();
        }
        org.cruxset.scoring.saliency.Saliency.Settings settings = new org.cruxset.scoring.saliency.Saliency.Settings(
                org.cruxset.scoring.saliency.Saliency.Method.GRADIENT, false, 1, 1, 0, 1, 1e-2, threads, false);
        int warm = Math.min(batch.size(), 4 * threads);
        float[][] series = new float[warm][];
        int[] lengths = new int[warm];
        for (int s = 0; s < warm; s++) {
            series[s] = batch.series(s);
            lengths[s] = batch.length(s);
        }
        org.cruxset.scoring.saliency.Saliency.gradients(net, InputBatch.of(batch.regions(), series, lengths),
                java.util.Arrays.copyOf(targets, warm), org.cruxset.scoring.decoder.LesionFill.ZERO, settings);
        double[] seconds = new double[3];
        for (int i = 0; i < seconds.length; i++) {
            long t0 = System.nanoTime();
            org.cruxset.scoring.saliency.Saliency.gradients(net, batch, targets,
                    org.cruxset.scoring.decoder.LesionFill.ZERO, settings);
            seconds[i] = (System.nanoTime() - t0) / 1e9;
        }
        java.util.Arrays.sort(seconds);
        out.printf(Locale.ROOT, "Gradient pass (input gradients of every sample, float fast path), 3 passes: best "
                + "%.2f s, median %.2f s, as long as %.1f and %.1f scored sets of the native engine%n", seconds[0],
                seconds[1], seconds[0] * nativeRate, seconds[1] * nativeRate);
    }

    private void validate() {
        if (!(seconds > 0) && sets <= 0) {
            throw new IllegalArgumentException("--seconds must be positive (or give --sets), found " + seconds);
        }
        if (sets < 0) {
            throw new IllegalArgumentException("--sets must be at least 0, found " + sets);
        }
        positive("--samples", samples);
        positive("--regions", regions);
        positive("--hidden", hidden);
        positive("--steps", steps);
        if (classes < 2) {
            throw new IllegalArgumentException("--classes must be at least 2, found " + classes);
        }
        if (lesionSize < 0 || lesionSize > regions) {
            throw new IllegalArgumentException("--lesion-size must be between 0 and --regions (" + regions + "), found " + lesionSize);
        }
        if ((long) samples * steps * regions > Integer.MAX_VALUE / 2) {
            throw new IllegalArgumentException("the workload of " + (long) samples * steps * regions + " input values is too large");
        }
    }

    private static void positive(String name, int v) {
        if (v < 1) {
            throw new IllegalArgumentException(name + " must be at least 1, found " + v);
        }
    }

    /** One engine's bound batch and what it has scored: sets 0, 1, 2, ... in calls of {@link #SETS_PER_CALL}. */
    private final class Meter {
        final String engine;
        final Decoder.Bound bound;
        final int nThreads;
        final List<float[][]> results = new ArrayList<>();
        int scored;
        long nanos;

        Meter(String engine, Decoder.Bound bound, int nThreads) {
            this.engine = engine;
            this.bound = bound;
            this.nThreads = nThreads;
        }

        /** Scores warm-up sets (not counted) for at least two calls and {@link #WARMUP_SECONDS}. */
        void warmUp(PrintWriter out) {
            long w0 = System.nanoTime();
            long first = -1;
            int calls = 0;
            while (calls < 2 || System.nanoTime() - w0 < WARMUP_SECONDS * 1e9) {
                long c0 = System.nanoTime();
                bound.probabilities(masks(-1 - (calls + 1) * SETS_PER_CALL, SETS_PER_CALL), nThreads);
                if (first < 0) {
                    first = System.nanoTime() - c0;
                }
                calls++;
            }
            out.printf(Locale.ROOT, "%s: warm-up %d calls in %.1f s (first call %.2f s)%n", engine, calls,
                    (System.nanoTime() - w0) / 1e9, first / 1e9);
        }

        /** Scores {@code quota} more sets when counting, else sets for {@code wall} seconds. */
        void round(boolean counting, int quota, double wall) {
            long t0 = System.nanoTime();
            int done = 0;
            while (counting ? done < quota : System.nanoTime() - t0 < wall * 1e9) {
                int count = counting ? Math.min(SETS_PER_CALL, quota - done) : SETS_PER_CALL;
                float[][][] p = bound.probabilities(masks(scored, count), nThreads);
                for (int i = 0; i < count && results.size() < KEPT_SETS; i++) {
                    results.add(p[i]);
                }
                scored += count;
                done += count;
            }
            nanos += System.nanoTime() - t0;
        }

        double rate() {
            return scored / (nanos / 1e9);
        }

        void report(PrintWriter out, double gflopPerSet) {
            out.printf(Locale.ROOT, "%-58s %5d sets in %5.1f s = %6.2f scored sets/s = %6.1f GFLOP/s useful%n",
                    engine + ":", scored, nanos / 1e9, rate(), rate() * gflopPerSet);
        }
    }

    private static double maxAbsDiff(float[][] a, float[][] b) {
        double max = 0;
        for (int s = 0; s < a.length; s++) {
            for (int k = 0; k < a[s].length; k++) {
                max = Math.max(max, Math.abs(a[s][k] - b[s][k]));
            }
        }
        return max;
    }

    /** Zero-fill masks of sets {@code from .. from + count), each drawn from its own index and the seed. */
    private List<InputMask> masks(long from, int count) {
        List<InputMask> out = new ArrayList<>(count);
        int[] pool = new int[regions];
        for (int i = 0; i < count; i++) {
            SplittableRandom r = new SplittableRandom(seed * 0x9E3779B97F4A7C15L + from + i);
            for (int k = 0; k < regions; k++) {
                pool[k] = k;
            }
            int[] chosen = new int[lesionSize];
            for (int k = 0; k < lesionSize; k++) {
                int j = k + r.nextInt(regions - k);
                int tmp = pool[k];
                pool[k] = pool[j];
                pool[j] = tmp;
                chosen[k] = pool[k];
            }
            out.add(InputMask.zero(RegionSet.of(regions, chosen)));
        }
        return out;
    }

    /** A random single-layer GRU with weights uniform in ±1/√fan-in, so that gates stay away from saturation. */
    private GruNetwork network(SplittableRandom rng) {
        double wScale = 1 / Math.sqrt(regions);
        double rScale = 1 / Math.sqrt(hidden);
        GruLayer layer = new GruLayer(regions, hidden, uniform(rng, 3 * hidden * regions, wScale),
                uniform(rng, 3 * hidden * hidden, rScale), uniform(rng, 3 * hidden, rScale), uniform(rng, 3 * hidden, rScale),
                true);
        return new GruNetwork(List.of(layer), classes, uniform(rng, classes * hidden, rScale), uniform(rng, classes, rScale));
    }

    /** A random single-layer LSTM with weights uniform in ±1/√fan-in. */
    private org.cruxset.scoring.lstm.LstmNetwork lstmNetwork(SplittableRandom rng) {
        double wScale = 1 / Math.sqrt(regions);
        double rScale = 1 / Math.sqrt(hidden);
        org.cruxset.scoring.lstm.LstmLayer layer = new org.cruxset.scoring.lstm.LstmLayer(regions, hidden,
                uniform(rng, 4 * hidden * regions, wScale), uniform(rng, 4 * hidden * hidden, rScale),
                uniform(rng, 4 * hidden, rScale), uniform(rng, 4 * hidden, rScale));
        return new org.cruxset.scoring.lstm.LstmNetwork(List.of(layer), classes, uniform(rng, classes * hidden, rScale),
                uniform(rng, classes, rScale));
    }

    private static float[] uniform(SplittableRandom rng, int n, double scale) {
        float[] v = new float[n];
        for (int i = 0; i < n; i++) {
            v[i] = (float) ((2 * rng.nextDouble() - 1) * scale);
        }
        return v;
    }

    /** Standard normal inputs, every sample {@link #steps} long. */
    private InputBatch inputs(SplittableRandom rng) {
        float[][] series = new float[samples][];
        int[] lengths = new int[samples];
        for (int s = 0; s < samples; s++) {
            lengths[s] = steps;
            float[] x = new float[steps * regions];
            for (int i = 0; i < x.length; i++) {
                x[i] = (float) rng.nextGaussian();
            }
            series[s] = x;
        }
        return InputBatch.of(regions, series, lengths);
    }
}
