package org.cruxset.search.report;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.stream.Stream;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.cohort.TsvTable;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.stats.ClusteredStats;
import org.cruxset.scoring.store.StoreView;
import org.cruxset.search.StrategyTests;
import org.knowm.xchart.CategoryChart;
import org.knowm.xchart.HeatMapChart;
import org.knowm.xchart.XYChart;
import org.knowm.xchart.XYSeries;

/**
 * The report of an output folder: one self-contained HTML page (figures inlined as SVG, no script or style from the
 * network), every figure as SVG and PNG, region values as TSV and, given the atlas as a NIfTI-1 label image, one map
 * per measure. It reads the results store ({@link StoreView}) and the tables the commands left in the folder; it never
 * calls a decoder, so it can be rebuilt at any time.
 */
public final class Report {
    /** The caution every report carries, at the top and at the end. */
    public static final String CAUTION = "A virtual lesion of a decoder describes the decoder, not causal brain "
            + "function: a region this decoder cannot do without is a region the model relies on, not a region the "
            + "brain needs. These results are not for clinical decisions.";

    /** What was written. */
    public record Written(Path html, List<Path> figures, Path regionValues, List<Path> maps, List<String> notes) {
    }

    private final Path folder;
    private final Path out;
    private final Atlas atlas;
    private final NiftiLabels image;
    private final StringBuilder html = new StringBuilder();
    private final Plots plots;
    private final List<String> notes = new ArrayList<>();
    private final Set<String> methods = new LinkedHashSet<>();
    /** Region name → measure → value, for region-values.tsv and the maps. */
    private final Map<String, Map<String, Double>> regionValues = new TreeMap<>();

    private Report(Path folder, Path out, Atlas atlas, NiftiLabels image) {
        this.folder = folder;
        this.out = out;
        this.atlas = atlas;
        this.image = image;
        this.plots = new Plots(out.resolve("figures"));
    }

    /**
     * Builds the report of {@code folder} (its results.sqlite and tables) into {@code out}.
     *
     * @param atlas the atlas, for networks and map labels; {@code null} when not given
     * @param image the atlas as a NIfTI-1 label image; {@code null} for no maps
     */
    public static Written build(Path folder, Path out, Atlas atlas, NiftiLabels image) {
        return new Report(folder, out, atlas, image).build();
    }

