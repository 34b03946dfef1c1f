package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.StopSearch;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import org.cruxset.search.shapley.Estimate;
import org.cruxset.search.shapley.ExactShapley;
import org.cruxset.search.shapley.LesionGame;
import org.cruxset.search.shapley.PermutationShapley;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset shapley}: Shapley values of the lesion game, with intervals, for regions or networks. */
@Command(name = "shapley", mixinStandardHelpOptions = true,
        description = {"Shapley values of the decoder's lesion game: v(S) is the score with the players in S intact and "
                + "every other player lesioned, so each player's value is its fair share of v(all) - v(none), "
                + "averaged over every context of other lesions (Keinan et al. 2004, Neural Computation 16).",
            "",
            "Players are regions or networks. Exact enumeration when every coalition fits the budget, otherwise "
                + "permutation sampling (plain or antithetic) until every player's 95%% interval is narrower than "
                + "--half-width or the budget is spent. Scores the search part; every coalition is kept in "
                + "DIR/results.sqlite and reused."})
public final class ShapleyCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Option(names = "--players", defaultValue = "networks", paramLabel = "P",
            description = "networks, regions, or nested (regions within their networks: Owen values, Owen 1977, where "
                    + "networks come one after another and a network's regions keep together). Default: ${DEFAULT-VALUE}.")
    String players;

    @Option(names = "--estimator", defaultValue = "auto", paramLabel = "E",
            description = "auto (exact when 2^players fits the budget, else antithetic), exact, permutations, "
                    + "antithetic (each permutation paired with its reverse), stratified (by position; up to 20 "
                    + "players; spends the budget evenly over the (player, position) strata) or regression (weighted "
                    + "least squares on coalitions paired with their complements; spends the budget). "
                    + "Default: ${DEFAULT-VALUE}.")
    String estimator;

    @Option(names = "--worth", defaultValue = "probability", paramLabel = "W",
            description = "The score v(S) is measured in: probability (mean true-class probability; smoother, fewer "
                    + "coalitions for the same interval) or accuracy. Default: ${DEFAULT-VALUE}.")
    String worth;

    @Option(names = "--half-width", defaultValue = "0.01", paramLabel = "W",
            description = "Sampling stops once every player's 95%% interval is at most this wide on each side. "
                    + "Default: ${DEFAULT-VALUE}.")
    double halfWidth;

    @Option(names = "--budget", defaultValue = "20000", paramLabel = "N",
            description = "At most N scored sets (coalitions). Default: ${DEFAULT-VALUE}.")
    long budget;

    @Option(names = "--interactions", defaultValue = "5", paramLabel = "M",
            description = "When sampling: interaction indices of every pair among the M players with the largest values "
                    + "(0: none), each from --interaction-draws draws of 4 coalitions, kept back from the budget. "
                    + "Default: ${DEFAULT-VALUE}.")
    int interactionPlayers;

    @Option(names = "--interaction-draws", defaultValue = "50", paramLabel = "D",
            description = "Draws per sampled pair, fewer when all pairs would need more than a quarter of the budget. "
                    + "Default: ${DEFAULT-VALUE}.")
    int interactionDraws;

    @Option(names = "--screen", paramLabel = "TOL",
            description = "With permutations or antithetic: first lesion each player alone and leave each out (2 x "
                    + "players + 2 scored sets); players whose two marginals agree within TOL take the mean as their "
                    + "value (a labelled shortcut: two contexts cannot prove additivity) and sampling is spent on the "
                    + "rest; --screen-check of them are checked by sampling the full game.")
    Double screen;

    @Option(names = "--screen-check", defaultValue = "3", paramLabel = "K",
            description = "Screened players checked by sampling the full game (seeded choice). Default: ${DEFAULT-VALUE}.")
    int screenCheck;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of the permutations. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        String kind = players.toLowerCase(Locale.ROOT);
        if (!List.of("regions", "networks", "nested").contains(kind)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--players must be networks, regions or nested, "
                    + "found '" + players + "'");
        }
        String est = estimator.toLowerCase(Locale.ROOT);
        if (!List.of("auto", "exact", "permutations", "antithetic", "stratified", "regression").contains(est)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--estimator must be auto, exact, permutations, "
                    + "antithetic, stratified or regression, found '" + estimator + "'");
        }
        LesionGame.Worth w = switch (worth.toLowerCase(Locale.ROOT)) {
            case "probability" -> LesionGame.Worth.PROBABILITY;
            case "accuracy" -> LesionGame.Worth.ACCURACY;
            default -> throw new CommandLine.ParameterException(spec.commandLine(),
                    "--worth must be probability or accuracy, found '" + worth + "'");
        };
        if (interactionPlayers < 0 || interactionDraws < 2) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--interactions must be 0 or more and "
                    + "--interaction-draws at least 2");
        }
        if (!(halfWidth > 0) || budget < 1) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--half-width must be positive and --budget at "
                    + "least 1");
        }
        Cohort c = cohort.read();
        Atlas atlas = c.atlas();
        List<String> names = new ArrayList<>();
        if (kind.equals("networks")) {
            for (String net : atlas.networks().keySet()) {
                names.add("network:" + net);
            }
        } else {
            for (int r = 0; r < atlas.size(); r++) {
                names.add(atlas.region(r).name());
            }
        }
        int n = names.size();
        int[] unionOf = null;
        if (kind.equals("nested")) {
            List<String> nets = new ArrayList<>(atlas.networks().keySet());
            unionOf = new int[n];
            for (int r = 0; r < n; r++) {
                unionOf[r] = nets.indexOf(atlas.region(r).network());
            }
        }
        if (est.equals("exact") && (n > ExactShapley.MAX_PLAYERS || ExactShapley.cost(n) > budget)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--estimator exact needs 2^" + n + " = "
                    + (n > 62 ? "more than 10^18" : Long.toString(1L << n)) + " coalitions; --budget is " + budget
                    + (n > ExactShapley.MAX_PLAYERS ? " (and enumeration takes at most " + ExactShapley.MAX_PLAYERS
                    + " players)" : "") + ": use permutations or antithetic");
        }
        if (est.equals("stratified") && (kind.equals("nested")
                || n > org.cruxset.search.shapley.StratifiedShapley.MAX_PLAYERS
                || org.cruxset.search.shapley.StratifiedShapley.cost(n, 2) > budget)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--estimator stratified takes plain players (not "
                    + "nested), at most " + org.cruxset.search.shapley.StratifiedShapley.MAX_PLAYERS + " of them ("
                    + n + " here), and a budget of at least 2 x players^2 x 2 = "
                    + org.cruxset.search.shapley.StratifiedShapley.cost(n, 2) + " scored sets");
        }
        if (est.equals("regression") && (kind.equals("nested") || (budget - 2) / 2 < n)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--estimator regression takes plain players "
                    + "(not nested) and a budget of at least 2 x players + 2 = " + (2L * n + 2) + " scored sets");
        }
        if (screen != null && (!(screen >= 0) || kind.equals("nested") || screenCheck < 0)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--screen takes a tolerance of 0 or more, plain "
                    + "players (not nested) and --screen-check of 0 or more");
        }
        boolean exact = est.equals("exact")
                || est.equals("auto") && n <= ExactShapley.MAX_PLAYERS && ExactShapley.cost(n) <= budget;
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings ss = scoring.settings("shapley", command, seed, budget + 1, model.threads());
        try (Decoder decoder = model.open(); ScoringSession session = ScoringSession.open(decoder, c, ss)) {
            Reports.header(pw, session);
            List<RegionSet> units = new ArrayList<>();
            for (String u : names) {
                units.add(session.toInputs(LesionSpec.parse(u, atlas)));
            }
            ProgressBar bar = new ProgressBar(spec.commandLine().getErr(), "shapley");
            double[] widest = {Double.NaN};
            SearchContext ctx = new SearchContext(session, seed, null, 0, Double.POSITIVE_INFINITY, null,
                    x -> bar.update((int) Math.min(budget, x.charged() - 1), (int) budget,
                            Double.isNaN(widest[0]) ? "" : String.format(Locale.ROOT, "widest half-width %.4f",
                                    widest[0])));
            LesionGame game = new LesionGame(ctx, units, w);
            pw.printf(Locale.ROOT, "Game: %d %s as players; v(S) = %s on the search part (%d samples) with the players "
                            + "in S intact and every other player lesioned (mode %s). A player's value is its share of "
                            + "v(all) - v(none); a pair's interaction is positive when the two are worth more together "
                            + "than apart (synergy) and negative when either can stand in for the other (redundancy).%n",
                    n, kind, w == LesionGame.Worth.ACCURACY ? "accuracy" : "mean true-class probability",
                    session.search().inputs().size(), session.settings().mode().label());
            double vAll = game.worth(RegionSet.all(n));
            double vNone = game.worth(RegionSet.empty(n));
            Estimate e;
            double[][] interactions = null;
            List<org.cruxset.search.shapley.InteractionSampler.Pair> sampled = List.of();
            String stop;
            if (exact && unionOf != null) {
                pw.printf("Estimator: exact Owen values from all %d coalitions.%n", 1L << n);
                e = org.cruxset.search.shapley.OwenValues.exact(game, unionOf);
                stop = "exact";
            } else if (est.equals("regression")) {
                int pairs = (int) Math.min(1_000_000, (budget - 2) / 2);
                pw.printf("Estimator: weighted least squares on %d coalitions drawn from the Shapley kernel, each with "
                        + "its complement (Lundberg & Lee 2017; Covert & Lee 2021); standard errors from %d bootstrap "
                        + "resamples of the pairs.%n", pairs, org.cruxset.search.shapley.RegressionShapley.BOOTSTRAP);
                e = org.cruxset.search.shapley.RegressionShapley.values(game, pairs, seed);
                stop = "budget spent";
            } else if (est.equals("stratified")) {
                int per = (int) Math.min(100_000, budget / (2L * n * n));
                pw.printf("Estimator: sampling stratified by position (Maleki et al. 2013), %d coalitions of each size "
                        + "for each player, 2 scored sets each.%n", per);
                e = org.cruxset.search.shapley.StratifiedShapley.values(game, per, seed);
                stop = "every stratum sampled";
            } else if (exact) {
                pw.printf("Estimator: exact enumeration of all %d coalitions.%n", 1L << n);
                ExactShapley.Full f = ExactShapley.full(game);
                e = f.values();
                interactions = f.interactions();
                stop = "exact";
            } else {
                boolean anti = !est.equals("permutations");
                org.cruxset.search.shapley.Screen.Result screened = null;
                int[] restPlayers = null;
                org.cruxset.search.shapley.Game played = game;
                if (screen != null) {
                    screened = org.cruxset.search.shapley.Screen.run(game, screen);
                    List<Integer> rest = new ArrayList<>();
                    List<String> took = new ArrayList<>();
                    for (int i = 0; i < n; i++) {
                        if (screened.screened()[i]) {
                            took.add(names.get(i));
                        } else {
                            rest.add(i);
                        }
                    }
                    restPlayers = rest.stream().mapToInt(Integer::intValue).toArray();
                    pw.printf(Locale.ROOT, "Screen (%d scored sets): %d of %d players have add-one-in and leave-one-out "
                                    + "marginals within %.4g and take their mean as value (a shortcut: two contexts "
                                    + "cannot prove additivity): %s%n", org.cruxset.search.shapley.Screen.cost(n),
                            took.size(), n, screen, took.isEmpty() ? "none" : String.join(", ", took));
                    played = org.cruxset.search.shapley.Screen.rest(game, screened.screened(), restPlayers);
                }
                PermutationShapley.Sampler sampler = unionOf != null
                        ? org.cruxset.search.shapley.OwenValues.sampler(game, unionOf, anti, seed)
                        : new PermutationShapley.Sampler(played, anti, seed);
                pw.printf(Locale.ROOT, "Estimator: %s %s sampling (Castro, Gomez & Tejada 2009), %d scored "
                        + "sets per draw; stops at a 95%% half-width of %.4g for every player or at the budget of %d.%n",
                        anti ? "antithetic" : "plain", unionOf != null ? "order (networks kept together)"
                                : "permutation", sampler.costPerDraw(), halfWidth, budget);
                stop = "budget";
                int m = Math.min(interactionPlayers, n);
                long pairs = (long) m * (m - 1) / 2;
                int draws = pairs == 0 ? 0 : (int) Math.min(interactionDraws, budget / 4 / (4 * pairs));
                if (pairs > 0 && draws < 2) {
                    pw.printf("No sampled interactions: %d pairs need at least %d scored sets, more than a quarter of "
                            + "--budget %d.%n", pairs, 8 * pairs, budget);
                    m = 0;
                } else if (pairs > 0 && draws < interactionDraws) {
                    pw.printf("Interactions: %d draws per pair instead of %d, so that the %d pairs take at most a "
                            + "quarter of the budget.%n", draws, interactionDraws, pairs);
                }
                long pairCost = m < 2 ? 0 : pairs * org.cruxset.search.shapley.InteractionSampler.cost(draws);
                long checkCost = screened != null && screened.count() > 0 && screenCheck > 0
                        ? SCREEN_CHECK_DRAWS * 2L * (n + 1) : 0;
                ctx.reserve(pairCost + checkCost);
                try {
                    while (true) {
                        sampler.draw(sampler.draws() < 2 ? 2 : 1);
                        Estimate now = sampler.estimate();
                        double max = 0;
                        for (int i = 0; i < now.values().length; i++) {
                            max = Math.max(max, now.halfWidth(i));
                        }
                        widest[0] = max;
                        if (max <= halfWidth) {
                            stop = "target half-width reached";
                            break;
                        }
                    }
                } catch (StopSearch s) {
                    stop = "budget spent";
                }
                e = sampler.estimate();
                if (sampler.draws() < 2) {
                    bar.done();
                    throw new CommandLine.ParameterException(spec.commandLine(), "--budget " + budget + " does not "
                            + "cover two draws of " + sampler.costPerDraw() + " scored sets each"
                            + (pairCost + checkCost > 0 ? " beside the " + (pairCost + checkCost) + " kept for "
                            + "interactions and the screen check" : ""));
                }
                ctx.reserve(0);
                if (screened != null) {
                    double[] val = new double[n];
                    double[] se = new double[n];
                    for (int i = 0; i < n; i++) {
                        val[i] = screened.value(i);
                    }
                    for (int k = 0; k < restPlayers.length; k++) {
                        val[restPlayers[k]] = e.value(k);
                        se[restPlayers[k]] = e.standardErrors()[k];
                    }
                    e = new Estimate(e.estimator() + " after a screen", val, se, e.evaluations()
                            + org.cruxset.search.shapley.Screen.cost(n));
                    checkScreen(pw, game, screened, names, anti);
                }
                if (m >= 2) {
                    Estimate fixed = e;
                    List<Integer> top = new ArrayList<>();
                    for (int i = 0; i < n; i++) {
                        top.add(i);
                    }
                    top.sort((a, b) -> Double.compare(Math.abs(fixed.value(b)), Math.abs(fixed.value(a))));
                    List<int[]> chosen = new ArrayList<>();
                    for (int a = 0; a < m; a++) {
                        for (int b = a + 1; b < m; b++) {
                            chosen.add(new int[] {top.get(a), top.get(b)});
                        }
                    }
                    try {
                        sampled = org.cruxset.search.shapley.InteractionSampler.estimate(game, chosen, draws, seed + 1);
                    } catch (StopSearch s) {
                        pw.println("The budget ran out before the interactions: none are reported.");
                    }
                }
            }
            bar.done();
            print(pw, names, e, interactions, vAll, vNone, stop, kind, ctx);
            printSampled(pw, names, sampled, kind);
        }
        return 0;
    }

    private void print(PrintWriter pw, List<String> names, Estimate e, double[][] interactions, double vAll,
                       double vNone, String stop, String kind, SearchContext ctx) {
        int n = names.size();
        List<Integer> order = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            order.add(i);
        }
        order.sort((a, b) -> e.value(b) != e.value(a) ? Double.compare(e.value(b), e.value(a)) : Integer.compare(a, b));
        pw.println();
        pw.printf(Locale.ROOT, "Stopped: %s. Scored sets charged: %.0f (coalitions asked for: %d).%n", stop,
                ctx.charged() - 1, e.evaluations());
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"rank", kind.equals("networks") ? "network" : "region", kind.equals("nested")
            ? "Owen value" : "value", "std. error",
            "95% interval"});
        for (int r = 0; r < n; r++) {
            int i = order.get(r);
            rows.add(new String[] {Integer.toString(r + 1), names.get(i), f4(e.value(i)), f4(e.standardErrors()[i]),
                f4(e.value(i) - e.halfWidth(i)) + ".." + f4(e.value(i) + e.halfWidth(i))});
        }
        Table.print(pw, rows);
        pw.printf(Locale.ROOT, "Sum of values %.4f; v(all) - v(none) = %.4f - %.4f = %.4f.%n", e.sum(), vAll, vNone,
                vAll - vNone);
        pw.println("Equal values do not imply equal minimal lesion sets: members of a redundant group (any one "
                + "suffices) and of a synergistic set (all are needed) can get equal values; `cruxset search` tells them "
                + "apart.");
        if (interactions != null && n >= 2) {
            pw.println();
            pw.println("Pairwise interaction indices (Grabisch & Roubens 1999), largest magnitude first (positive: synergy, "
                    + "negative: redundancy):");
            List<int[]> pairs = new ArrayList<>();
            for (int i = 0; i < n; i++) {
                for (int j = i + 1; j < n; j++) {
                    pairs.add(new int[] {i, j});
                }
            }
            double[][] in = interactions;
            pairs.sort((a, b) -> Double.compare(Math.abs(in[b[0]][b[1]]), Math.abs(in[a[0]][a[1]])));
            List<String[]> pr = new ArrayList<>();
            pr.add(new String[] {"pair", "interaction"});
            for (int[] p : pairs.subList(0, Math.min(10, pairs.size()))) {
                pr.add(new String[] {names.get(p[0]) + " + " + names.get(p[1]), f4(in[p[0]][p[1]])});
            }
            Table.print(pw, pr);
        }
        Path out = scoring.out();
        String stem = kind;
        Path tsv = out.resolve("shapley-" + stem + ".tsv");
        TextFiles.write(tsv, w -> {
            w.write("unit\tvalue\tstd_error\tlow95\thigh95\n");
            for (int i : order) {
                w.write(names.get(i) + "\t" + TextFiles.num(e.value(i)) + "\t" + TextFiles.num(e.standardErrors()[i]) + "\t"
                        + TextFiles.num(e.value(i) - e.halfWidth(i)) + "\t" + TextFiles.num(e.value(i) + e.halfWidth(i)) + "\n");
            }
        });
        List<String> units = new ArrayList<>();
        List<Double> values = new ArrayList<>();
        for (int i : order) {
            units.add(names.get(i));
            values.add(e.value(i));
        }
        Path ranking = out.resolve("ranking-shapley-" + stem + ".tsv");
        RankingFile.write(ranking, new Ranking(kind.equals("networks") ? Ranking.Kind.NETWORKS : Ranking.Kind.REGIONS,
                units, values, Collections.nCopies(n, "shapley"), true, "search",
                "Shapley value of the lesion game (" + e.estimator() + ")"));
        pw.printf("%nWritten: %s and %s", tsv, ranking);
        if (interactions != null) {
            Path matrix = out.resolve("shapley-" + stem + "-interactions.tsv");
            TextFiles.write(matrix, w -> {
                StringBuilder head = new StringBuilder("unit");
                for (String name : names) {
                    head.append('\t').append(name);
                }
                w.write(head + "\n");
                for (int i = 0; i < n; i++) {
                    StringBuilder line = new StringBuilder(names.get(i));
                    for (int j = 0; j < n; j++) {
                        line.append('\t').append(i == j ? "NA" : TextFiles.num(interactions[i][j]));
                    }
                    w.write(line + "\n");
                }
            });
            pw.printf(" and %s", matrix);
        }
        pw.println(".");
    }


    /** Antithetic draws of the full game behind the screen check. */
    private static final int SCREEN_CHECK_DRAWS = 3;

    /** Checks a seeded sample of the screened players by antithetic sampling of the full game. */
    private void checkScreen(PrintWriter pw, org.cruxset.search.shapley.Game game,
                             org.cruxset.search.shapley.Screen.Result screened, List<String> names, boolean anti) {
        List<Integer> took = new ArrayList<>();
        for (int i = 0; i < names.size(); i++) {
            if (screened.screened()[i]) {
                took.add(i);
            }
        }
        if (took.isEmpty() || screenCheck == 0) {
            return;
        }
        Collections.shuffle(took, new java.util.Random(seed));
        List<Integer> check = took.subList(0, Math.min(screenCheck, took.size()));
        PermutationShapley.Sampler full = new PermutationShapley.Sampler(game, true, seed + 7);
        try {
            full.draw(SCREEN_CHECK_DRAWS);
        } catch (StopSearch s) {
            pw.println("Screen check: the budget ran out before the check.");
            return;
        }
        Estimate f = full.estimate();
        for (int i : check) {
            boolean agrees = Math.abs(f.value(i) - screened.value(i)) <= f.halfWidth(i) + screen;
            pw.printf(Locale.ROOT, "Screen check of %s: shortcut %.4f, full-game sampling %.4f +- %.4f (%d antithetic "
                    + "draws): %s%n", names.get(i), screened.value(i), f.value(i), f.halfWidth(i), full.draws(),
                    agrees ? "agrees" : "DISAGREES (the shortcut does not hold for it; rerun without --screen)");
        }
    }

    private void printSampled(PrintWriter pw, List<String> names,
                              List<org.cruxset.search.shapley.InteractionSampler.Pair> sampled, String kind) {
        if (sampled.isEmpty()) {
            return;
        }
        pw.println();
        pw.printf("Sampled pairwise interaction indices of the %s with the largest values (Grabisch & Roubens 1999; "
                + "positive: synergy, negative: redundancy), %d draws of 4 coalitions each:%n", kind,
                sampled.get(0).draws());
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"pair", "interaction", "std. error", "95% interval", "excludes 0"});
        for (org.cruxset.search.shapley.InteractionSampler.Pair p : sampled) {
            double lo = p.value() - p.halfWidth();
            double hi = p.value() + p.halfWidth();
            rows.add(new String[] {names.get(p.first()) + " + " + names.get(p.second()), f4(p.value()),
                f4(p.standardError()), f4(lo) + ".." + f4(hi), lo > 0 || hi < 0 ? "yes" : "no"});
        }
        Table.print(pw, rows);
        Path tsv = scoring.out().resolve("shapley-" + kind + "-pairs.tsv");
        TextFiles.write(tsv, w -> {
            w.write("first\tsecond\tinteraction\tstd_error\tlow95\thigh95\tdraws\n");
            for (org.cruxset.search.shapley.InteractionSampler.Pair p : sampled) {
                w.write(names.get(p.first()) + "\t" + names.get(p.second()) + "\t" + TextFiles.num(p.value()) + "\t"
                        + TextFiles.num(p.standardError()) + "\t" + TextFiles.num(p.value() - p.halfWidth()) + "\t"
                        + TextFiles.num(p.value() + p.halfWidth()) + "\t" + p.draws() + "\n");
            }
        });
        pw.println("Written: " + tsv);
    }

    private static String f4(double v) {
        return String.format(Locale.ROOT, "%.4f", v);
    }
}
