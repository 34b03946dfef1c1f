package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.stats.RankTests;
import org.cruxset.search.SearchContext;
import org.cruxset.search.rank.CriticalPrefix;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code cruxset audit}: is a ranking's critical set the smallest? For each ranking, its top-k score against the best
 * k-set any earlier run in the store scored and against random k-sets; its smallest critical prefix against the
 * smallest critical set in the store, each checked for irreducibility; agreement between rankings; a verdict.
 */
@Command(name = "audit", mixinStandardHelpOptions = true,
        description = {"Audit rankings (saliency, single lesions, Shapley values: ranking files) against what searches "
                + "found: for each k the ranking's top-k score vs the best k-set in the results store vs random k-sets "
                + "(permutation p-value); the ranking's smallest critical prefix vs the smallest critical set found, "
                + "each checked for irreducibility; Spearman and Kendall tau-b between rankings with bootstrap "
                + "intervals, and the Jaccard overlap of their critical prefixes; a verdict in words.",
            "",
            "Give the same --out as the searches (and compare) whose results it audits; new sets it scores are stored."})
public final class AuditCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Option(names = "--ranking", required = true, paramLabel = "FILE", description = "A ranking of regions (TSV, as "
            + "scan, saliency, shapley and search write them); repeat for several.")
    List<Path> rankings;

    @Option(names = "--random", defaultValue = "100", paramLabel = "N", description = "Random k-sets per k. Default: "
            + "${DEFAULT-VALUE}.")
    int random;

    @Option(names = "--max-k", defaultValue = "12", paramLabel = "K", description = "Largest k of the top-k table. "
            + "Default: ${DEFAULT-VALUE}.")
    int maxK;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of the random sets and the "
            + "bootstrap. Default: ${DEFAULT-VALUE}.")
    long seed;

    /** The rows of audit-topk.tsv, audit-prefix.tsv and audit-agreement.tsv, filled as the audit prints. */
    private final List<String> topRows = new ArrayList<>();
    private final List<String> prefixRows = new ArrayList<>();
    private final List<String> agreementRows = new ArrayList<>();

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        if (random < 1 || maxK < 1) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--random and --max-k must be at least 1");
        }
        Cohort c = cohort.read();
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        try (Decoder decoder = model.open();
             ScoringSession session = ScoringSession.open(decoder, c, scoring.settings("audit", command, seed,
                     Double.POSITIVE_INFINITY, model.threads()))) {
            Reports.header(pw, session);
            Atlas atlas = session.cohort().atlas();
            SearchContext ctx = new SearchContext(session, seed, null, 0, Double.POSITIVE_INFINITY, null, null);
            int limit = ctx.maxCorrectWhenCritical();
            int n = ctx.intact().n();
            // The best set of each size, and the smallest critical set, among the sets earlier runs scored.
            Map<Integer, SearchContext.EarlierScore> bestBySize = new HashMap<>();
            SearchContext.EarlierScore smallest = null;
            List<SearchContext.EarlierScore> earlier = ctx.earlierScores();
            for (SearchContext.EarlierScore e : earlier) {
                int k = e.set().size();
                if (k == 0) {
                    continue;
                }
                SearchContext.EarlierScore b = bestBySize.get(k);
                if (b == null || e.correct() < b.correct()) {
                    bestBySize.put(k, e);
                }
                if (e.correct() <= limit && (smallest == null || k < smallest.set().size()
                        || k == smallest.set().size() && e.correct() < smallest.correct())) {
                    smallest = e;
                }
            }
            pw.printf(Locale.ROOT, "Critical means %s (at most %d of %d search-part samples correct). The store holds "
                            + "%d sets scored by earlier runs in this scoring context.%n",
                    session.settings().criterion().describe(), limit, n, earlier.size());
            String searched = smallest == null ? "none" : smallest.set().size() + " regions ("
                    + SearchCommand.names(session, smallest.set()) + ")";
            Boolean searchedIrreducible = smallest == null ? null : irreducible(ctx, smallest.set());
            pw.printf("Smallest critical set in the store: %s%s.%n", searched, searchedIrreducible == null ? ""
                    : searchedIrreducible ? ", irreducible (every one-region-smaller subset scored: none critical)"
                    : ", not irreducible (a one-region-smaller subset is critical)");
            String minimumProof = minimumProof(pw, ctx, smallest);
            List<Ranking> loaded = new ArrayList<>();
            List<RegionSet> prefixSets = new ArrayList<>();
            int smallestPrefix = Integer.MAX_VALUE;
            for (Path file : rankings) {
                Ranking r = RankingFile.read(file, atlas);
                loaded.add(r);
                List<RegionSet> prefixes = new ArrayList<>();
                for (RegionSet p : r.prefixes(atlas)) {
                    prefixes.add(session.toInputs(p));
                }
                pw.printf("%nRanking %s (%s, %d units, values: %s):%n", file, String.join(",",
                        new java.util.LinkedHashSet<>(r.sources())), r.size(), r.meaning());
                String rankingName = file.getFileName().toString();
                topK(pw, ctx, session, prefixes, bestBySize, n, rankingName);
                CriticalPrefix.Result p = CriticalPrefix.find(ctx, prefixes);
                String smallestCells = (smallest == null ? "NA\tNA\tNA" : smallest.set().size() + "\t"
                        + SearchCommand.names(session, smallest.set()) + "\t" + searchedIrreducible) + "\t"
                        + (minimumProof == null ? "none" : minimumProof);
                if (p.length() < 0) {
                    pw.println("  No prefix of this ranking is critical.");
                    prefixSets.add(null);
                    prefixRows.add(rankingName + "\tNA\tNA\tNA\tNA\t" + smallestCells
                            + "\tno prefix of this ranking is critical");
                    continue;
                }
                RegionSet set = prefixes.get(p.length() - 1);
                prefixSets.add(set);
                smallestPrefix = Math.min(smallestPrefix, set.size());
                boolean irr = irreducible(ctx, set);
                pw.printf("  Smallest critical prefix: %d units, %d regions (%s), %s%s.%n", p.length(), set.size(),
                        SearchCommand.names(session, set), irr ? "irreducible" : "not irreducible (a region can be "
                                + "restored and the set stays critical)", p.monotoneAsSeen() ? ""
                                : "; accuracy along the ranking was not monotone where scored, so a shorter critical "
                                + "prefix cannot be ruled out");
                String verdict = verdict(set.size(), smallest, searchedIrreducible, irr, minimumProof != null);
                pw.println("  " + verdict);
                prefixRows.add(rankingName + "\t" + p.length() + "\t" + set.size() + "\t"
                        + SearchCommand.names(session, set) + "\t" + irr + "\t" + smallestCells + "\t" + verdict);
            }
            if (loaded.size() > 1) {
                agreement(pw, loaded, prefixSets, rankings);
            }
            writeTables();
            pw.printf("%nWritten: %s, %s and %s. Results: %s%n", scoring.out().resolve(TOPK_TSV),
                    scoring.out().resolve(PREFIX_TSV), scoring.out().resolve(AGREEMENT_TSV),
                    scoring.out().resolve(ScoringSession.STORE_FILE));
        }
        return 0;
    }

    /** The audit's tables in the output folder (the report reads them). */
    public static final String TOPK_TSV = "audit-topk.tsv";
    public static final String PREFIX_TSV = "audit-prefix.tsv";
    public static final String AGREEMENT_TSV = "audit-agreement.tsv";

    private void writeTables() {
        write(TOPK_TSV, "ranking\tk\tranking_accuracy\tbest_stored_accuracy\trandom_low05\trandom_median\t"
                + "random_high95\trandom_at_or_below\trandom_sets\tp_permutation", topRows);
        write(PREFIX_TSV, "ranking\tprefix_units\tprefix_regions\tprefix_names\tprefix_irreducible\t"
                + "smallest_size\tsmallest_names\tsmallest_irreducible\tsmallest_minimum_proof\tverdict", prefixRows);
        write(AGREEMENT_TSV, "first\tsecond\tcommon_units\tspearman\tspearman_low95\tspearman_high95\t"
                + "kendall_tau_b\tkendall_low95\tkendall_high95\tjaccard_prefixes", agreementRows);
    }

    private void write(String name, String header, List<String> rows) {
        TextFiles.write(scoring.out().resolve(name), w -> {
            w.write(header + "\n");
            for (String r : rows) {
                w.write(r + "\n");
            }
        });
    }

    /** Top-k of the ranking vs the best stored k-set vs random k-sets, for k = 1..maxK. */
    private void topK(PrintWriter pw, SearchContext ctx, ScoringSession session, List<RegionSet> prefixes,
                      Map<Integer, SearchContext.EarlierScore> bestBySize, int n, String rankingName) {
        SplittableRandom rng = new SplittableRandom(seed);
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"k (regions)", "ranking top-k accuracy", "best k-set scored by earlier runs",
            "random k-sets median accuracy", "random at or below the ranking", "permutation p"});
        int regions = ctx.regions();
        Set<Integer> sizes = new java.util.TreeSet<>();
        for (RegionSet p : prefixes) {
            if (p.size() <= maxK) {
                sizes.add(p.size());
            }
        }
        List<RegionSet> byPrefix = new ArrayList<>();
        for (int k : sizes) {
            for (RegionSet p : prefixes) {
                if (p.size() == k) {
                    byPrefix.add(p);
                    break;
                }
            }
        }
        List<LesionScorer.Scored> tops = ctx.score(byPrefix);
        for (LesionScorer.Scored top : tops) {
            int k = top.set().size();
            List<RegionSet> rand = new ArrayList<>();
            for (int i = 0; i < random; i++) {
                RegionSet s = RegionSet.empty(regions);
                while (s.size() < k) {
                    s = s.with(rng.nextInt(regions));
                }
                rand.add(s);
            }
            double a = top.score().accuracy();
            double[] accs = ctx.score(rand).stream().mapToDouble(x -> x.score().accuracy()).toArray();
            int below = 0;
            for (double v : accs) {
                below += v <= a + 1e-12 ? 1 : 0;
            }
            java.util.Arrays.sort(accs);
            SearchContext.EarlierScore best = bestBySize.get(k);
            rows.add(new String[] {Integer.toString(k), String.format(Locale.ROOT, "%.3f", a),
                best == null ? "-" : String.format(Locale.ROOT, "%.3f", (double) best.correct() / n),
                String.format(Locale.ROOT, "%.3f", accs[accs.length / 2]), below + "/" + random,
                String.format(Locale.ROOT, "%.3f", (1.0 + below) / (1.0 + random))});
            topRows.add(String.join("\t", rankingName, Integer.toString(k), TextFiles.num(a),
                    best == null ? "NA" : TextFiles.num((double) best.correct() / n),
                    TextFiles.num(org.cruxset.scoring.stats.ClusteredStats.quantile(accs, 0.05)),
                    TextFiles.num(org.cruxset.scoring.stats.ClusteredStats.quantile(accs, 0.5)),
                    TextFiles.num(org.cruxset.scoring.stats.ClusteredStats.quantile(accs, 0.95)),
                    Integer.toString(below), Integer.toString(random),
                    TextFiles.num((1.0 + below) / (1.0 + random))));
        }
        Table.print(pw, rows);
        pw.println("  (permutation p: the share of random k-sets, plus one, that collapse the decoder at least as far as "
                + "the ranking's top k; small p: the ranking beats chance at k)");
    }

    /** Whether a critical set stays critical with no region restored (every one-region-smaller subset scored). */
    private static boolean irreducible(SearchContext ctx, RegionSet set) {
        List<RegionSet> subsets = new ArrayList<>();
        for (int p : set.positions()) {
            subsets.add(set.without(p));
        }
        for (LesionScorer.Scored s : ctx.score(subsets)) {
            if (s.set().size() > 0 && ctx.critical(s.score())) {
                return false;
            }
        }
        return true;
    }

    /**
     * Prints the exhaustive certificates earlier runs left under this criterion, and returns the one that proves the
     * smallest stored critical set a minimum (its pool is every region and it rules out every smaller size), in words,
     * or null.
     */
    private static String minimumProof(PrintWriter pw, SearchContext ctx, SearchContext.EarlierScore smallest) {
        String proof = null;
        for (SearchContext.ExhaustiveProof e : ctx.earlierExhaustiveCertificates()) {
            boolean whole = e.pool().size() == ctx.regions();
            String words = String.format(Locale.ROOT, "exhaustive certificate of run %d: no critical set of at most %d "
                    + "regions among %s", e.runId(), e.maxSize(), whole ? "all " + ctx.regions() + " regions"
                    : e.pool().size() + " of the " + ctx.regions() + " regions (its pool)");
            pw.println("  " + Character.toUpperCase(words.charAt(0)) + words.substring(1) + ".");
            if (whole && smallest != null && e.maxSize() >= smallest.set().size() - 1 && proof == null) {
                proof = words;
            }
        }
        if (proof != null) {
            pw.printf("  So no critical set has fewer than %d regions: the smallest critical set in the store is a "
                    + "minimum, not only the smallest found.%n", smallest.set().size());
        }
        return proof;
    }

    static String verdict(int prefixSize, SearchContext.EarlierScore smallest, Boolean searchedIrreducible,
                          boolean prefixIrreducible, boolean minimumProved) {
        if (smallest == null) {
            return "Verdict: no search in the store found a critical set, so nothing shows this prefix is not minimal; "
                    + "that proves nothing either (run search or compare with the same --out).";
        }
        int s = smallest.set().size();
        if (s < prefixSize) {
            return "Verdict: NOT MINIMAL. A search found a critical set of " + s + " regions, smaller than this "
                    + "ranking's critical prefix of " + prefixSize + ": the ranking's set is not the smallest"
                    + (minimumProved ? "; an exhaustive certificate proves no critical set has fewer than " + s
                    + " regions." : ".");
        }
        if (s == prefixSize) {
            if (minimumProved) {
                return "Verdict: MINIMUM. As small as the smallest critical set any search in the store found (" + s
                        + " regions), and an exhaustive certificate over every region proves no critical set is "
                        + "smaller.";
            }
            return "Verdict: as small as the smallest critical set any search in the store found (" + s + " regions)"
                    + (prefixIrreducible ? ", and irreducible" : "") + ". Not finding a smaller set proves nothing: "
                    + "only an exhaustive certificate over a pool that holds every candidate would.";
        }
        return "Verdict: smaller than any critical set a search in the store found (" + prefixSize + " against " + s
                + " regions): the searches were not long enough, or started elsewhere"
                + (Boolean.TRUE.equals(searchedIrreducible) ? " (theirs is irreducible too: both are inclusion-minimal)"
                : "") + ".";
    }

    /** Spearman and Kendall tau-b between every pair of rankings over their common units, and prefix overlaps. */
    private void agreement(PrintWriter pw, List<Ranking> loaded, List<RegionSet> prefixSets, List<Path> files) {
        pw.printf("%nAgreement between rankings (importance = the value in the ranking's own direction; ties kept; "
                + "95%% percentile bootstrap over units, 2,000 resamples, seed %d):%n", seed);
        List<String[]> rows = new ArrayList<>();
        List<String> outside = new ArrayList<>();
        rows.add(new String[] {"rankings", "common units", "Spearman (95% CI)", "Kendall tau-b (95% CI)",
            "Jaccard of critical prefixes"});
        for (int i = 0; i < loaded.size(); i++) {
            for (int j = i + 1; j < loaded.size(); j++) {
                Map<String, Double> a = importance(loaded.get(i));
                Map<String, Double> b = importance(loaded.get(j));
                List<String> common = new ArrayList<>(a.keySet());
                common.retainAll(b.keySet());
                String rho = "-";
                String tau = "-";
                String cells = "NA\tNA\tNA\tNA\tNA\tNA";
                if (common.size() >= 3) {
                    double[] x = common.stream().mapToDouble(a::get).toArray();
                    double[] y = common.stream().mapToDouble(b::get).toArray();
                    double[] rc = RankTests.bootstrapInterval(x, y, RankTests::spearman, 2000, seed, 0.95);
                    double[] tc = RankTests.bootstrapInterval(x, y, RankTests::kendallTauB, 2000, seed, 0.95);
                    double r0 = RankTests.spearman(x, y);
                    double t0 = RankTests.kendallTauB(x, y);
                    if (r0 < rc[0] || r0 > rc[1] || t0 < tc[0] || t0 > tc[1]) {
                        outside.add(files.get(i).getFileName() + " vs " + files.get(j).getFileName());
                    }
                    rho = String.format(Locale.ROOT, "%.3f (%.3f to %.3f)", RankTests.spearman(x, y), rc[0], rc[1]);
                    tau = String.format(Locale.ROOT, "%.3f (%.3f to %.3f)", RankTests.kendallTauB(x, y), tc[0], tc[1]);
                    cells = String.join("\t", TextFiles.num(RankTests.spearman(x, y)), TextFiles.num(rc[0]),
                            TextFiles.num(rc[1]), TextFiles.num(RankTests.kendallTauB(x, y)), TextFiles.num(tc[0]),
                            TextFiles.num(tc[1]));
                }
                RegionSet pa = prefixSets.get(i);
                RegionSet pb = prefixSets.get(j);
                String jac = pa == null || pb == null ? "-" : String.format(Locale.ROOT, "%.3f",
                        RankTests.jaccard(toSet(pa), toSet(pb)));
                rows.add(new String[] {files.get(i).getFileName() + " vs " + files.get(j).getFileName(),
                    Integer.toString(common.size()), rho, tau, jac});
                agreementRows.add(String.join("\t", files.get(i).getFileName().toString(),
                        files.get(j).getFileName().toString(), Integer.toString(common.size()), cells,
                        "-".equals(jac) ? "NA" : jac));
            }
        }
        Table.print(pw, rows);
        if (!outside.isEmpty()) {
            pw.printf("Note: an estimate lies outside its percentile interval (%s). Resampling units with replacement "
                    + "repeats them, which adds ties and biases rank correlations when the units are few; read those "
                    + "intervals with caution.%n", String.join("; ", outside));
        }
    }

    /** Unit → importance: the value, negated when the ranking's values grow along its order (lower = more important). */
    static Map<String, Double> importance(Ranking r) {
        Map<String, Double> out = new HashMap<>();
        double first = r.values().get(0);
        double last = r.values().get(r.size() - 1);
        double sign = last > first ? -1 : 1;
        for (int i = 0; i < r.size(); i++) {
            out.put(r.units().get(i), sign * r.values().get(i));
        }
        return out;
    }

    private static Set<Integer> toSet(RegionSet s) {
        Set<Integer> out = new HashSet<>();
        for (int p : s.positions()) {
            out.add(p);
        }
        return out;
    }
}
