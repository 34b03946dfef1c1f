package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
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
                + "does to it, and a short search that finds them without the truth. The demo cohort is generated from "
                + "DIR/demo.yaml on first use (a few seconds)."})
public final class DemoCommand implements Callable<Integer> {
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
            pw.printf("%nSearch for yourself (an overnight run takes --hours or --until; kill it and rerun to resume):%n"
                    + "  ./cruxset search --model %s --cohort %s --strategy grow --budget 5000 --out %s%n",
                    modelFile, cohortDir, scoring.out());
            pw.printf("%nScore lesions of your own choice (kept and reused in %s):%n"
                    + "  ./cruxset score --model %s --cohort %s --lesion \"%s\" --lesion network:%s --out %s%n",
                    scoring.out().resolve(ScoringSession.STORE_FILE), modelFile, cohortDir, String.join(",", smallest.get(0)),
                    c.atlas().networks().keySet().iterator().next(), scoring.out());
        }
        return 0;
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
