package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.stats.ClusteredStats;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset score}: scores named lesion sets and says whether each is critical. */
@Command(name = "score", mixinStandardHelpOptions = true,
        description = {"Score a decoder on held-out data under virtual lesions and say whether each lesion is critical.",
            "Every evaluation is kept in DIR/results.sqlite and reused: a rerun costs no decoder calls."})
public final class ScoreCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Option(names = "--lesion", required = true, paramLabel = "SET",
            description = {"Regions to lesion: names, network:NAME or atlas indices, comma-separated.",
                "Repeat the option to score several sets, e.g. --lesion \"arbor-01,beacon-02\" --lesion network:cinder."})
    List<String> lesions;

    @Option(names = "--mode", defaultValue = "zero", paramLabel = "MODE",
            description = "What lesioned regions are replaced with: zero, mean, noise, swap or phase. Default: ${DEFAULT-VALUE}.")
    String mode;

    @Option(names = "--mode-seed", defaultValue = "1", paramLabel = "N",
            description = "Seed of the noise, swap and phase modes (part of every score's identity). Default: ${DEFAULT-VALUE}.")
    long modeSeed;

    @Option(names = "--reference", paramLabel = "DIR",
            description = "Cohort whose samples give the mean and noise modes' region statistics (needed for a model trained elsewhere).")
    Path reference;

    @Option(names = "--criterion", defaultValue = "binomial:0.05", paramLabel = "C",
            description = "When a set is critical: binomial:ALPHA (not significantly above chance), accuracy:A, or fraction:F "
                    + "(fallen F of the way from intact accuracy to chance). Default: ${DEFAULT-VALUE}.")
    String criterion;

    @Option(names = "--bootstrap", defaultValue = "1000", paramLabel = "N",
            description = "Resamples of the subject-clustered bootstrap interval (0 to skip). Default: ${DEFAULT-VALUE}.")
    int bootstrap;

    @Option(names = "--permutations", defaultValue = "0", paramLabel = "N",
            description = "Label permutations (within subject) for an empirical chance level of each set (0 to skip). Default: ${DEFAULT-VALUE}.")
    int permutations;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of bootstrap and permutations. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Option(names = "--out", defaultValue = "cruxset-out", paramLabel = "DIR",
            description = "Output folder holding the results store. Default: ${DEFAULT-VALUE}.")
    Path out;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        LesionMode m = LesionMode.parse(mode);
        CollapseCriterion crit = CollapseCriterion.parse(criterion);
        Cohort c = cohort.read();
        Atlas atlas = c.atlas();
        List<RegionSet> atlasSets = new ArrayList<>();
        for (String l : lesions) {
            RegionSet s = LesionSpec.parse(l, atlas);
            if (s.isEmpty()) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--lesion '" + l + "' names no region");
            }
            if (s.size() == atlas.size()) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--lesion '" + l + "' lesions all "
                        + atlas.size() + " regions: nothing would be left to decode from");
            }
            atlasSets.add(s);
        }
        Cohort ref = reference == null ? null : CohortFiles.read(reference);
        try (Decoder decoder = model.open()) {
            String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
            ScoringSession.Settings settings = new ScoringSession.Settings(m, modeSeed, ref, crit,
                    Double.POSITIVE_INFINITY, model.threads(), out, "score", command, seed);
            try (ScoringSession session = ScoringSession.open(decoder, c, settings)) {
                List<RegionSet> sets = new ArrayList<>();
                for (RegionSet s : atlasSets) {
                    sets.add(session.toInputs(s));
                }
                List<LesionScorer.Scored> scored = session.scorer().score(sets);
                print(pw, session, atlasSets, scored);
            }
        }
        return 0;
    }

    private void print(PrintWriter pw, ScoringSession session, List<RegionSet> atlasSets, List<LesionScorer.Scored> scored) {
        ModelInputs in = session.inputs();
        pw.println(Reports.CAUTION);
        pw.printf("Scored on the %s; chance %.3f (majority-class rate of these samples).%n", session.heldOut().description(),
                session.intact().score().chance());
        pw.printf("Lesion mode: %s%s. Critical means %s.%n", session.settings().mode().label(),
                session.settings().mode().isRandom() ? " (seed " + session.settings().modeSeed() + ")" : "",
                session.settings().criterion().describe());
        for (String note : session.notes()) {
            pw.println("Note: " + note);
        }
        pw.println();
        int[] subjectOf = subjectIndex(in);
        int subjects = 0;
        for (int v : subjectOf) {
            subjects = Math.max(subjects, v + 1);
        }
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"lesion", "size", "accuracy", "95% Wilson", "95% subject bootstrap", "balanced",
            "p(true)", "p-value", permutations > 0 ? "perm. chance" : null, "critical"});
        rows.add(row("(none: intact)", 0, session.intact(), session, in, subjectOf, subjects));
        for (int i = 0; i < scored.size(); i++) {
            rows.add(row(lesions.get(i).trim(), atlasSets.get(i).size(), scored.get(i), session, in, subjectOf, subjects));
        }
        Table.print(pw, rows);
        pw.println();
        LesionScorer sc = session.scorer();
        pw.printf("Decoder calls: %d set(s) decoded, %d reused from the store, %d already paid by this run.%n",
                sc.decodedCount(), sc.storedCount(), sc.replayedCount());
        pw.printf("Results: %s (cruxset export --out %s writes TSV views)%n",
                out.resolve(ScoringSession.STORE_FILE), out);
    }

    private String[] row(String name, int size, LesionScorer.Scored s, ScoringSession session, ModelInputs in,
                         int[] subjectOf, int subjects) {
        SetScore sc = s.score();
        boolean[] correct = new boolean[in.size()];
        int[] pred = s.outcomes().predicted();
        for (int i = 0; i < correct.length; i++) {
            correct[i] = pred[i] == in.label(i);
        }
        String boot = "-";
        if (bootstrap > 0) {
            double[] b = ClusteredStats.subjectBootstrap(correct, subjectOf, subjects, bootstrap, seed, 0.95);
            boot = String.format("%.3f-%.3f", b[0], b[1]);
        }
        String perm = null;
        if (permutations > 0) {
            ClusteredStats.PermutationChance pc = ClusteredStats.labelPermutation(pred, in.labels(), subjectOf, subjects,
                    permutations, seed, 0.95);
            perm = String.format("%.3f (p %.3g)", pc.mean(), pc.pValue());
        }
        boolean critical = size > 0 && session.critical(sc);
        return new String[] {name, Integer.toString(size), String.format("%.3f", sc.accuracy()),
            String.format("%.3f-%.3f", sc.wilsonLow(), sc.wilsonHigh()), boot, String.format("%.3f", sc.balancedAccuracy()),
            String.format("%.3f", sc.meanTrueClassProbability()), String.format("%.3g", sc.pValue()), perm,
            size == 0 ? "-" : critical ? "CRITICAL" : "no"};
    }

    private static int[] subjectIndex(ModelInputs in) {
        Map<String, Integer> idx = new HashMap<>();
        int[] out = new int[in.size()];
        for (int s = 0; s < in.size(); s++) {
            out[s] = idx.computeIfAbsent(in.subjects().get(s), k -> idx.size());
        }
        return out;
    }
}
