package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.stats.PairedTests;
import org.cruxset.search.rank.LesionScan;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset scan}: one lesion at a time over regions or networks, with paired statistics. */
@Command(name = "scan", mixinStandardHelpOptions = true,
        description = {"Lesion one unit at a time (every region, every network, or networks then the regions inside "
                + "those that mattered) and compare each with the intact decoder on the same samples.",
            "",
            "Per unit: accuracy, the drop from intact with a subject-clustered bootstrap 95%% interval, the exact "
                + "McNemar test and the subject-clustered McNemar test on per-sample correctness, the chosen test's "
                + "p-value adjusted over all units (Holm or Benjamini-Hochberg), and whether the lesion alone is "
                + "critical. Scans the search part (as search strategies do; --confirm 0 for all held-out samples). "
                + "Writes a TSV and a ranking file for search --ranking and curve; every score is kept in "
                + "DIR/results.sqlite, so a rerun or an interrupted scan costs no decoder calls for what is done."})
public final class ScanCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Mixin
    ResamplingOptions resampling;

    @Option(names = "--units", defaultValue = "regions", paramLabel = "U",
            description = "regions, networks, or hierarchical (networks first, then the regions of the networks whose drop "
                    + "is significant). Default: ${DEFAULT-VALUE}.")
    String units;

    @Option(names = "--within", split = ",", paramLabel = "NET",
            description = "Scan only the regions of these networks (comma-separated), with --units regions.")
    List<String> within;

    @Option(names = "--test", defaultValue = "exact", paramLabel = "T",
            description = "Test behind the adjusted p-values and flags: exact (exact McNemar: samples independent) or "
                    + "clustered (subject-clustered McNemar: several correlated samples per subject; needs many "
                    + "subjects). Both are shown. Default: ${DEFAULT-VALUE}.")
    String test;

    @Option(names = "--correction", defaultValue = "holm", paramLabel = "C",
            description = "holm (family-wise error) or bh (Benjamini-Hochberg false discovery rate). Default: ${DEFAULT-VALUE}.")
    String correction;

    @Option(names = "--alpha", defaultValue = "0.05", paramLabel = "A",
            description = "Level of the adjusted p-values that flags a unit. Default: ${DEFAULT-VALUE}.")
    double alpha;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of the bootstrap. Default: ${DEFAULT-VALUE}.")
    long seed;

    /** Units scored per batch (so an interrupted scan loses little and the progress bar moves). */
    private static final int CHUNK = 16;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        String level = units.toLowerCase(Locale.ROOT);
        if (!List.of("regions", "networks", "hierarchical").contains(level)) {
            throw new CommandLine.ParameterException(spec.commandLine(),
                    "--units must be regions, networks or hierarchical, found '" + units + "'");
        }
        if (within != null && !level.equals("regions")) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--within goes with --units regions");
        }
        LesionScan.Settings settings;
        try {
            settings = new LesionScan.Settings(LesionScan.Test.parse(test), PairedTests.Correction.parse(correction),
                    alpha, resampling.bootstrap(), seed);
        } catch (IllegalArgumentException e) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--test, --correction or --alpha: "
                    + e.getMessage());
        }
        Cohort c = cohort.read();
        Atlas atlas = c.atlas();
        List<String> regionUnits = new ArrayList<>();
        if (within != null) {
            for (String net : within) {
                List<Integer> members = atlas.networks().get(net.trim());
                if (members == null) {
                    throw new CommandLine.ParameterException(spec.commandLine(), "--within: no network '" + net.trim()
                            + "' in the atlas; it has " + atlas.networks().keySet());
                }
                for (int r : members) {
                    regionUnits.add(atlas.region(r).name());
                }
            }
        } else {
            for (int r = 0; r < atlas.size(); r++) {
                regionUnits.add(atlas.region(r).name());
            }
        }
        List<String> networkUnits = new ArrayList<>();
        for (String net : atlas.networks().keySet()) {
            networkUnits.add("network:" + net);
        }
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings ss = scoring.settings("scan", command, seed, Double.POSITIVE_INFINITY, model.threads());
        try (Decoder decoder = model.open(); ScoringSession session = ScoringSession.open(decoder, c, ss)) {
            ScoringSession.Part part = session.search();
            Reports.header(pw, session);
            pw.printf(Locale.ROOT, "Scanned part: %s, n = %d samples from %d subjects; intact accuracy %.3f, chance %.3f. "
                            + "Lesion mode: %s. Critical means %s.%n", part.name(), part.inputs().size(), part.subjects(),
                    part.intact().score().accuracy(), part.intact().score().chance(), session.settings().mode().label(),
                    session.settings().criterion().describe());
            pw.printf(Locale.ROOT, "Flags: %s McNemar p-values adjusted by %s over the units of each table, at %.3g; "
                            + "drop intervals: subject-clustered bootstrap of the paired difference, %d resamples, seed %d.%n",
                    settings.test().label(), settings.correction() == PairedTests.Correction.HOLM ? "Holm"
                            : "Benjamini-Hochberg", alpha, resampling.bootstrap(), seed);
            if (level.equals("regions")) {
                List<LesionScan.Row> rows = scan(pw, session, part, regionUnits, settings, "regions");
                report(pw, rows, "regions" + (within == null ? "" : " within " + String.join(",", within)),
                        Ranking.Kind.REGIONS, within == null && regionUnits.size() == atlas.size(), part, "regions");
            } else {
                List<LesionScan.Row> nets = scan(pw, session, part, networkUnits, settings, "networks");
                report(pw, nets, "networks", Ranking.Kind.NETWORKS, true, part, "networks");
                if (level.equals("hierarchical")) {
                    List<String> inside = new ArrayList<>();
                    List<String> chosen = new ArrayList<>();
                    for (LesionScan.Row r : nets) {
                        if (r.significant()) {
                            String net = r.unit().substring("network:".length());
                            chosen.add(net);
                            for (int reg : atlas.networks().get(net)) {
                                inside.add(atlas.region(reg).name());
                            }
                        }
                    }
                    pw.println();
                    if (inside.isEmpty()) {
                        pw.println("No network's drop is significant: no regions scanned in the second step.");
                    } else {
                        pw.printf("Second step: the %d regions of %s (corrected over these regions).%n", inside.size(),
                                String.join(", ", chosen));
                        List<LesionScan.Row> rows = scan(pw, session, part, inside, settings, "regions");
                        report(pw, rows, "regions within " + String.join(",", chosen), Ranking.Kind.REGIONS, false,
                                part, "hierarchical-regions");
                    }
                }
            }
            LesionScorer sc = session.scorer();
            pw.printf("%nDecoder calls: %d set(s) decoded, %d reused from the store, %d already scored by this run "
                    + "(a rerun of the same command). Results: %s%n", sc.decodedCount(), sc.storedCount(),
                    sc.replayedCount(), scoring.out().resolve(ScoringSession.STORE_FILE));
        }
        return 0;
    }

    private List<LesionScan.Row> scan(PrintWriter pw, ScoringSession session, ScoringSession.Part part,
                                      List<String> unitNames, LesionScan.Settings settings, String what) {
        Atlas atlas = session.cohort().atlas();
        List<RegionSet> sets = new ArrayList<>();
        int[] sizes = new int[unitNames.size()];
        for (int i = 0; i < unitNames.size(); i++) {
            RegionSet atlasSet = LesionSpec.parse(unitNames.get(i), atlas);
            sizes[i] = atlasSet.size();
            sets.add(session.toInputs(atlasSet));
        }
        ProgressBar bar = new ProgressBar(spec.commandLine().getErr(), "scan " + what);
        List<LesionScorer.Scored> scored = new ArrayList<>();
        for (int from = 0; from < sets.size(); from += CHUNK) {
            scored.addAll(part.scorer().score(sets.subList(from, Math.min(sets.size(), from + CHUNK))));
            bar.update(scored.size(), sets.size(), part.scorer().decodedCount() + " decoded");
        }
        bar.done();
        return LesionScan.analyse(part, unitNames, sizes, scored, settings);
    }

    private void report(PrintWriter pw, List<LesionScan.Row> rows, String title, Ranking.Kind kind, boolean complete,
                        ScoringSession.Part part, String fileStem) {
        pw.println();
        pw.printf("Single lesions of %s, largest drop first:%n", title);
        List<String[]> table = new ArrayList<>();
        table.add(new String[] {"unit", "size", "accuracy", "drop", "95% interval", "lost/gained", "p exact",
            "p clustered", "p adjusted", "significant", "critical alone"});
        for (LesionScan.Row r : rows) {
            table.add(new String[] {r.unit(), Integer.toString(r.size()), f3(r.score().accuracy()), f3(r.drop()),
                Double.isNaN(r.dropLow()) ? "-" : f3(r.dropLow()) + ".." + f3(r.dropHigh()),
                r.lost() + "/" + r.gained(), g3(r.pExact()), g3(r.pClustered()), g3(r.pAdjusted()),
                r.significant() ? "yes" : "no", r.critical() ? "CRITICAL" : "no"});
        }
        Table.print(pw, table);
        Set<String> critical = new LinkedHashSet<>();
        for (LesionScan.Row r : rows) {
            if (r.critical()) {
                critical.add(r.unit());
            }
        }
        pw.println(critical.isEmpty() ? "No single lesion is critical." : "Critical alone: " + String.join(", ", critical));
        Path tsv = scoring.out().resolve("scan-" + fileStem + ".tsv");
        Path rankingFile = scoring.out().resolve("ranking-scan-" + fileStem + ".tsv");
        writeTsv(tsv, rows);
        RankingFile.write(rankingFile, LesionScan.ranking(rows, kind, complete, part.name()));
        pw.printf("Written: %s and %s (give it to search --ranking).%n", tsv, rankingFile);
    }

    private static void writeTsv(Path file, List<LesionScan.Row> rows) {
        TextFiles.write(file, w -> {
            w.write("unit\tsize\tn\taccuracy\tdrop\tdrop_low95\tdrop_high95\tp_true\tp_true_drop\tlost\tgained\t"
                    + "p_exact\tp_clustered\tp_adjusted\tsignificant\tcritical\n");
            for (LesionScan.Row r : rows) {
                w.write(String.join("\t", r.unit(), Integer.toString(r.size()), Integer.toString(r.score().n()),
                        TextFiles.num(r.score().accuracy()), TextFiles.num(r.drop()), TextFiles.num(r.dropLow()), TextFiles.num(r.dropHigh()),
                        TextFiles.num(r.score().meanTrueClassProbability()), TextFiles.num(r.probabilityDrop()),
                        Integer.toString(r.lost()), Integer.toString(r.gained()), TextFiles.num(r.pExact()),
                        TextFiles.num(r.pClustered()), TextFiles.num(r.pAdjusted()), Boolean.toString(r.significant()),
                        Boolean.toString(r.critical())) + "\n");
            }
        });
    }


    private static String f3(double v) {
        return String.format(Locale.ROOT, "%.3f", v);
    }

    private static String g3(double v) {
        return String.format(Locale.ROOT, "%.3g", v);
    }
}