    private Written build() {
        StoreView.Snapshot s = StoreView.read(folder.resolve("results.sqlite"));
        CollapseCriterion criterion = s.searches().isEmpty() ? CollapseCriterion.defaults()
                : CollapseCriterion.parse(s.searches().get(s.searches().size() - 1).criterion());
        html.append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>Cruxset report</title>\n")
                .append("<style>").append(CSS).append("</style></head><body>\n");
        html.append("<h1>Cruxset report</h1>\n");
        caution();
        p("Built from <code>" + esc(s.file().toString()) + "</code> and the tables beside it, without a decoder call. "
                + "The report covers the scoring context of the latest search in the store: model "
                + "<code>" + esc(shortHash(s.modelHash())) + "</code>, lesion mode <code>" + esc(s.lesionMode())
                + "</code>, preprocessing <code>" + esc(s.preprocessing()) + "</code>; " + s.runs()
                + " run(s) in that context.");
        dataAndModel(s, criterion);
        criticalSets(s);
        fronts(s, criterion);
        anytime(s, criterion);
        deletionCurve();
        values();
        interactions();
        audit();
        Path regionTsv = regionTable();
        List<Path> maps = maps();
        methodsParagraph(s, criterion);
        html.append("<h2 id=\"cautions\">Cautions</h2>\n");
        caution();
        p("Scores on the search part were used to choose the sets; only the confirmation part (subjects the search "
                + "never saw) gives an unselected estimate. A smaller critical set found by a search proves a larger "
                + "one is not minimal; not finding one proves nothing unless a certificate says more.");
        html.append(SCRIPT).append("</body></html>\n");
        Path page = out.resolve("report.html");
        try {
            Files.createDirectories(out);
            Files.writeString(page, html.toString(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + page + ": " + e.getMessage(), e);
        }
        List<Path> figs = new ArrayList<>();
        for (Plots.Figure f : plots.figures()) {
            figs.add(out.resolve("figures").resolve(f.name() + ".svg"));
        }
        return new Written(page, figs, regionTsv, maps, List.copyOf(notes));
    }

    // ---- sections ----

    private void dataAndModel(StoreView.Snapshot s, CollapseCriterion criterion) {
        h2("data", "Data and model");
        if (s.intact() == null) {
            p("The store holds no intact score in this context.");
            return;
        }
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"part", "samples", "intact accuracy (95% Wilson)", "chance (majority class)",
            "mean true-class probability"});
        rows.add(intactRow("search", s.intact()));
        if (s.intactConfirm() != null) {
            rows.add(intactRow("confirmation", s.intactConfirm()));
        }
        table(rows);
        int limit = criterion.criticalCount(s.intact().n(), s.intact().chance(), s.intact().score());
        p("Critical means " + esc(criterion.describe()) + ": on the search part, at most " + limit + " of "
                + s.intact().n() + " samples correct (accuracy " + f3((double) limit / s.intact().n()) + ").");
        methods.add("wilson");
        if (s.confusion() != null && !s.classes().isEmpty()) {
            int k = s.classes().size();
            HeatMapChart c = Plots.heat("Intact decoder, search part: confusion matrix", "predicted class",
                    "true class", k, false, "0");
            List<Number[]> cells = new ArrayList<>();
            for (int t = 0; t < k; t++) {
                for (int q = 0; q < k; q++) {
                    cells.add(new Number[] {q, t, s.confusion()[t][q]});
                }
            }
            int most = 1;
            for (int[] row : s.confusion()) {
                for (int v : row) {
                    most = Math.max(most, v);
                }
            }
            c.getStyler().setMin(0);
            c.getStyler().setMax(most);
            c.addSeries("samples", s.classes(), s.classes(), cells);
            figure("confusion", "Confusion matrix of the intact decoder on the search part (counts of samples; rows: "
                    + "true class, columns: predicted).", c);
        }
    }

    private static String[] intactRow(String part, StoreView.Eval e) {
        return new String[] {part, Integer.toString(e.n()), f3(e.accuracy()) + " (" + f3(e.wilsonLow()) + "-"
            + f3(e.wilsonHigh()) + ")", f3(e.chance()), f3(e.meanTrueProb())};
    }

    private void criticalSets(StoreView.Snapshot s) {
        h2("critical", "Critical sets");
        Map<String, List<StoreView.Reported>> bySet = new LinkedHashMap<>();
        Map<String, Set<String>> foundBy = new LinkedHashMap<>();
        for (StoreView.SearchRun r : s.searches()) {
            for (StoreView.Reported x : r.reported()) {
                String key = sorted(x.search().regionNames());
                bySet.computeIfAbsent(key, k -> new ArrayList<>()).add(x);
                foundBy.computeIfAbsent(key, k -> new TreeSet<>()).add(r.label());
            }
        }
        if (bySet.isEmpty()) {
            p("No search in this context reported a critical set.");
            return;
        }
        List<String> keys = new ArrayList<>(bySet.keySet());
        keys.sort((a, b) -> {
            int c = Integer.compare(bySet.get(a).get(0).search().setSize(), bySet.get(b).get(0).search().setSize());
            return c != 0 ? c : a.compareTo(b);
        });
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"regions", "size", "networks", "search accuracy (95% Wilson)", "search p (at chance)",
            "confirmation accuracy (95% Wilson)", "confirmed", "certificate", "found by"});
        // The sets a reader needs: the smallest found and those at most two regions larger, at most 25 rows; the rest
        // (e.g. a random search's large sets) are counted below the table.
        int smallestSize = bySet.get(keys.get(0)).get(0).search().setSize();
        List<String> shown = new ArrayList<>();
        Set<String> leftOutBy = new TreeSet<>();
        int leftOutMin = Integer.MAX_VALUE;
        int leftOutMax = 0;
        for (String key : keys) {
            int size = bySet.get(key).get(0).search().setSize();
            if (size <= smallestSize + 2 && shown.size() < 25) {
                shown.add(key);
            } else {
                leftOutBy.addAll(foundBy.get(key));
                leftOutMin = Math.min(leftOutMin, size);
                leftOutMax = Math.max(leftOutMax, size);
            }
        }
        for (String key : shown) {
            StoreView.Reported x = bySet.get(key).get(0);
            String cert = "none";
            for (StoreView.Reported y : bySet.get(key)) {
                if (y.certificate() != null) {
                    cert = y.certificate() + (Boolean.TRUE.equals(y.certificateHolds()) ? "" : " (does not hold)");
                    if (Boolean.TRUE.equals(y.certificateHolds())) {
                        break;
                    }
                }
            }
            rows.add(new String[] {key, Integer.toString(x.search().setSize()), networks(key),
                f3(x.search().accuracy()) + " (" + f3(x.search().wilsonLow()) + "-" + f3(x.search().wilsonHigh()) + ")",
                g3(x.search().pValue()), x.confirm() == null ? "-" : f3(x.confirm().accuracy()) + " ("
                    + f3(x.confirm().wilsonLow()) + "-" + f3(x.confirm().wilsonHigh()) + ")",
                x.confirmCritical() == null ? "-" : x.confirmCritical() ? "yes" : "NO", cert,
                String.join(", ", foundBy.get(key))});
        }
        table(rows);
        if (shown.size() < keys.size()) {
            p((keys.size() - shown.size()) + " more reported critical set(s), of " + leftOutMin
                    + (leftOutMax > leftOutMin ? " to " + leftOutMax : "") + " regions (found by " + esc(String.join(", ", leftOutBy)) + "), are "
                    + "left out of this table, which shows the smallest size found and up to two regions more; "
                    + "<code>cruxset export</code> lists every one (search_results.tsv).");
        }
        int smallest = smallestSize;
        List<Set<String>> smallestSets = new ArrayList<>();
        for (String key : keys) {
            if (bySet.get(key).get(0).search().setSize() == smallest) {
                smallestSets.add(new TreeSet<>(List.of(key.split(","))));
            }
        }
        Set<String> core = new TreeSet<>(smallestSets.get(0));
        Set<String> any = new TreeSet<>();
        for (Set<String> x : smallestSets) {
            core.retainAll(x);
            any.addAll(x);
        }
        any.removeAll(core);
        p(smallestSets.size() + " distinct critical set(s) of the smallest size found (" + smallest + " regions). "
                + "Core regions (in every one): " + (core.isEmpty() ? "none" : esc(String.join(", ", core)))
                + ". Interchangeable regions (in some, not all): " + (any.isEmpty() ? "none"
                : esc(String.join(", ", any))) + ".");
        for (Set<String> x : smallestSets) {
            for (String r : x) {
                regionValues.computeIfAbsent(r, k -> new TreeMap<>()).merge("in_smallest_critical_sets", 1.0,
                        Double::sum);
            }
        }
        p("A certificate <em>irreducible</em> means every one-region-smaller subset was scored and none is critical; "
                + "<em>exhaustive</em> means every set up to its size within a pool was scored. Confirmation scores "
                + "re-score each reported set on subjects the search never saw.");
    }

    private String networks(String regions) {
        if (atlas == null) {
            return "-";
        }
        Map<String, Integer> count = new TreeMap<>();
        for (String r : regions.split(",")) {
            atlas.position(r).ifPresent(p -> count.merge(atlas.region(p).network(), 1, Integer::sum));
        }
        StringBuilder sb = new StringBuilder();
        count.forEach((k, v) -> sb.append(sb.length() == 0 ? "" : ", ").append(k).append(" (").append(v).append(')'));
        return sb.toString();
    }

    private void fronts(StoreView.Snapshot s, CollapseCriterion criterion) {
        if (s.searches().isEmpty() || s.intact() == null) {
            return;
        }
        h2("fronts", "Fronts: set size against accuracy");
        XYChart c = Plots.xy("Best accuracy found at each lesion size", "regions lesioned", "search-part accuracy");
        Map<String, TreeMap<Integer, Double>> byLabel = new LinkedHashMap<>();
        int maxSize = 1;
        for (StoreView.SearchRun r : s.searches()) {
            TreeMap<Integer, Double> m = byLabel.computeIfAbsent(r.label(), k -> new TreeMap<>());
            for (StoreView.Eval e : r.front()) {
                m.merge(e.setSize(), e.accuracy(), Math::min);
                maxSize = Math.max(maxSize, e.setSize());
            }
        }
        int i = 0;
        for (Map.Entry<String, TreeMap<Integer, Double>> e : byLabel.entrySet()) {
            if (e.getValue().isEmpty()) {
                continue;
            }
            double[] x = e.getValue().keySet().stream().mapToDouble(Integer::doubleValue).toArray();
            double[] y = e.getValue().values().stream().mapToDouble(Double::doubleValue).toArray();
            Plots.look(c.addSeries(e.getKey(), x, y), i++);
        }
        double limit = criterion.criticalCount(s.intact().n(), s.intact().chance(), s.intact().score())
                / (double) s.intact().n();
        Plots.reference(c.addSeries("chance", new double[] {0, maxSize}, new double[] {s.intact().chance(),
            s.intact().chance()}), false);
        Plots.reference(c.addSeries("critical at or below", new double[] {0, maxSize}, new double[] {limit, limit}),
                true);
        figure("fronts", "For each strategy, the lowest search-part accuracy any of its runs reached at each lesion "
                + "size (its front), with chance and the critical limit. Sizes left of where a strategy's line "
                + "meets the limit were not collapsed by it.", c);
        methods.add("fronts");
    }

    private void anytime(StoreView.Snapshot s, CollapseCriterion criterion) {
        if (s.searches().isEmpty()) {
            return;
        }
        h2("anytime", "Strategies on equal budgets");
        // The compare runs on the budget most of them ran with are comparable; without compare runs, every search.
        Map<Double, Integer> budgets = new LinkedHashMap<>();
        for (StoreView.SearchRun r : s.searches()) {
            if ("compare".equals(r.kind()) && r.budget() != null) {
                budgets.merge(r.budget(), 1, Integer::sum);
            }
        }
        Double budget = budgets.isEmpty() ? null
                : budgets.entrySet().stream().max(Map.Entry.comparingByValue()).orElseThrow().getKey();
        Map<String, List<StoreView.SearchRun>> byLabel = new LinkedHashMap<>();
        Map<String, Integer> others = new LinkedHashMap<>();
        for (StoreView.SearchRun r : s.searches()) {
            if (budget == null || "compare".equals(r.kind()) && budget.equals(r.budget())) {
                byLabel.computeIfAbsent(r.label(), k -> new ArrayList<>()).add(r);
            } else {
                others.merge(r.label(), 1, Integer::sum);
            }
        }
        if (budget != null) {
            StringBuilder o = new StringBuilder();
            others.forEach((k, v) -> o.append(o.length() == 0 ? "" : ", ").append(esc(k)).append(" (").append(v)
                    .append(v == 1 ? " run)" : " runs)"));
            p(String.format(Locale.ROOT, "The runs of <code>cruxset compare</code> on a budget of %.0f scored sets "
                    + "each%s.", budget, o.length() == 0 ? "" : "; other searches in the store, on other budgets, are "
                    + "left out of this section: " + o));
        }
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"strategy", "runs (seeds)", "best critical size median [IQR]", "sets charged (median)",
            "reported sets confirmed / certified"});
        double maxCharged = 1;
        for (Map.Entry<String, List<StoreView.SearchRun>> e : byLabel.entrySet()) {
            List<StoreView.SearchRun> runs = e.getValue();
            double[] best = runs.stream().mapToDouble(r -> r.bestSize() == null ? Double.POSITIVE_INFINITY
                    : r.bestSize()).sorted().toArray();
            double[] charged = runs.stream().mapToDouble(StoreView.SearchRun::charged).sorted().toArray();
            int reported = 0;
            int confirmed = 0;
            int certified = 0;
            for (StoreView.SearchRun r : runs) {
                for (StoreView.Reported x : r.reported()) {
                    reported++;
                    confirmed += Boolean.TRUE.equals(x.confirmCritical()) ? 1 : 0;
                    certified += Boolean.TRUE.equals(x.certificateHolds()) ? 1 : 0;
                }
                maxCharged = Math.max(maxCharged, r.charged());
            }
            rows.add(new String[] {e.getKey(), runs.size() + " (" + seeds(runs) + ")",
                size(StrategyTests.sizeQuantile(best, 0.5)) + " [" + size(StrategyTests.sizeQuantile(best, 0.25)) + ", "
                    + size(StrategyTests.sizeQuantile(best, 0.75)) + "]", String.format(Locale.ROOT, "%.0f",
                    ClusteredStats.quantile(charged, 0.5)), confirmed + " / " + certified + " of " + reported});
        }
        table(rows);
        if (budget != null) {
            strategyTests(byLabel, budget);
        }
        XYChart c = Plots.xy("Anytime: best critical size against sets charged (median over seeds)",
                "sets charged (budget spent)", "smallest critical set found (regions)");
        c.getStyler().setXAxisMin(0.0); // the budget starts at 0 (and round ticks follow)
        int grid = 60;
        medianSteps(c, byLabel, maxCharged, grid, (trace, at) -> bestAt(trace, at));
        if (!c.getSeriesMap().isEmpty()) {
            figure("anytime", "For each strategy, the median over its runs of the smallest critical set found once a "
                    + "given number of sets had been charged (a run charged for every set it asked for, whoever "
                    + "decoded it first). A line starts once half of the runs have found a critical set.", c);
        }
        scoreAtSize(s, criterion, byLabel, maxCharged, grid);
    }

    /**
     * The other anytime view: for the smallest critical size any of these runs found, each strategy's best search-part
     * accuracy at that size against sets charged (median over its runs), with the critical limit.
     */
    private void scoreAtSize(StoreView.Snapshot s, CollapseCriterion criterion,
                             Map<String, List<StoreView.SearchRun>> byLabel, double maxCharged, int grid) {
        int k = Integer.MAX_VALUE;
        for (List<StoreView.SearchRun> runs : byLabel.values()) {
            for (StoreView.SearchRun r : runs) {
                if (r.bestSize() != null && r.bestSize() > 0) {
                    k = Math.min(k, r.bestSize());
                }
            }
        }
        if (k == Integer.MAX_VALUE || s.intact() == null) {
            return;
        }
        XYChart c = Plots.xy("Anytime: best accuracy at " + k + " regions against sets charged (median over seeds)",
                "sets charged (budget spent)", "best search-part accuracy of a " + k + "-region lesion");
        c.getStyler().setXAxisMin(0.0);
        int size = k;
        medianSteps(c, byLabel, maxCharged, grid, (trace, at) -> accuracyAt(trace, size, at));
        if (c.getSeriesMap().isEmpty()) {
            return;
        }
        double limit = criterion.criticalCount(s.intact().n(), s.intact().chance(), s.intact().score())
                / (double) s.intact().n();
        Plots.reference(c.addSeries("critical at or below", new double[] {0, maxCharged}, new double[] {limit,
            limit}), true);
        figure("anytime-at-size", "For the smallest critical size found (" + k + " regions), the lowest search-part "
                + "accuracy each strategy had reached with a set of that size once a given number of sets had been "
                + "charged, median over its runs; a line starts once half of the runs have scored a set of that size, "
                + "and reaching the dashed limit means a critical set of that size was found.", c);
    }

    /** The best accuracy at {@code size} a run had reached after {@code charged} sets (infinity before any). */
    private static double accuracyAt(List<StoreView.TracePoint> trace, int size, double charged) {
        double best = Double.POSITIVE_INFINITY;
        for (StoreView.TracePoint t : trace) {
            if (t.charged() <= charged && t.size() == size) {
                best = Math.min(best, t.accuracy());
            }
        }
        return best;
    }

    /**
     * One step series per strategy: at each of {@code grid} + 1 points of the budget, the median over its runs of
     * {@code value(trace, charged)}, from the first point where that median is finite.
     */
    private static void medianSteps(XYChart c, Map<String, List<StoreView.SearchRun>> byLabel, double maxCharged,
                                    int grid, java.util.function.ToDoubleBiFunction<List<StoreView.TracePoint>,
                                    Double> value) {
        int i = 0;
        for (Map.Entry<String, List<StoreView.SearchRun>> e : byLabel.entrySet()) {
            List<Double> xs = new ArrayList<>();
            List<Double> ys = new ArrayList<>();
            for (int g = 0; g <= grid; g++) {
                double at = maxCharged * g / grid;
                double[] b = new double[e.getValue().size()];
                for (int r = 0; r < b.length; r++) {
                    b[r] = value.applyAsDouble(e.getValue().get(r).trace(), at);
                }
                Arrays.sort(b);
                double m = ClusteredStats.quantile(b, 0.5);
                if (Double.isFinite(m)) {
                    xs.add(at);
                    ys.add(m);
                }
            }
            if (!xs.isEmpty()) {
                XYSeries series = c.addSeries(e.getKey(), xs, ys);
                Plots.look(series, i);
                series.setXYSeriesRenderStyle(XYSeries.XYSeriesRenderStyle.Step);
            }
            i++;
        }
    }

    private static double bestAt(List<StoreView.TracePoint> trace, double charged) {
        double best = Double.POSITIVE_INFINITY;
        for (StoreView.TracePoint t : trace) {
            if (t.charged() <= charged && t.critical()) {
                best = Math.min(best, t.size());
            }
        }
        return best;
    }

    /** Tests between the strategies of the comparable compare runs (see {@link StrategyTests}). */
    private void strategyTests(Map<String, List<StoreView.SearchRun>> byLabel, double budget) {
        Map<String, Map<Long, Integer>> bestBySeed = new LinkedHashMap<>();
        byLabel.forEach((label, runs) -> {
            Map<Long, Integer> m = new LinkedHashMap<>();
            runs.forEach(r -> m.put(r.seed(), r.bestSize() == null ? -1 : r.bestSize()));
            bestBySeed.put(label, m);
        });
        if (bestBySeed.size() < 2) {
            return;
        }
        List<StrategyTests.Row> tests = StrategyTests.between(bestBySeed);
        p(String.format(Locale.ROOT, "Best critical size between strategies compared on a budget of %.0f scored sets "
                + "(two-sided exact tests: Wilcoxon signed-rank when the runs are paired by seed, zero differences by "
                + "Pratt's method; Mann&ndash;Whitney U when the seeds differ; Holm-corrected over %d comparisons; a "
                + "run without a critical set counts as larger than any).", budget, tests.size()));
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"comparison", "test", "median difference", "p", "Holm p", "smallest attainable Holm p"});
        for (StrategyTests.Row r : tests) {
            rows.add(new String[] {r.first() + " vs " + r.second(), r.test(), size(r.medianDifference()),
                String.format(Locale.ROOT, "%.4g", r.p()), String.format(Locale.ROOT, "%.4g", r.holm()),
                String.format(Locale.ROOT, "%.4g", r.smallestHolm())});
        }
        table(rows);
        p(esc(StrategyTests.power(tests)));
        methods.add("compare");
    }

    private static String seeds(List<StoreView.SearchRun> runs) {
        TreeSet<Long> s = new TreeSet<>();
        runs.forEach(r -> s.add(r.seed()));
        return s.size() > 4 ? s.first() + "-" + s.last() : s.toString().replaceAll("[\\[\\]]", "");
    }

    private void deletionCurve() {
        Path f = folder.resolve("curve.tsv");
        if (!Files.exists(f)) {
            return;
        }
        h2("deletion", "Deletion curve");
        TsvTable t = TsvTable.read(f);
        XYChart c = Plots.xy("Deletion curve of the ranking against random orders", "top k units lesioned",
                "search-part accuracy");
        double[] k = column(t, "k");
        double[] lo = column(t, "null_low05");
        boolean band = Arrays.stream(lo).anyMatch(Double::isFinite);
        Plots.look(c.addSeries("ranking: top k lesioned", k, column(t, "deletion_accuracy")), 0);
        double[] ins = column(t, "insertion_accuracy");
        if (Arrays.stream(ins).anyMatch(Double::isFinite)) {
            Plots.look(c.addSeries("ranking: only top k kept", k, ins), 1);
        }
        if (band) {
            Plots.reference(c.addSeries("random orders: median", k, column(t, "null_median")), false);
            Plots.reference(c.addSeries("random orders: 5%", k, lo), true);
            Plots.reference(c.addSeries("random orders: 95%", k, column(t, "null_high95")), true);
        }
        figure("deletion-curve", "Accuracy as the ranking's top k units are lesioned" + (band ? ", against the 5-95% "
                + "band and median of random orders (grey: dashed 5% and 95%, dotted median)" : "") + ".", c);
        methods.add("curve");
    }

    private void values() {
        List<Path> files = list("shapley-", ".tsv").stream().filter(p -> {
            String n = p.getFileName().toString();
            return !n.endsWith("-pairs.tsv") && !n.endsWith("-interactions.tsv");
        }).toList();
        List<Path> scans = list("scan-", ".tsv");
        Path saliency = folder.resolve("saliency-regions.tsv");
        if (files.isEmpty() && scans.isEmpty() && !Files.exists(saliency)) {
            return;
        }
        h2("values", "Region and network values");
        for (Path f : files) {
            String kind = stem(f, "shapley-");
            TsvTable t = TsvTable.read(f);
            bars("shapley-" + kind, "Shapley values of the lesion game (" + kind + ")", kind, "value (accuracy)",
                    t, "unit", "value", "low95", "high95", "shapley_value");
            p("Game: v(S) is the score with the players in S intact and every other player lesioned; each value is "
                    + "the player's share of v(all) - v(none). Equal values do not imply equal minimal lesion sets: "
                    + "a redundant pair and a single necessary region can share a value; <code>search</code> tells "
                    + "them apart. Intervals: 95%.");
            methods.add("shapley");
        }
        for (Path f : scans) {
            String kind = stem(f, "scan-");
            TsvTable t = TsvTable.read(f);
            bars("scan-" + kind, "Single lesions (" + kind + "): drop in accuracy", kind, "drop in accuracy", t,
                    "unit", "drop", "drop_low95", "drop_high95", "single_lesion_drop");
            methods.add("scan");
        }
        if (Files.exists(saliency)) {
            TsvTable t = TsvTable.read(saliency);
            bars("saliency-regions", "Gradient saliency: mean absolute attribution per region", "regions",
                    "mean |attribution|", t, "region", "mean_abs", null, null, "saliency_mean_abs");
            methods.add("saliency");
        }
    }

    /** A bar chart of a TSV's units (largest 40 by value), with intervals when columns name them. */
    private void bars(String name, String title, String kind, String yTitle, TsvTable t, String unitCol,
                      String valueCol, String lowCol, String highCol, String measure) {
        int u = t.column(unitCol);
        int v = t.column(valueCol);
        List<Integer> order = new ArrayList<>();
        for (int r = 0; r < t.rowCount(); r++) {
            order.add(r);
            if (kind.startsWith("region")) {
                double x = num(t.get(r, v));
                if (Double.isFinite(x)) {
                    regionValues.computeIfAbsent(t.get(r, u), k -> new TreeMap<>()).put(measure, x);
                }
            }
        }
        order.sort((a, b) -> Double.compare(num(t.get(b, v)), num(t.get(a, v))));
        List<Integer> shown = order.subList(0, Math.min(40, order.size()));
        List<String> names = new ArrayList<>();
        List<Double> values = new ArrayList<>();
        List<Double> errors = new ArrayList<>();
        boolean symmetric = true;
        for (int r : shown) {
            names.add(t.get(r, u));
            double x = num(t.get(r, v));
            values.add(Double.isFinite(x) ? x : 0);
            if (lowCol != null) {
                double lo = num(t.get(r, t.column(lowCol)));
                double hi = num(t.get(r, t.column(highCol)));
                errors.add(Double.isFinite(lo) && Double.isFinite(hi) ? (hi - lo) / 2 : 0);
                // Error bars are drawn symmetric about the value: only when the interval is.
                symmetric &= !(Double.isFinite(lo) && Double.isFinite(hi))
                        || Math.abs((lo + hi) / 2 - x) <= 0.01 * Math.max(hi - lo, 1e-12);
            }
        }
        names = names.stream().map(x -> x.startsWith("network:") ? x.substring("network:".length()) : x).toList();
        CategoryChart c = Plots.bars(title, kind, yTitle, names);
        boolean withBars = lowCol != null && symmetric;
        if (withBars) {
            c.addSeries(valueCol, names, values, errors);
        } else {
            c.addSeries(valueCol, names, values);
        }
        figure(name, title + (order.size() > shown.size() ? " (the " + shown.size() + " largest of " + order.size()
                + ")" : "") + (withBars ? "; bars: 95% intervals." : lowCol != null ? " (the 95% intervals are "
                + "asymmetric: see the table)." : ".") + " Table: <code>"
                + esc(t.file().getFileName().toString()) + "</code>.", c);
    }

    private void interactions() {
        List<Path> files = list("shapley-", "-interactions.tsv");
        List<Path> pairs = list("shapley-", "-pairs.tsv");
        if (files.isEmpty() && pairs.isEmpty()) {
            return;
        }
        h2("interactions", "Interactions");
        p("Shapley interaction index (Grabisch & Roubens 1999) in the lesion game: in this game a redundant pair "
                + "has a negative interaction and a synergistic pair a positive one.");
        for (Path f : files) {
            TsvTable t = TsvTable.read(f);
            List<String> names = t.header().subList(1, t.header().size()).stream()
                    .map(x -> x.startsWith("network:") ? x.substring("network:".length()) : x).toList();
            int n = names.size();
            HeatMapChart c = Plots.heat("Pairwise interactions (" + stem(f, "shapley-").replace("-interactions", "")
                    + ")", "", "", n, true, "0.00");
            List<Number[]> cells = new ArrayList<>();
            double max = 1e-12;
            for (int r = 0; r < t.rowCount(); r++) {
                for (int j = 0; j < n; j++) {
                    double x = num(t.get(r, j + 1));
                    cells.add(new Number[] {j, r, Double.isFinite(x) ? x : 0});
                    max = Math.max(max, Double.isFinite(x) ? Math.abs(x) : 0);
                }
            }
            // A symmetric scale with round ends (the colour legend prints its ends as they are).
            double end = Math.ceil(max * 100) / 100;
            c.getStyler().setMin(-end);
            c.getStyler().setMax(end);
            c.addSeries("interaction", names, names, cells);
            figure(f.getFileName().toString().replace(".tsv", ""), "Interaction matrix (diagonal: not defined, "
                    + "shown as 0). Table: <code>" + esc(f.getFileName().toString()) + "</code>.", c);
        }
        for (Path f : pairs) {
            TsvTable t = TsvTable.read(f);
            List<String[]> rows = new ArrayList<>();
            rows.add(new String[] {"pair", "interaction", "95% interval", "excludes 0"});
            for (int r = 0; r < t.rowCount(); r++) {
                double lo = num(t.get(r, t.column("low95")));
                double hi = num(t.get(r, t.column("high95")));
                rows.add(new String[] {t.get(r, t.column("first")) + " + " + t.get(r, t.column("second")),
                    f3(num(t.get(r, t.column("interaction")))), f3(lo) + " to " + f3(hi),
                    lo > 0 || hi < 0 ? "yes" : "no"});
            }
            table(rows);
        }
        methods.add("interactions");
    }

    private void audit() {
        Path topk = folder.resolve("audit-topk.tsv");
        Path prefix = folder.resolve("audit-prefix.tsv");
        if (!Files.exists(topk) && !Files.exists(prefix)) {
            return;
        }
        h2("audit", "Saliency audit: is the ranking's set the smallest?");
        if (Files.exists(prefix)) {
            TsvTable t = TsvTable.read(prefix);
            List<String[]> rows = new ArrayList<>();
            rows.add(new String[] {"ranking", "critical prefix (regions)", "irreducible", "smallest critical set in "
                + "the store", "irreducible", "proved a minimum by", "verdict"});
            for (int r = 0; r < t.rowCount(); r++) {
                String regions = t.get(r, t.column("prefix_regions"));
                String smallest = t.get(r, t.column("smallest_size"));
                rows.add(new String[] {t.get(r, t.column("ranking")), "NA".equals(regions) ? "none" : regions + ": "
                    + t.get(r, t.column("prefix_names")), t.get(r, t.column("prefix_irreducible")),
                    "NA".equals(smallest) ? "none" : smallest + ": " + t.get(r, t.column("smallest_names")),
                    t.get(r, t.column("smallest_irreducible")), t.get(r, t.column("smallest_minimum_proof")),
                    t.get(r, t.column("verdict"))});
            }
            table(rows);
        }
        if (Files.exists(topk)) {
            TsvTable t = TsvTable.read(topk);
            Map<String, List<Integer>> byRanking = new LinkedHashMap<>();
            for (int r = 0; r < t.rowCount(); r++) {
                byRanking.computeIfAbsent(t.get(r, t.column("ranking")), k -> new ArrayList<>()).add(r);
            }
            int i = 0;
            for (Map.Entry<String, List<Integer>> e : byRanking.entrySet()) {
                XYChart c = Plots.xy("Top k of " + e.getKey() + " against searched and random k-sets",
                        "k (regions lesioned)", "search-part accuracy");
                double[] k = pick(t, e.getValue(), "k");
                Plots.look(c.addSeries("ranking's top k", k, pick(t, e.getValue(), "ranking_accuracy")), 0);
                double[] best = pick(t, e.getValue(), "best_stored_accuracy");
                List<Double> bk = new ArrayList<>();
                List<Double> bv = new ArrayList<>();
                for (int j = 0; j < k.length; j++) {
                    if (Double.isFinite(best[j])) {
                        bk.add(k[j]);
                        bv.add(best[j]);
                    }
                }
                if (!bk.isEmpty()) {
                    Plots.look(c.addSeries("best k-set searches scored", bk, bv), 1);
                }
                Plots.reference(c.addSeries("random k-sets: median", k, pick(t, e.getValue(), "random_median")), false);
                Plots.reference(c.addSeries("random k-sets: 5%", k, pick(t, e.getValue(), "random_low05")), true);
                Plots.reference(c.addSeries("random k-sets: 95%", k, pick(t, e.getValue(), "random_high95")), true);
                figure("audit-topk-" + (i++), "The ranking's top k against the best k-set any search scored and "
                        + "against random k-sets (permutation p-values in <code>audit-topk.tsv</code>).", c);
            }
        }
        Path agreement = folder.resolve("audit-agreement.tsv");
        if (Files.exists(agreement)) {
            TsvTable t = TsvTable.read(agreement);
            List<String[]> rows = new ArrayList<>();
            rows.add(new String[] {"rankings", "common units", "Spearman (95% CI)", "Kendall tau-b (95% CI)",
                "Jaccard of critical prefixes"});
            for (int r = 0; r < t.rowCount(); r++) {
                rows.add(new String[] {t.get(r, 0) + " vs " + t.get(r, 1), t.get(r, 2), ci(t, r, "spearman"),
                    ci(t, r, "kendall_tau_b", "kendall_low95", "kendall_high95"), t.get(r, t.column("jaccard_prefixes"))});
            }
            table(rows);
        }
        p("A smaller critical set found by search proves the ranking's set is not minimal; not finding one proves "
                + "nothing; certificates (irreducibility, exhaustive pools) are what prove more.");
        methods.add("audit");
    }

    private static String ci(TsvTable t, int r, String col) {
        return ci(t, r, col, col + "_low95", col + "_high95");
    }

    private static String ci(TsvTable t, int r, String col, String lo, String hi) {
        double v = num(t.get(r, t.column(col)));
        return Double.isNaN(v) ? "-" : f3(v) + " (" + f3(num(t.get(r, t.column(lo)))) + " to "
                + f3(num(t.get(r, t.column(hi)))) + ")";
    }

    private Path regionTable() {
        if (regionValues.isEmpty()) {
            return null;
        }
        h2("maps", "Region values and maps");
        Set<String> measures = new TreeSet<>();
        regionValues.values().forEach(m -> measures.addAll(m.keySet()));
        Path f = out.resolve("region-values.tsv");
        StringBuilder sb = new StringBuilder("region\tindex\tnetwork");
        measures.forEach(m -> sb.append('\t').append(m));
        sb.append('\n');
        List<String> names = atlas != null ? atlas.names() : new ArrayList<>(regionValues.keySet());
        for (String r : names) {
            Map<String, Double> m = regionValues.getOrDefault(r, Map.of());
            Region reg = atlas == null ? null : atlas.position(r).map(atlas::region).orElse(null);
            sb.append(r).append('\t').append(reg == null ? "NA" : Integer.toString(reg.index())).append('\t')
                    .append(reg == null ? "NA" : reg.network());
            for (String x : measures) {
                Double v = m.get(x);
                sb.append('\t').append(v == null ? (x.equals("in_smallest_critical_sets") ? "0" : "NA")
                        : String.format(Locale.ROOT, "%.6g", v));
            }
            sb.append('\n');
        }
        try {
            Files.createDirectories(out);
            Files.writeString(f, sb.toString(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + f + ": " + e.getMessage(), e);
        }
        p("Every region's measures are in <code>region-values.tsv</code> (columns: " + esc(String.join(", ",
                measures)) + "; <code>in_smallest_critical_sets</code> counts the distinct smallest critical sets "
                + "holding the region).");
        return f;
    }

    private List<Path> maps() {
        if (image == null) {
            if (!regionValues.isEmpty()) {
                p("No NIfTI-1 label image was given (<code>--atlas-image</code>), so no maps were written.");
            }
            return List.of();
        }
        if (atlas == null || regionValues.isEmpty()) {
            notes.add("maps need the atlas (--cohort or --atlas) and region values in the folder; none written");
            return List.of();
        }
        Set<String> measures = new TreeSet<>();
        regionValues.values().forEach(m -> measures.addAll(m.keySet()));
        Set<Integer> present = image.present();
        List<String> missing = new ArrayList<>();
        for (Region r : atlas.regions()) {
            if (!present.contains(r.index())) {
                missing.add(r.name() + " (" + r.index() + ")");
            }
        }
        if (!missing.isEmpty()) {
            notes.add("the label image has no voxel for " + missing.size() + " atlas region(s): "
                    + String.join(", ", missing.subList(0, Math.min(10, missing.size()))));
        }
        List<Path> written = new ArrayList<>();
        for (String m : measures) {
            Map<Integer, Double> byLabel = new TreeMap<>();
            for (Region r : atlas.regions()) {
                Double v = regionValues.getOrDefault(r.name(), Map.of()).get(m);
                byLabel.put(r.index(), v == null && m.equals("in_smallest_critical_sets") ? 0.0 : v);
            }
            Path f = out.resolve("maps").resolve(m + ".nii.gz");
            image.writeMap(f, byLabel, "cruxset " + m);
            written.add(f);
        }
        p("NIfTI-1 maps in the label image's space, one per measure (float32; background and regions without a value "
                + "are 0): " + esc(String.join(", ", written.stream().map(x -> "maps/" + x.getFileName()).toList()))
                + ".");
        return written;
    }

    private void methodsParagraph(StoreView.Snapshot s, CollapseCriterion criterion) {
        h2("methods", "Methods (adapt for your paper)");
        StringBuilder m = new StringBuilder();
        m.append("We applied virtual lesions to a trained decoder: the time series of the lesioned regions were replaced "
                + "(mode: ").append(esc(s.lesionMode())).append(") before decoding, and the decoder's accuracy on "
                + "held-out subjects was measured. Held-out subjects were split into a search part, on which sets were "
                + "chosen, and a confirmation part, on which every reported set was re-scored. A set was called "
                + "critical when ").append(esc(criterion.describe())).append(". Accuracy intervals are Wilson score "
                + "intervals (Wilson 1927).");
        Set<String> strategies = new TreeSet<>();
        s.searches().forEach(r -> strategies.add(r.strategy()));
        if (!strategies.isEmpty()) {
            m.append(" Smallest critical sets were searched for on a fixed budget of scored sets with ")
                    .append(esc(String.join(", ", strategies))).append(" search");
            if (strategies.contains("genetic")) {
                m.append(" (the genetic search is multi-objective over set size and accuracy, NSGA-II: Deb et al. "
                        + "2002)");
            }
            if (strategies.contains("surrogate")) {
                m.append(" (surrogate-assisted search in the manner of Baptista & Poloczek 2018)");
            }
            m.append("; reported sets were checked for irreducibility by scoring every one-region-smaller subset.");
        }
        if (methods.contains("compare")) {
            m.append(" Strategies were compared on equal budgets with exact two-sided tests of their best critical "
                    + "sizes: the Wilcoxon signed-rank test over seeds where runs were paired (Wilcoxon 1945; zero "
                    + "differences by Pratt's method, Pratt 1959), the Mann&ndash;Whitney U test where they were not "
                    + "(Mann &amp; Whitney 1947), Holm-adjusted (Holm 1979).");
        }
        if (methods.contains("scan")) {
            m.append(" Single-region lesions were compared with the intact decoder on the same samples.");
        }
        if (methods.contains("saliency")) {
            m.append(" Gradient saliency of the true class was computed per region (integrated gradients: Sundararajan "
                    + "et al. 2017; SmoothGrad: Smilkov et al. 2017, where used).");
        }
        if (methods.contains("shapley")) {
            m.append(" Lesion Shapley values (Shapley 1953; for lesions, Keinan et al. 2004) were estimated by "
                    + "enumeration or permutation sampling (Castro et al. 2009), with 95% intervals.");
        }
        if (methods.contains("interactions")) {
            m.append(" Pairwise interactions are Shapley interaction indices (Grabisch & Roubens 1999).");
        }
        if (methods.contains("audit")) {
            m.append(" Rankings were audited against searched and random k-sets (permutation p-values) and compared "
                    + "with Spearman's rho and Kendall's tau-b with percentile bootstrap intervals.");
        }
        m.append(" Analyses were run with Cruxset.");
        p(m.toString());
    }

    // ---- helpers ----

    private void figure(String name, String caption, org.knowm.xchart.internal.chartpart.Chart<?, ?> chart) {
        plots.add(name, caption, chart);
        Plots.Figure f = plots.figures().get(plots.figures().size() - 1);
        html.append("<figure class=\"plot\" data-figure=\"").append(esc(name)).append("\">").append(f.svg())
                .append("<figcaption>").append(caption).append(" Files: <a href=\"figures/").append(esc(name))
                .append(".svg\">SVG</a>, <a href=\"figures/").append(esc(name)).append(".png\">PNG</a>.</figcaption>"
                        + "</figure>\n");
    }

    private List<Path> list(String prefix, String suffix) {
        if (!Files.isDirectory(folder)) {
            return List.of();
        }
        try (Stream<Path> s = Files.list(folder)) {
            return s.filter(p -> {
                String n = p.getFileName().toString();
                return n.startsWith(prefix) && n.endsWith(suffix);
            }).sorted().toList();
        } catch (IOException e) {
            throw new UncheckedIOException("cannot list " + folder + ": " + e.getMessage(), e);
        }
    }

    private static String stem(Path f, String prefix) {
        String n = f.getFileName().toString();
        return n.substring(prefix.length(), n.length() - ".tsv".length());
    }

    private static double[] column(TsvTable t, String name) {
        int c = t.column(name);
        double[] out = new double[t.rowCount()];
        for (int r = 0; r < out.length; r++) {
            out[r] = num(t.get(r, c));
        }
        return out;
    }

    private static double[] pick(TsvTable t, List<Integer> rows, String name) {
        int c = t.column(name);
        return rows.stream().mapToDouble(r -> num(t.get(r, c))).toArray();
    }

    private static double num(String s) {
        if (s == null || s.isEmpty() || s.equals("NA")) {
            return Double.NaN;
        }
        try {
            return Double.parseDouble(s);
        } catch (NumberFormatException e) {
            return Double.NaN;
        }
    }

    private static String sorted(String names) {
        TreeSet<String> s = new TreeSet<>(List.of(names.split(",")));
        return String.join(",", s);
    }

    private static String shortHash(String h) {
        return h == null ? "?" : h.substring(0, Math.min(12, h.length()));
    }

    private static String size(double v) {
        return Double.isInfinite(v) || Math.abs(v) >= 1e8 ? "none" : String.format(Locale.ROOT, "%.1f", v)
                .replace(".0", "");
    }

    private static String f3(double v) {
        return Double.isNaN(v) ? "-" : String.format(Locale.ROOT, "%.3f", v);
    }

    private static String g3(double v) {
        return Double.isNaN(v) ? "-" : String.format(Locale.ROOT, "%.3g", v);
    }

    private void caution() {
        html.append("<p class=\"caution\"><strong>Caution.</strong> ").append(esc(CAUTION)).append("</p>\n");
    }

    private void h2(String id, String title) {
        html.append("<h2 id=\"").append(id).append("\">").append(esc(title)).append("</h2>\n");
    }

    private void p(String inner) {
        html.append("<p>").append(inner).append("</p>\n");
    }

    private void table(List<String[]> rows) {
        html.append("<table><thead><tr>");
        for (String h : rows.get(0)) {
            html.append("<th>").append(esc(h)).append("</th>");
        }
        html.append("</tr></thead><tbody>\n");
        for (String[] r : rows.subList(1, rows.size())) {
            html.append("<tr>");
            for (String c : r) {
                html.append("<td>").append(esc(c)).append("</td>");
            }
            html.append("</tr>\n");
        }
        html.append("</tbody></table>\n");
    }

    static String esc(String s) {
        return s == null ? "" : s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
                .replace("\"", "&quot;");
    }

    private static final String CSS = "body{font-family:sans-serif;max-width:1100px;margin:2em auto;padding:0 1em;"
            + "color:#111;line-height:1.45}table{border-collapse:collapse;margin:1em 0;font-size:0.92em}"
            + "th,td{border:1px solid #bbb;padding:0.25em 0.5em;text-align:left}th{background:#eee}"
            + ".caution{border-left:6px solid #D55E00;background:#fff4ec;padding:0.6em 1em}"
            + "figure{margin:1.5em 0}figcaption{font-size:0.9em;color:#333}code{font-size:0.92em}";

    /**
     * Marks each figure with what the browser drew (its bounding box and shape count), so a test in a real browser
     * can check that every figure has content; nothing is fetched.
     */
    private static final String SCRIPT = "<script>window.addEventListener('load',function(){"
            + "document.querySelectorAll('figure.plot').forEach(function(f){var s=f.querySelector('svg');"
            + "if(!s){f.setAttribute('data-drawn','none');return;}var b=s.getBBox();"
            + "var n=s.querySelectorAll('path,rect,line,ellipse,polygon,polyline,circle').length;"
            + "f.setAttribute('data-drawn',Math.round(b.width)+'x'+Math.round(b.height)+':'+n);});"
            + "document.body.setAttribute('data-checked','yes');});</script>\n";
}
