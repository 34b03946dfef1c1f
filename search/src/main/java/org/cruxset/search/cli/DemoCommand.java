package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.simulate.SimulatedCohorts;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.SearchRun;
import org.cruxset.search.strategy.GrowStrategy;
import org.cruxset.search.strategy.PruneStrategy;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset demo}: the main job on the bundled synthetic cohort and its trained decoder. */
@Command(name = "demo", mixinStandardHelpOptions = true,
        description = {"Run Cruxset on the bundled synthetic demo: the decoder's held-out accuracy on the search and "
                + "confirmation parts, what lesioning its smallest critical sets (and, as a control, as many decoy regions) "
                + "does to it, and a short search that finds them without the truth. Then the tour, each step a cruxset "
                + "command on the same results store: a network scan, gradient saliency, network Shapley values, a "
                + "compare of every strategy on equal budgets, the deletion curve of the saliency ranking, the audit "
                + "of three rankings, and the report (about half a minute on 2 cores). The demo cohort is generated "
                + "from DIR/demo.yaml on first use (a few seconds)."})
public final class DemoCommand implements Callable<Integer>, ModelSource {
    /** The demo's settings, decoder and committed truth inside the demo folder. */
    static final String CONFIG = "demo.yaml";
    static final String MODEL = "model.onnx";
    static final String TRUTH = "truth.json";
    static final String COHORT = "cohort";

    @Spec
    CommandSpec spec;

    @Option(names = "--demo", defaultValue = "demo-data", paramLabel = "DIR",
            description = "Folder of the bundled demo (demo.yaml, model.onnx, truth.json; cohort/ is generated). Default: ${DEFAULT-VALUE}.")
    Path demo;

    @Mixin
    ScoringOptions scoring;

    @Mixin
    ThreadOptions threads;

    @Option(names = "--quick", description = "Only the first part (the truth check and a short search), without the "
            + "tour of scan, saliency, Shapley values, compare, audit and report.")
    boolean quick;

