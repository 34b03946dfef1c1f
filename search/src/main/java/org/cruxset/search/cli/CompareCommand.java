package org.cruxset.search.cli;

import static org.cruxset.search.StrategyTests.sizeQuantile;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.search.Hypervolume;
import org.cruxset.search.SearchConfig;
import org.cruxset.search.SearchRun;
import org.cruxset.search.StrategySpec;
import org.cruxset.search.StrategyTests;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code cruxset compare}: strategies × seeds on equal budgets, on the same model, cohort, lesion mode, criterion and
 * search/confirmation split, all runs in one results store (a set one run decoded is reused by the others but
 * charged to each run that asks for it), with per-strategy summaries and paired tests between strategies.
 */
@Command(name = "compare", mixinStandardHelpOptions = true,
        description = {"Run strategies × seeds on equal budgets and compare them: best critical size (median and IQR), "
                + "success against a known minimum, scored sets to the first critical set and to the best size, front "
                + "hypervolume, time measured and decoder-equivalent; between strategies the Wilcoxon signed-rank test "
                + "of best sizes paired by seed (exact, zeros by Pratt's method; Mann-Whitney U where seeds differ), "
                + "Holm-corrected.",
            "",
            "Every run goes through the one scorer, budget and store; a run is charged for every set it asks for, "
                + "whoever decoded it first. Kill it at any time: the same command resumes every run."})
