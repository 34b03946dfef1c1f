package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.PartSplit;
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
            "",
            "Held-out subjects are split into a search part (what search strategies see; one budget unit is one set "
                + "scored on all of its samples) and a confirmation part (never searched); each set is reported on both. "
                + "Every evaluation is kept in DIR/results.sqlite and reused: a rerun costs no decoder calls."})
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

    @Mixin
    ScoringOptions scoring;

    @Mixin
    ResamplingOptions resampling;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of bootstrap and permutations. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
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
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings settings = scoring.settings("score", command, seed, Double.POSITIVE_INFINITY,
                model.threads());
        try (Decoder decoder = model.open();
             ScoringSession session = ScoringSession.open(decoder, c, settings)) {
            List<RegionSet> sets = new ArrayList<>();
            for (RegionSet s : atlasSets) {
                sets.add(session.toInputs(s));
            }
            List<LesionScorer.Scored> searched = session.scorer().score(sets);
            List<LesionScorer.Scored> confirmed = session.confirmation().map(p -> p.scorer().score(sets)).orElse(null);
            print(pw, session, atlasSets, searched, confirmed);
        }
        return 0;
    }

    private void print(PrintWriter pw, ScoringSession session, List<RegionSet> atlasSets,
                       List<LesionScorer.Scored> searched, List<LesionScorer.Scored> confirmed) {
        Reports.header(pw, session);
        pw.printf("Lesion mode: %s%s. Critical means %s.%n", session.settings().mode().label(),
                session.settings().mode().isRandom() ? " (seed " + session.settings().modeSeed() + ")" : "",
                session.settings().criterion().describe());
        for (String note : session.notes()) {
            pw.println("Note: " + note);
        }
        table(pw, session.search(), atlasSets, searched);
        session.confirmation().ifPresent(p -> table(pw, p, atlasSets, confirmed));
        pw.println();
        LesionScorer sc = session.scorer();
        pw.printf("Decoder calls: %d set(s) decoded, %d reused from the store, %d already paid by this run "
                + "(search part; %.0f scored set(s) charged to this run).%n", sc.decodedCount(), sc.storedCount(),
                sc.replayedCount(), sc.budget().spent());
        session.confirmation().ifPresent(p -> pw.printf("Confirmation part (not charged): %d set(s) decoded, %d reused "
                + "from the store, %d already paid by this run.%n", p.scorer().decodedCount(), p.scorer().storedCount(),
                p.scorer().replayedCount()));
        pw.printf("Results: %s (cruxset export --out %s writes TSV views)%n",
                scoring.out().resolve(ScoringSession.STORE_FILE), scoring.out());
    }

    private void table(PrintWriter pw, ScoringSession.Part part, List<RegionSet> atlasSets, List<LesionScorer.Scored> scored) {
        ModelInputs in = part.inputs();
        pw.println();
        pw.printf("%s part: n = %d samples from %d subjects; chance %.3f (majority-class rate of these samples)%s%n",
                part.name().substring(0, 1).toUpperCase(java.util.Locale.ROOT) + part.name().substring(1), in.size(),
                part.subjects(), part.intact().score().chance(),
                part.name().equals(PartSplit.SEARCH) ? "" : "; never seen by a search");
        int[] subjectOf = in.subjectIndex();
        int subjects = 0;
        for (int v : subjectOf) {
            subjects = Math.max(subjects, v + 1);
        }
        int permutations = resampling.permutations();
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"lesion", "size", "accuracy", "95% Wilson", "95% subject bootstrap", "balanced",
            "p(true)", "p-value", permutations > 0 ? "perm. chance" : null, "critical"});
        rows.add(row("(none: intact)", 0, part.intact(), part, subjectOf, subjects));
        for (int i = 0; i < scored.size(); i++) {
            rows.add(row(lesions.get(i).trim(), atlasSets.get(i).size(), scored.get(i), part, subjectOf, subjects));
        }
        Table.print(pw, rows);
    }

    private String[] row(String name, int size, LesionScorer.Scored s, ScoringSession.Part part, int[] subjectOf,
                         int subjects) {
        ModelInputs in = part.inputs();
        SetScore sc = s.score();
        boolean[] correct = new boolean[in.size()];
        int[] pred = s.outcomes().predicted();
        for (int i = 0; i < correct.length; i++) {
            correct[i] = pred[i] == in.label(i);
        }
        String boot = "-";
        int bootstrap = resampling.bootstrap();
        if (bootstrap > 0) {
            double[] b = ClusteredStats.subjectBootstrap(correct, subjectOf, subjects, bootstrap, seed, 0.95);
            boot = String.format("%.3f-%.3f", b[0], b[1]);
        }
        String perm = null;
        int permutations = resampling.permutations();
        if (permutations > 0) {
            ClusteredStats.PermutationChance pc = ClusteredStats.labelPermutation(pred, in.labels(), subjectOf, subjects,
                    permutations, seed, 0.95);
            perm = String.format("%.3f (p %.3g)", pc.mean(), pc.pValue());
        }
        boolean critical = size > 0 && part.critical(sc);
        return new String[] {name, Integer.toString(size), String.format("%.3f", sc.accuracy()),
            String.format("%.3f-%.3f", sc.wilsonLow(), sc.wilsonHigh()), boot, String.format("%.3f", sc.balancedAccuracy()),
            String.format("%.3f", sc.meanTrueClassProbability()), String.format("%.3g", sc.pValue()), perm,
            size == 0 ? "-" : critical ? "CRITICAL" : "no"};
    }
}