    /** The demo's decoder as a cluster's executors need it (--spark). */
    @Override
    public org.cruxset.scoring.decoder.DecoderSource source(Decoder opened) {
        return OnnxModels.source(demo.resolve(MODEL), OnnxOptions.defaults(), opened, 1);
    }

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        Path cohortDir = demo.resolve(COHORT);
        Path modelFile = demo.resolve(MODEL);
        Path truth = demo.resolve(TRUTH);
        for (Path p : List.of(demo.resolve(CONFIG), modelFile, truth)) {
            if (!Files.exists(p)) {
                throw new IllegalArgumentException(p + " not found: run from the repository root, or pass --demo DIR");
            }
        }
        pw.println(Reports.CAUTION);
        pw.println();
        if (SimulatedCohorts.ensure(demo.resolve(CONFIG), cohortDir)) {
            pw.printf("Generated the demo cohort from %s into %s (first use).%n", demo.resolve(CONFIG), cohortDir);
        }
        List<String> differ = TruthFile.summary(cohortDir.resolve(TruthFile.NAME)).differences(TruthFile.summary(truth));
        if (!differ.isEmpty()) {
            pw.printf("Note: the demo cohort generated here differs from the one the bundled decoder's truth was computed "
                    + "on (%s): figures may differ a little from the README's.%n", String.join("; ", differ));
        }
        Cohort c = CohortFiles.read(cohortDir);
        Reports.cohort(pw, c);
        String command = "demo " + String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings settings = scoring.settings("demo", command, 0, Double.POSITIVE_INFINITY,
                threads.threads());
        try (Decoder decoder = OnnxModels.load(modelFile, OnnxOptions.defaults());
             ScoringSession session = ScoringSession.open(decoder, c, settings)) {
            Reports.model(pw, decoder.card());
            pw.println();
            pw.printf("Held-out data: %s.%n", session.heldOut().description());
            Reports.parts(pw, session);
            String criterion = session.settings().criterion().label();
            List<List<String>> smallest = truthSets(truth, criterion, pw);
            int size = smallest.get(0).size();
            List<String> decoys = TruthFile.decoys(truth);
            List<String> control = decoys.subList(0, Math.min(decoys.size(), size));
            pw.printf("Lesion mode: %s. Critical means %s.%n", session.settings().mode().label(),
                    session.settings().criterion().describe());
            pw.printf("The decoder's own truth (every subset of the 10-region planted pool lesioned, scored on the "
                    + "search part) has %d smallest critical set(s) of size %d.%n", smallest.size(), size);
            pw.println();
            List<RegionSet> sets = new ArrayList<>();
            for (List<String> m : smallest) {
                sets.add(inputs(session, m));
            }
            sets.add(inputs(session, control));
            List<LesionScorer.Scored> searched = session.scorer().score(sets);
            List<LesionScorer.Scored> confirmed = session.confirmation().map(p -> p.scorer().score(sets)).orElse(null);
            List<String[]> rows = new ArrayList<>();
            rows.add(new String[] {"lesion", "size", "search accuracy (95% Wilson)", "search",
                "confirmation accuracy (95% Wilson)", "confirmation"});
            rows.add(row("(none: intact)", 0, session.search(), session.intact().score(),
                    session.confirmation().map(p -> p.intact().score()).orElse(null), session));
            for (int i = 0; i <= smallest.size(); i++) {
                boolean isControl = i == smallest.size();
                List<String> regions = isControl ? control : smallest.get(i);
                rows.add(row(String.join(",", regions) + (isControl ? " (as many decoys)" : ""), regions.size(),
                        session.search(), searched.get(i).score(), confirmed == null ? null : confirmed.get(i).score(),
                        session));
            }
            Table.print(pw, rows);
            pw.println();
            if (confirmed == null) {
                pw.println("No confirmation part: the verdicts above were reached on the samples the truth was computed "
                        + "on, so they are optimistic.");
            } else {
                ScoringSession.Part confirmation = session.confirmation().get();
                int ok = 0;
                for (int i = 0; i < smallest.size(); i++) {
                    boolean searchCritical = session.critical(searched.get(i).score());
                    boolean confirmCritical = confirmation.critical(confirmed.get(i).score());
                    if (searchCritical && confirmCritical) {
                        ok++;
                    } else {
                        pw.printf("-> %s is critical on %s: report it as not confirmed.%n",
                                String.join(",", smallest.get(i)), searchCritical ? "the search part only"
                                        : confirmCritical ? "the confirmation part only" : "neither part");
                    }
                }
                pw.printf("-> Confirmed: %d of %d smallest critical set(s) found on the search part are also critical on "
                        + "the confirmation part, whose subjects the truth never saw.%n", ok, smallest.size());
            }
            pw.println();
            pw.println("A short search over all " + session.inputs().batch().regions() + " regions (grow, then prune), "
                    + "without looking at the truth:");
            SearchRun.Result r = SearchRun.run(session, new GrowStrategy(false, false),
                    new SearchRun.Settings(Double.POSITIVE_INFINITY, null, 1, true, PruneStrategy.DEFAULT_CERTIFY,
                            SearchRun.Settings.DEFAULT_RESERVE), null);
            for (SearchRun.Reported x : r.reported()) {
                String names = SearchCommand.names(session, x.set());
                boolean inTruth = smallest.stream().anyMatch(t -> new java.util.HashSet<>(t).equals(
                        new java.util.HashSet<>(List.of(names.split(",")))));
                pw.printf("  %s (size %d): search %s, confirmation %s, %s; %s%n", names, x.set().size(),
                        accuracy(x.search()), x.confirmation() == null ? "-" : accuracy(x.confirmation())
                                + (x.confirmationCritical() ? " CRITICAL" : " not confirmed"),
                        x.certificate() == null ? "not certified" : "irreducible",
                        inTruth ? "one of the truth's smallest critical sets" : x.set().size() < size
                                ? "smaller than the truth's (found outside the planted pool)" : "not in the truth");
            }
            if (r.reported().isEmpty()) {
                pw.println("  no critical set found");
            }
            pw.printf("  %.0f sets scored on the search part by this demo run, the table above included.%n", r.charged());
        }
        if (!quick) {
            tour(pw, modelFile, cohortDir);
        }
        pw.printf("%nSearch for yourself (an overnight run takes --hours or --until; kill it and rerun to resume):%n"
                + "  ./cruxset search --model %s --cohort %s --strategy grow --budget 5000 --out %s%n",
                modelFile, cohortDir, scoring.out());
        pw.printf("%nRebuild the report at any time (no decoder call): ./cruxset report --out %s --cohort %s%n",
                scoring.out(), cohortDir);
        pw.println();
        pw.println(Reports.CAUTION);
        return 0;
    }

    /** Strategies of the demo's short compare: every search strategy that works over all regions. */
    static final String TOUR_STRATEGIES = "random,grow+prune,ranked+prune,genetic~race,local~race,surrogate~race";

    /**
     * The tour: each step is the command a user would run, run in this process on the same output folder with the
     * demo's scoring options; its full output goes to OUT/demo-logs/STEP.txt and a summary, read from the tables it
     * wrote, to the console.
     */
    private void tour(PrintWriter pw, Path model, Path cohortDir) {
        Path out = scoring.out();
        List<String> shared = new ArrayList<>(List.of("--model", model.toString(), "--cohort", cohortDir.toString()));
        shared.addAll(forwarded());
        long start = System.nanoTime();
        pw.println();
        pw.println("The tour: each step is a cruxset command on the same results store (full outputs in "
                + out.resolve("demo-logs") + ").");
        step(pw, "1/7 network scan (one network lesioned at a time)", "scan", shared, "--units", "networks");
        top(pw, out.resolve("scan-networks.tsv"), "unit", "drop", 3, "largest accuracy drops");
        step(pw, "2/7 gradient saliency", "saliency", shared);
        top(pw, out.resolve("saliency-regions.tsv"), "region", "mean_abs", 6, "regions with the largest mean |gradient|");
        step(pw, "3/7 network Shapley values of the lesion game", "shapley", shared, "--players", "networks");
        top(pw, out.resolve("shapley-networks.tsv"), "unit", "value", 3, "largest values (95% intervals in the table)");
        step(pw, "4/7 a short compare of the search strategies on equal budgets", "compare", shared, "--strategies",
                TOUR_STRATEGIES, "--seeds", "2", "--budget", "600");
        compareSummary(pw, out.resolve("compare-runs.tsv"));
        pw.println("  (exhaustive is left out: it needs a small pool of candidate regions; see search --strategy "
                + "exhaustive --help)");
        step(pw, "5/7 deletion curve of the saliency ranking against random orders", "curve", shared, "--ranking",
                out.resolve("ranking-saliency-regions.tsv").toString(), "--k", "1:12", "--null", "20");
        org.cruxset.scoring.cohort.TsvTable curve = org.cruxset.scoring.cohort.TsvTable.read(out.resolve("curve.tsv"));
        String firstCritical = "none of the first " + curve.rowCount();
        for (int r = 0; r < curve.rowCount(); r++) {
            if ("true".equals(curve.get(r, curve.column("deletion_critical")))) {
                firstCritical = "k = " + curve.get(r, curve.column("k"));
                break;
            }
        }
        pw.printf("  the saliency ranking's first critical prefix: %s (curve.tsv; a later prefix need not stay "
                + "critical)%n", firstCritical);
        step(pw, "6/7 audit: is a ranking's critical set the smallest?", "audit", shared, "--ranking",
                out.resolve("ranking-saliency-regions.tsv").toString(), "--ranking",
                out.resolve("ranking-scan-networks.tsv").toString(), "--ranking",
                out.resolve("ranking-shapley-networks.tsv").toString());
        verdicts(pw, out.resolve(AuditCommand.PREFIX_TSV));
        step(pw, "7/7 the report", "report", List.of(), "--cohort", cohortDir.toString());
        pw.printf(Locale.ROOT, "  Open %s in any browser (figures also as SVG and PNG in %s).%n",
                out.resolve("report").resolve("report.html"), out.resolve("report").resolve("figures"));
        pw.printf(Locale.ROOT, "The tour took %.0f s.%n", (System.nanoTime() - start) / 1e9);
    }

    /** The demo's own scoring and thread options, as given, for every step. */
    private List<String> forwarded() {
        List<String> args = new ArrayList<>();
        for (picocli.CommandLine.Model.OptionSpec o : spec.commandLine().getParseResult().matchedOptions()) {
            if (o.longestName().equals("--demo") || o.longestName().equals("--quick")) {
                continue;
            }
            for (String v : o.originalStringValues()) {
                args.add(o.longestName());
                args.add(v);
            }
        }
        return args;
    }

    private void step(PrintWriter pw, String title, String command, List<String> shared, String... extra) {
        pw.println();
        pw.println(title + ": cruxset " + command + " ...");
        pw.flush();
        List<String> args = new ArrayList<>();
        args.add(command);
        if (command.equals("report")) {
            args.addAll(List.of("--out", scoring.out().toString()));
        } else {
            args.addAll(shared);
            if (shared.stream().noneMatch("--out"::equals)) {
                args.addAll(List.of("--out", scoring.out().toString()));
            }
        }
        args.addAll(List.of(extra));
        java.io.StringWriter log = new java.io.StringWriter();
        picocli.CommandLine cl = CruxsetCommand.commandLine();
        cl.setOut(new PrintWriter(log, true));
        cl.setErr(spec.commandLine().getErr());
        int code = cl.execute(args.toArray(new String[0]));
        Path file = scoring.out().resolve("demo-logs").resolve(command + ".txt");
        TextFiles.write(file, w -> w.write("$ cruxset " + String.join(" ", args) + "\n\n" + log));
        if (code != 0) {
            throw new IllegalStateException("the demo step 'cruxset " + command + "' failed (exit " + code + "); its "
                    + "output is in " + file);
        }
    }

    /** The first {@code k} rows of a table by a column, largest first. */
    private static void top(PrintWriter pw, Path tsv, String unitCol, String valueCol, int k, String what) {
        org.cruxset.scoring.cohort.TsvTable t = org.cruxset.scoring.cohort.TsvTable.read(tsv);
        List<Integer> rows = new ArrayList<>();
        for (int r = 0; r < t.rowCount(); r++) {
            rows.add(r);
        }
        int v = t.column(valueCol);
        rows.sort((a, b) -> Double.compare(parse(t.get(b, v)), parse(t.get(a, v))));
        StringBuilder sb = new StringBuilder();
        for (int r : rows.subList(0, Math.min(k, rows.size()))) {
            sb.append(sb.length() == 0 ? "" : ", ").append(t.get(r, t.column(unitCol))).append(' ')
                    .append(String.format(Locale.ROOT, "%.3f", parse(t.get(r, v))));
        }
        pw.printf("  %s: %s (%s)%n", what, sb, tsv.getFileName());
    }

    private static double parse(String s) {
        try {
            return Double.parseDouble(s);
        } catch (NumberFormatException e) {
            return Double.NaN;
        }
    }

    private static void compareSummary(PrintWriter pw, Path tsv) {
        org.cruxset.scoring.cohort.TsvTable t = org.cruxset.scoring.cohort.TsvTable.read(tsv);
        java.util.Map<String, List<String>> by = new java.util.LinkedHashMap<>();
        for (int r = 0; r < t.rowCount(); r++) {
            String best = t.get(r, t.column("best_size"));
            String at = t.get(r, t.column("sets_to_best"));
            by.computeIfAbsent(t.get(r, t.column("strategy")), x -> new ArrayList<>()).add(
                    (best.equals("-1") ? "none" : best) + (best.equals("-1") ? "" : " after "
                            + String.format(Locale.ROOT, "%.0f", parse(at)) + " sets"));
        }
        pw.println("  smallest critical set per seed (and sets charged to find it):");
        by.forEach((k, v) -> pw.printf("    %-16s %s%n", k, String.join("; ", v)));
    }

    private static void verdicts(PrintWriter pw, Path tsv) {
        org.cruxset.scoring.cohort.TsvTable t = org.cruxset.scoring.cohort.TsvTable.read(tsv);
        for (int r = 0; r < t.rowCount(); r++) {
            pw.printf("  %s: critical prefix of %s regions. %s%n", t.get(r, t.column("ranking")),
                    t.get(r, t.column("prefix_regions")), t.get(r, t.column("verdict")));
        }
    }

    /** The truth's smallest critical sets under {@code criterion}, or under the default one (saying so). */
    private static List<List<String>> truthSets(Path truth, String criterion, PrintWriter pw) {
        try {
            return TruthFile.decoderMinimumSets(truth, criterion);
        } catch (IllegalArgumentException e) {
            pw.printf("Note: %s; showing the default criterion's sets.%n", e.getMessage());
            return TruthFile.decoderMinimumSets(truth);
        }
    }

    private static RegionSet inputs(ScoringSession session, List<String> regions) {
        return session.toInputs(LesionSpec.parse(String.join(",", regions), session.cohort().atlas()));
    }

    private static String[] row(String name, int size, ScoringSession.Part search, SetScore s, SetScore confirm,
                                ScoringSession session) {
        return new String[] {name, Integer.toString(size), accuracy(s), size == 0 ? "-" : verdict(search.critical(s)),
            confirm == null ? "-" : accuracy(confirm),
            confirm == null || size == 0 ? "-" : verdict(session.confirmation().get().critical(confirm))};
    }

    private static String accuracy(SetScore s) {
        return String.format("%.3f (%.3f-%.3f), n = %d", s.accuracy(), s.wilsonLow(), s.wilsonHigh(), s.n());
    }

    private static String verdict(boolean critical) {
        return critical ? "CRITICAL" : "survives";
    }
}
