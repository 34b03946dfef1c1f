package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.saliency.Attributions;
import org.cruxset.scoring.saliency.Saliency;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset saliency}: gradient attributions of each held-out sample's true class, per region and network. */
@Command(name = "saliency", mixinStandardHelpOptions = true,
        description = {"Attribute the decoder's true-class output to its inputs, per region, network, class and time "
                + "point, and write rankings for search --ranking and curve.",
            "",
            "For models Cruxset's engine runs: exact gradients by backpropagation through time (gradient, "
                + "times-input, integrated gradients, SmoothGrad). For models only ONNX Runtime runs: region-level "
                + "central finite differences (a constant added to a region's whole series). Computed on the search "
                + "part, with respect to the model's inputs after its preprocessing."})
public final class SaliencyCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Option(names = "--method", defaultValue = "gradient", paramLabel = "M",
            description = "gradient, times-input (gradient x input), integrated (integrated gradients from the lesion "
                    + "mode's replacement values), smooth (SmoothGrad) or differences (finite differences by region; "
                    + "the only method for models ONNX Runtime runs). Default: ${DEFAULT-VALUE}.")
    String method;

    @Option(names = "--log-probability", description = "Attribute the true class's log-probability instead of its "
            + "score before the softmax.")
    boolean logProbability;

    @Option(names = "--steps", defaultValue = "64", paramLabel = "N",
            description = "Integrated gradients: steps of the path integral. Default: ${DEFAULT-VALUE}.")
    int steps;

    @Option(names = "--draws", defaultValue = "20", paramLabel = "N",
            description = "SmoothGrad: noisy copies per sample. Default: ${DEFAULT-VALUE}.")
    int draws;

    @Option(names = "--noise", defaultValue = "0.1", paramLabel = "S",
            description = "SmoothGrad: noise standard deviation as a share of each sample's input range. Default: ${DEFAULT-VALUE}.")
    double noise;

    @Option(names = "--step", defaultValue = "0.05", paramLabel = "H",
            description = "Finite differences: the constant added to and taken from a region's series. Default: ${DEFAULT-VALUE}.")
    double step;

    @Option(names = "--map-class", paramLabel = "CLASS",
            description = "Also write a regions x time map averaged over this class's samples.")
    String mapClass;

    @Option(names = "--map-sample", paramLabel = "ID", description = "Also write the regions x time map of this sample.")
    String mapSample;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of SmoothGrad's noise. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        Saliency.Method m;
        try {
            m = Saliency.Method.parse(method);
        } catch (IllegalArgumentException e) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--method: " + e.getMessage());
        }
        if (steps < 1 || draws < 1 || !(noise >= 0) || !(step > 0)) {
            throw new CommandLine.ParameterException(spec.commandLine(),
                    "--steps and --draws must be at least 1, --noise 0 or more and --step positive");
        }
        Cohort c = cohort.read();
        Atlas atlas = c.atlas();
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings ss = scoring.settings("saliency", command, seed, Double.POSITIVE_INFINITY,
                model.threads());
        try (Decoder decoder = model.open(); ScoringSession session = ScoringSession.open(decoder, c, ss)) {
            ScoringSession.Part part = session.search();
            ModelInputs in = part.inputs();
            Reports.header(pw, session);
            String note = "";
            java.util.Optional<org.cruxset.scoring.gru.GruNetwork> gru = decoder instanceof NativeRecurrentDecoder nat
                    ? nat.gruNetwork() : java.util.Optional.empty();
            if (gru.isEmpty() && m != Saliency.Method.DIFFERENCES) {
                note = decoder instanceof NativeRecurrentDecoder
                        ? " (input gradients are implemented for GRU decoders only, this one is an LSTM: " + m.label()
                        + " was asked for, finite differences by region are computed instead)"
                        : " (the model is run by ONNX Runtime, which gives no gradients: " + m.label()
                        + " was asked for, finite differences by region are computed instead)";
                m = Saliency.Method.DIFFERENCES;
            }
            Saliency.Settings settings = new Saliency.Settings(m, logProbability, steps, draws, noise, seed, step,
                    model.threads(), false);
            int[] targets = in.labels();
            long t0 = System.nanoTime();
            Attributions a = gru.isPresent() && m != Saliency.Method.DIFFERENCES
                    ? Saliency.gradients(gru.get(), in.batch(), targets, part.scorer().fill(), settings)
                    : Saliency.differences(decoder.bind(in.batch()), in.batch(), targets, settings);
            double seconds = (System.nanoTime() - t0) / 1e9;
            double perSet = secondsPerScoredSet(decoder, in);
            pw.printf(Locale.ROOT, "Method: %s of the %s%s, on the search part (%d samples), with respect to the "
                    + "model's inputs%s.%n", describe(m, settings), settings.target(), note, in.size(),
                    decoder.card().preprocessing() == org.cruxset.scoring.decoder.Preprocessing.NONE ? ""
                            : " after its preprocessing (" + decoder.card().preprocessing() + ")");
            pw.printf(Locale.ROOT, "Time: %.2f s, as long as %.1f scored sets of the search part on this engine "
                    + "(%.3f s per set measured on 8 random single-region lesions).%n", seconds, seconds / perSet, perSet);
            if (m == Saliency.Method.INTEGRATED) {
                pw.printf(Locale.ROOT, "Completeness gap: the attributions of all samples miss f(x) - f(baseline) by "
                        + "%.2f%% (sum of |gaps| over sum of |changes|); more --steps shrink it.%n",
                        100 * a.relativeCompletenessGap());
            }
            report(pw, a, in, atlas);
            maps(pw, a, in, atlas);
        }
        return 0;
    }

    private String describe(Saliency.Method m, Saliency.Settings s) {
        return switch (m) {
            case GRADIENT -> "gradient";
            case TIMES_INPUT -> "gradient x input";
            case INTEGRATED -> "integrated gradients (" + s.steps() + " steps, baseline: every region replaced as "
                    + "the lesion mode does)";
            case SMOOTH -> "SmoothGrad (" + s.draws() + " draws, noise " + s.noise() + " of each sample's range, seed "
                    + s.seed() + ")";
            case DIFFERENCES -> "central finite differences by region (+-" + s.step() + " added to a region's whole "
                    + "series; 2 x regions scored passes)";
        };
    }

    /** Seconds per scored set on these inputs: 8 random single-region lesions timed after one warm-up set. */
    private double secondsPerScoredSet(Decoder decoder, ModelInputs in) {
        Decoder.Bound b = decoder.bind(in.batch());
        int n = in.batch().regions();
        SplittableRandom rng = new SplittableRandom(seed);
        b.probabilities(List.of(InputMask.zero(RegionSet.of(n, rng.nextInt(n)))), model.threads());
        long t0 = System.nanoTime();
        for (int i = 0; i < 8; i++) {
            b.probabilities(List.of(InputMask.zero(RegionSet.of(n, rng.nextInt(n)))), model.threads());
        }
        return (System.nanoTime() - t0) / 1e9 / 8;
    }

    private void report(PrintWriter pw, Attributions a, ModelInputs in, Atlas atlas) {
        int n = a.regions();
        int[] regionOf = in.regionOfInput();
        double[] abs = a.perRegion(null, true);
        double[] signed = a.perRegion(null, false);
        List<String> classes = in.classLabels();
        double[][] perClass = new double[classes.size()][];
        for (int k = 0; k < classes.size(); k++) {
            boolean[] which = new boolean[in.size()];
            for (int s = 0; s < which.length; s++) {
                which[s] = in.label(s) == k;
            }
            perClass[k] = a.perRegion(which, true);
        }
        List<Integer> order = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            order.add(i);
        }
        order.sort((x, y) -> abs[y] != abs[x] ? Double.compare(abs[y], abs[x]) : Integer.compare(x, y));
        Map<String, Double> net = new LinkedHashMap<>();
        for (int i : order) {
            net.merge(atlas.region(regionOf[i]).network(), abs[i], Double::sum);
        }
        List<Map.Entry<String, Double>> nets = new ArrayList<>(net.entrySet());
        nets.sort((x, y) -> Double.compare(y.getValue(), x.getValue()));
        pw.println();
        pw.println("Regions by mean absolute attribution (over time points and samples), top 15:");
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"rank", "region", "network", "mean |attribution|", "mean signed sum over time"});
        for (int r = 0; r < Math.min(15, n); r++) {
            int i = order.get(r);
            rows.add(new String[] {Integer.toString(r + 1), atlas.region(regionOf[i]).name(),
                atlas.region(regionOf[i]).network(), g4(abs[i]), g4(signed[i])});
        }
        Table.print(pw, rows);
        pw.println();
        pw.println("Networks by summed attribution of their regions (group saliency):");
        rows = new ArrayList<>();
        rows.add(new String[] {"rank", "network", "summed mean |attribution|"});
        for (int r = 0; r < nets.size(); r++) {
            rows.add(new String[] {Integer.toString(r + 1), nets.get(r).getKey(), g4(nets.get(r).getValue())});
        }
        Table.print(pw, rows);
        Path out = scoring.out();
        Path regionsTsv = out.resolve("saliency-regions.tsv");
        TextFiles.write(regionsTsv, w -> {
            StringBuilder head = new StringBuilder("region\tnetwork\tmean_abs\tmean_signed_sum");
            for (String k : classes) {
                head.append("\tmean_abs_").append(k);
            }
            w.write(head + "\n");
            for (int i : order) {
                StringBuilder line = new StringBuilder(atlas.region(regionOf[i]).name() + "\t"
                        + atlas.region(regionOf[i]).network() + "\t" + TextFiles.num(abs[i]) + "\t" + TextFiles.num(signed[i]));
                for (double[] pc : perClass) {
                    line.append('\t').append(TextFiles.num(pc[i]));
                }
                w.write(line + "\n");
            }
        });
        Path networksTsv = out.resolve("saliency-networks.tsv");
        TextFiles.write(networksTsv, w -> {
            w.write("network\tsummed_mean_abs\n");
            for (Map.Entry<String, Double> e : nets) {
                w.write(e.getKey() + "\t" + TextFiles.num(e.getValue()) + "\n");
            }
        });
        List<String> ru = new ArrayList<>();
        List<Double> rv = new ArrayList<>();
        for (int i : order) {
            ru.add(atlas.region(regionOf[i]).name());
            rv.add(abs[i]);
        }
        String source = "saliency-" + a.method();
        Path rankRegions = out.resolve("ranking-saliency-regions.tsv");
        RankingFile.write(rankRegions, new Ranking(Ranking.Kind.REGIONS, ru, rv,
                java.util.Collections.nCopies(ru.size(), source), ru.size() == atlas.size(), "search",
                "mean absolute " + a.method() + " attribution of the " + a.target()));
        List<String> nu = new ArrayList<>();
        List<Double> nv = new ArrayList<>();
        for (Map.Entry<String, Double> e : nets) {
            nu.add("network:" + e.getKey());
            nv.add(e.getValue());
        }
        Path rankNets = out.resolve("ranking-saliency-networks.tsv");
        RankingFile.write(rankNets, new Ranking(Ranking.Kind.NETWORKS, nu, nv,
                java.util.Collections.nCopies(nu.size(), source), nu.size() == atlas.networks().size(), "search",
                "summed mean absolute " + a.method() + " attribution of the " + a.target()));
        pw.printf("%nWritten: %s, %s, %s and %s (give them to search --ranking or curve --ranking).%n", regionsTsv,
                networksTsv, rankRegions, rankNets);
    }

    private void maps(PrintWriter pw, Attributions a, ModelInputs in, Atlas atlas) {
        if (mapClass == null && mapSample == null) {
            return;
        }
        if (!a.perTimePoint()) {
            pw.println("No time map: finite differences by region give one value per region, not per time point.");
            return;
        }
        boolean[] which = new boolean[in.size()];
        String what;
        if (mapSample != null) {
            int s = in.sampleIds().indexOf(mapSample);
            if (s < 0) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--map-sample: no sample '" + mapSample
                        + "' in the search part (its samples are listed in the cohort's samples.tsv; the search part is "
                        + "half of the held-out subjects)");
            }
            which[s] = true;
            what = "sample-" + mapSample;
        } else {
            int k = in.classLabels().indexOf(mapClass);
            if (k < 0) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--map-class: no class '" + mapClass
                        + "'; the classes are " + in.classLabels());
            }
            for (int s = 0; s < which.length; s++) {
                which[s] = in.label(s) == k;
            }
            what = "class-" + mapClass;
        }
        int n = a.regions();
        int maxLen = 0;
        for (int s = 0; s < which.length; s++) {
            if (which[s]) {
                maxLen = Math.max(maxLen, a.lengths()[s]);
            }
        }
        double[][] sum = new double[n][maxLen];
        int[] count = new int[maxLen];
        for (int s = 0; s < which.length; s++) {
            if (!which[s]) {
                continue;
            }
            for (int t = 0; t < a.lengths()[s]; t++) {
                count[t]++;
                for (int i = 0; i < n; i++) {
                    sum[i][t] += a.maps()[s][t * n + i];
                }
            }
        }
        int[] regionOf = in.regionOfInput();
        Path file = scoring.out().resolve("saliency-map-" + what.replaceAll("[^A-Za-z0-9._-]", "_") + ".tsv");
        int len = maxLen;
        TextFiles.write(file, w -> {
            StringBuilder head = new StringBuilder("region");
            for (int t = 0; t < len; t++) {
                head.append("\tt").append(t);
            }
            w.write(head + "\n");
            for (int i = 0; i < n; i++) {
                StringBuilder line = new StringBuilder(atlas.region(regionOf[i]).name());
                for (int t = 0; t < len; t++) {
                    line.append('\t').append(TextFiles.num(sum[i][t] / Math.max(1, count[t])));
                }
                w.write(line + "\n");
            }
        });
        pw.printf("Regions x time map (signed, averaged over the samples present at each time point): %s%n", file);
    }


    private static String g4(double v) {
        return String.format(Locale.ROOT, "%.4g", v);
    }
}