public final class CompareCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Option(names = "--strategies", split = ",", paramLabel = "NAMES", description = "Strategies to compare (as bench "
            + "names them: random, grow, grow+prune, ranked+prune, genetic, local, surrogate, with ~race and, for "
            + "genetic and local, ~screen). Default: the config's compare section, else grow+prune,genetic,local,"
            + "surrogate.")
    List<String> strategies;

    @Option(names = "--seeds", paramLabel = "N", description = "Seeds 1..N per strategy. Default: the config's, else 10.")
    Integer seeds;

    @Option(names = "--budget", paramLabel = "N", description = "Scored sets of the search part per run (required here "
            + "or in the config).")
    Long budget;

    @Option(names = "--minimum", paramLabel = "K", description = "A known smallest critical size, for success rates.")
    Integer minimum;

    @Option(names = "--config", paramLabel = "YAML", description = "The plan (compare: {strategies, seeds, budget, "
            + "minimum}) and strategy settings, as for search; e.g. configs/overnight.yaml. Options given on the "
            + "command line win.")
    Path config;

    /** Every reported set of every run, with both parts' scores. */
    static final String SETS_TSV = "compare-sets.tsv";

    /** Rows of {@link #SETS_TSV}, filled as runs finish. */
    private final List<String> setRows = new ArrayList<>();

    /** The hypervolume's objectives and reference point, in words (set with the first run's session). */
    private String hypervolumeNote;

    /** One run's outcome. */
    record Outcome(String strategy, long seed, int best, double firstCritical, double toBest, double charged,
                   double hypervolume, double seconds, long decodedSamples, double decodeSeconds, int samples,
                   int reported, int confirmed, int certified, List<double[]> anytime) {
    }

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        SearchConfig settings = SearchConfig.read(config);
        SearchConfig.Compare plan = settings.compare();
        strategies = strategies != null ? strategies : plan.strategies();
        seeds = seeds != null ? seeds : plan.seeds();
        budget = budget != null ? budget : plan.budget();
        minimum = minimum != null ? minimum : plan.minimum();
        if (budget == null) {
            throw new CommandLine.ParameterException(spec.commandLine(), "give a budget: --budget N, or budget in the "
                    + "compare section of --config");
        }
        if (seeds < 1 || budget < 1) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--seeds and --budget must be at least 1");
        }
        List<StrategySpec> specs = new ArrayList<>();
        for (String s : strategies) {
            try {
                specs.add(StrategySpec.parse(s.trim()));
            } catch (IllegalArgumentException e) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--strategies: " + e.getMessage());
            }
        }
        Cohort c = cohort.read();
        ProgressBar bar = new ProgressBar(spec.commandLine().getErr(), "compare");
        List<Outcome> outcomes = new ArrayList<>();
        int total = specs.size() * seeds;
        int done = 0;
        String intactLine = null;
        try (Decoder decoder = model.open()) {
            for (StrategySpec s : specs) {
                for (long seed = 1; seed <= seeds; seed++) {
                    bar.update(done, total, s.name() + " seed " + seed);
                    String command = "compare " + s.name() + " seed " + seed + " budget " + budget;
                    try (ScoringSession session = ScoringSession.open(decoder, c, scoring.settings("compare", command,
                            seed, budget, model.threads()))) {
                        if (intactLine == null) {
                            Reports.header(pw, session);
                            SetScore intact = session.intact().score();
                            intactLine = String.format(Locale.ROOT, "Intact search-part accuracy %.3f (n = %d), "
                                    + "chance %.3f. Critical means %s.", intact.accuracy(), intact.n(), intact.chance(),
                                    session.settings().criterion().describe());
                            hypervolumeNote = String.format(Locale.ROOT, "Hypervolume: of each run's front in (size / "
                                    + "%d, search-part accuracy), both minimised, against the reference point "
                                    + "(1, %.3f = intact accuracy); larger is better, at most %.3f.",
                                    session.inputs().batch().regions(), intact.accuracy(), intact.accuracy());
                        }
                        double[] first = {Double.NaN};
                        List<double[]> anytime = new ArrayList<>();
                        SearchRun.Result r = SearchRun.run(session, s.create(settings), new SearchRun.Settings(
                                Double.POSITIVE_INFINITY, null, seed, s.prune(), 20,
                                SearchRun.Settings.DEFAULT_RESERVE, s.race()), ctx -> {
                                    int b = ctx.front().bestCriticalSize();
                                    if (Double.isNaN(first[0]) && b > 0) {
                                        first[0] = ctx.charged();
                                    }
                                    if (b > 0 && (anytime.isEmpty() || anytime.get(anytime.size() - 1)[1] != b)) {
                                        anytime.add(new double[] {ctx.charged(), b});
                                    }
                                });
                        int confirmed = 0;
                        int certified = 0;
                        for (SearchRun.Reported x : r.reported()) {
                            confirmed += Boolean.TRUE.equals(x.confirmationCritical()) ? 1 : 0;
                            certified += x.certificate() != null ? 1 : 0;
                        }
                        int regions = session.inputs().batch().regions();
                        double hv = Hypervolume.ofFront(r.front(), regions, session.intact().score().accuracy(),
                                SetScore::accuracy);
                        if (r.bestSize() > 0 && (anytime.isEmpty()
                                || anytime.get(anytime.size() - 1)[1] != r.bestSize())) {
                            anytime.add(new double[] {r.chargedAtBest(), r.bestSize()});
                        }
                        for (SearchRun.Reported x : r.reported()) {
                            SetScore q = x.search();
                            SetScore cq = x.confirmation();
                            setRows.add(String.join("\t", s.name(), Long.toString(seed),
                                    Integer.toString(x.set().size()), SearchCommand.names(session, x.set()),
                                    TextFiles.num(q.accuracy()), Boolean.toString(x.searchCritical()),
                                    cq == null ? "NA" : TextFiles.num(cq.accuracy()),
                                    x.confirmationCritical() == null ? "NA" : x.confirmationCritical().toString(),
                                    x.certificate() == null ? "none" : "irreducible"));
                        }
                        outcomes.add(new Outcome(s.name(), seed, r.bestSize(), first[0], r.chargedAtBest(),
                                r.charged(), hv, r.elapsedSeconds(), session.scorer().decodedSamples(),
                                session.scorer().decodeSeconds(), session.search().inputs().size(),
                                r.reported().size(), confirmed, certified, anytime));
                    }
                    done++;
                }
            }
        }
        bar.done();
        pw.println(intactLine);
        print(pw, specs, outcomes);
        writeTsv(scoring.out().resolve("compare-runs.tsv"), scoring.out().resolve("compare-anytime.tsv"), outcomes);
        TextFiles.write(scoring.out().resolve(SETS_TSV), w -> {
            w.write("strategy\tseed\tsize\tregions\tsearch_accuracy\tsearch_critical\tconfirmation_accuracy\t"
                    + "confirmation_critical\tcertificate\n");
            for (String row : setRows) {
                w.write(row + "\n");
            }
        });
        pw.printf("%nPer run: %s; anytime curves (sets charged -> best critical size): %s; every reported set with its "
                + "search and confirmation scores: %s.%n", scoring.out().resolve("compare-runs.tsv"),
                scoring.out().resolve("compare-anytime.tsv"), scoring.out().resolve(SETS_TSV));
        pw.printf("Results: %s (every run's sets, traces, fronts and certificates; cruxset export --out %s)%n",
                scoring.out().resolve(ScoringSession.STORE_FILE), scoring.out());
        return 0;
    }

    private void print(PrintWriter pw, List<StrategySpec> specs, List<Outcome> outcomes) {
        double decodeSeconds = outcomes.stream().mapToDouble(Outcome::decodeSeconds).sum();
        long decodedSamples = outcomes.stream().mapToLong(Outcome::decodedSamples).sum();
        int samples = outcomes.isEmpty() ? 0 : outcomes.get(0).samples();
        double perSet = decodedSamples == 0 ? Double.NaN : decodeSeconds / decodedSamples * samples;
        pw.printf(Locale.ROOT, "%nBudget %d scored sets per run, seeds 1-%d. %s%n", budget, seeds, Double.isNaN(perSet)
                ? "Decoder-equivalent time: not measured (nothing was decoded in this invocation: every run was "
                + "replayed from the store)."
                : String.format(Locale.ROOT, "Decoder-equivalent time = sets charged × %.4f s, the decoder's measured "
                + "time per scored set (%d samples) over every pass of all runs, raced chunks included (so the order "
                + "of the runs, and the sets a later run found in the store, do not favour it).", perSet, samples));
        Map<String, List<Outcome>> by = new LinkedHashMap<>();
        for (StrategySpec s : specs) {
            by.put(s.name(), new ArrayList<>());
        }
        for (Outcome o : outcomes) {
            by.get(o.strategy()).add(o);
        }
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"strategy", "runs", "best size median [IQR]", minimum == null ? "success" : "reached "
                + minimum, "sets to first critical (median)", "sets to best (median)", "hypervolume (median)",
            "sets charged (median)", "seconds (median)", "decoder-equivalent s (median)",
            "reported sets confirmed / certified"});
        for (Map.Entry<String, List<Outcome>> e : by.entrySet()) {
            List<Outcome> os = e.getValue();
            double[] best = os.stream().mapToDouble(o -> o.best() < 0 ? Double.POSITIVE_INFINITY : o.best()).toArray();
            long reached = minimum == null ? -1 : os.stream().filter(o -> o.best() == minimum).count();
            rows.add(new String[] {e.getKey(), Integer.toString(os.size()),
                fmt(sizeQuantile(best, 0.5)) + " [" + fmt(sizeQuantile(best, 0.25)) + ", "
                    + fmt(sizeQuantile(best, 0.75)) + "]",
                minimum == null ? "-" : reached + "/" + os.size(),
                fmt(sizeQuantile(os.stream().mapToDouble(o -> Double.isNaN(o.firstCritical()) ? Double.POSITIVE_INFINITY
                        : o.firstCritical()).toArray(), 0.5)),
                fmt(sizeQuantile(os.stream().mapToDouble(o -> o.best() < 0 ? Double.POSITIVE_INFINITY : o.toBest())
                        .toArray(), 0.5)),
                String.format(Locale.ROOT, "%.4f", sizeQuantile(os.stream().mapToDouble(Outcome::hypervolume)
                        .toArray(), 0.5)),
                fmt(sizeQuantile(os.stream().mapToDouble(Outcome::charged).toArray(), 0.5)),
                String.format(Locale.ROOT, "%.1f", sizeQuantile(os.stream().mapToDouble(Outcome::seconds).toArray(),
                        0.5)),
                String.format(Locale.ROOT, "%.1f", perSet * sizeQuantile(os.stream().mapToDouble(Outcome::charged)
                        .toArray(), 0.5)),
                os.stream().mapToInt(Outcome::confirmed).sum() + "/" + os.stream().mapToInt(Outcome::reported).sum()
                        + " / " + os.stream().mapToInt(Outcome::certified).sum()});
        }
        Table.print(pw, rows);
        if (hypervolumeNote != null) {
            pw.println(hypervolumeNote);
        }
        if (by.size() < 2) {
            return;
        }
        Map<String, Map<Long, Integer>> bestBySeed = new LinkedHashMap<>();
        by.forEach((name, os) -> {
            Map<Long, Integer> m = new LinkedHashMap<>();
            os.forEach(o -> m.put(o.seed(), o.best()));
            bestBySeed.put(name, m);
        });
        List<StrategyTests.Row> tests = StrategyTests.between(bestBySeed);
        pw.printf("%nBest critical size between strategies (two-sided exact tests: Wilcoxon signed-rank when paired by "
                + "seed, zero differences by Pratt's method, the permutation distribution given the midranks; "
                + "Mann-Whitney U when the seeds differ; Holm-corrected over %d comparisons; a run without a critical "
                + "set counts as larger than any):%n", tests.size());
        List<String[]> t = new ArrayList<>();
        t.add(new String[] {"comparison", "test", "median difference", "W+ or U", "p", "Holm p",
            "smallest attainable Holm p"});
        for (StrategyTests.Row r : tests) {
            t.add(new String[] {r.first() + " vs " + r.second(), r.test(), fmt(r.medianDifference()),
                fmt(r.statistic()), String.format(Locale.ROOT, "%.4g", r.p()),
                String.format(Locale.ROOT, "%.4g", r.holm()), String.format(Locale.ROOT, "%.4g", r.smallestHolm())});
        }
        Table.print(pw, t);
        pw.println(StrategyTests.power(tests));
    }

    private static void writeTsv(Path runs, Path anytime, List<Outcome> outcomes) {
        StringBuilder a = new StringBuilder("strategy\tseed\tbest_size\tsets_to_first_critical\tsets_to_best\t"
                + "sets_charged\thypervolume\tseconds\treported\tconfirmed\tcertified\n");
        StringBuilder b = new StringBuilder("strategy\tseed\tsets_charged\tbest_critical_size\n");
        for (Outcome o : outcomes) {
            a.append(String.join("\t", o.strategy(), Long.toString(o.seed()), o.best() < 0 ? "" : Integer.toString(
                    o.best()), num(o.firstCritical()), o.best() < 0 ? "" : num(o.toBest()), num(o.charged()),
                    num(o.hypervolume()), num(o.seconds()), Integer.toString(o.reported()),
                    Integer.toString(o.confirmed()), Integer.toString(o.certified()))).append('\n');
            for (double[] p : o.anytime()) {
                b.append(o.strategy()).append('\t').append(o.seed()).append('\t').append(num(p[0])).append('\t')
                        .append((int) p[1]).append('\n');
            }
        }
        try {
            java.nio.file.Files.writeString(runs, a);
            java.nio.file.Files.writeString(anytime, b);
        } catch (java.io.IOException e) {
            throw new java.io.UncheckedIOException("cannot write " + runs + " or " + anytime + ": " + e.getMessage(), e);
        }
    }

    private static String num(double v) {
        return Double.isNaN(v) ? "" : Double.toString(v);
    }

    private static String fmt(double v) {
        if (Double.isInfinite(v)) {
            return "none";
        }
        if (Math.abs(v) >= 1e8) {
            return "none";
        }
        return v == Math.rint(v) ? String.format(Locale.ROOT, "%.0f", v) : String.format(Locale.ROOT, "%.1f", v);
    }
}
