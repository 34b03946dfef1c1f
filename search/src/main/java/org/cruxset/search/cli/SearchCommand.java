package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.time.Instant;
import java.time.LocalDateTime;
import java.time.LocalTime;
import java.time.ZoneId;
import java.time.format.DateTimeParseException;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.Front;
import org.cruxset.search.Hypervolume;
import org.cruxset.search.SearchContext;
import org.cruxset.search.SearchRun;
import org.cruxset.search.Strategy;
import org.cruxset.search.rank.CriticalPrefix;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import org.cruxset.search.strategy.ExhaustiveStrategy;
import org.cruxset.search.strategy.GrowStrategy;
import org.cruxset.search.strategy.PruneStrategy;
import org.cruxset.search.strategy.RandomStrategy;
import org.cruxset.search.strategy.RankedStrategy;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset search}: searches for the smallest critical lesion sets on a budget. */
@Command(name = "search", mixinStandardHelpOptions = true,
        description = {"Search for the smallest sets of regions whose lesion is critical, on a budget of scored sets "
                + "(one scored set = one set scored on all samples of the search part) and/or of time.",
            "",
            "Strategies: grow (greedy addition), ranked (smallest critical prefix of a ranking), prune (backward "
                + "elimination from a set), exhaustive (every subset of a pool by increasing size), random (random sets "
                + "of every size: the floor), genetic (NSGA-II over set size and distance from criticality), local "
                + "(OptaPlanner local search; both take --screen to skip candidates a surrogate rules out), surrogate (rounds of "
                + "fit a model of the score, optimise it, score the few best sets). Unless --no-prune, the best critical sets found are pruned so each carries "
                + "an irreducibility certificate. Every reported set is re-scored on the confirmation part (not "
                + "charged). Kill the run at any time: the same command resumes it and ends with the same result, each "
                + "set paid once."})
public final class SearchCommand implements Callable<Integer> {
    /** Where a ranked search writes the single-lesion ranking it computed, inside the output folder. */
    static final String RANKING_FILE = "ranking-single-lesion.tsv";

    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Option(names = "--strategy", defaultValue = "grow", paramLabel = "NAME",
            description = "grow, ranked, prune, exhaustive, random, genetic, local or surrogate. Default: ${DEFAULT-VALUE}.")
    String strategy;

    @Option(names = "--budget", paramLabel = "N",
            description = "Scored sets of the search part to spend at most (the intact set counts as one; the last batch "
                    + "is truncated to meet it exactly).")
    Long budget;

    @Option(names = "--hours", paramLabel = "H", description = "Search time to spend at most, over all resumes of the run.")
    Double hours;

    @Option(names = "--until", paramLabel = "HH:MM", description = "Stop at the next such local time (kept when resumed).")
    String until;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of the strategy. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Option(names = "--ranking", paramLabel = "FILE",
            description = "A ranking (TSV, see README) for ranked, or whose top units form the exhaustive pool; default: "
                    + "single lesions, computed on the search part.")
    Path ranking;

    @Option(names = "--pool", defaultValue = "top:12", paramLabel = "POOL",
            description = "exhaustive: top:M (the M best-ranked regions), network:NAME, or all. Default: ${DEFAULT-VALUE}.")
    String pool;

    @Option(names = "--from", paramLabel = "SET", description = "prune: the critical set to start from (regions, "
            + "network:NAME or indices, comma-separated); default: all regions.")
    String from;

    @Option(names = "--signal", defaultValue = "probability", paramLabel = "S",
            description = "grow: what each step lowers most, probability (mean true-class probability, then accuracy) or "
                    + "accuracy (then probability). Default: ${DEFAULT-VALUE}.")
    String signal;

    @Option(names = "--lazy", description = "grow: re-score only the candidate with the largest stale gain (a heuristic: "
            + "exact only under diminishing returns, which synergy breaks).")
    boolean lazy;

    @Option(names = "--config", paramLabel = "YAML", description = "Strategy settings to change from the defaults, e.g. "
            + "genetic: {population: 60}; the settings used are recorded with the run.")
    Path config;

    @Option(names = "--no-prune", description = "Do not prune the best critical sets found (they then carry no "
            + "irreducibility certificate).")
    boolean noPrune;

    @Option(names = "--certify", defaultValue = "" + PruneStrategy.DEFAULT_CERTIFY, paramLabel = "N",
            description = "How many of the best critical sets to prune and certify. Default: ${DEFAULT-VALUE}.")
    int certify;

    @Option(names = "--reserve", defaultValue = "" + SearchRun.Settings.DEFAULT_RESERVE, paramLabel = "FRACTION",
            description = "Share of the budget kept back from the strategy for pruning and certifying its best sets "
                    + "(0 to 1; unused with --no-prune). Default: ${DEFAULT-VALUE}.")
    double reserve;

    @Option(names = "--screen", description = "genetic and local: skip the decoder for candidates a surrogate "
            + "predicts, with high confidence, not to be critical, and (genetic only) for dominated ones, larger than "
            + "a critical set already scored; skipped candidates get the predicted score, flagged, and are never "
            + "reported. A seeded share of the not-critical skips is spot-checked with the decoder and the false-skip "
            + "rate reported. Settings: the config's screen section.")
    boolean screen;

    @Option(names = "--race", negatable = true, defaultValue = "true", fallbackValue = "true",
            description = "Race decisions on the search part: score a set's samples a chunk at a time in a seeded "
                    + "order and stop once its verdict is settled (at most 1%% error, exact hypergeometric bounds); "
                    + "sets the search reports are always scored whole. --no-race scores every set whole. "
                    + "Default: on.")
    boolean race;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        if (budget != null && budget < 1) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--budget must be at least 1, found " + budget);
        }
        if (hours != null && !(hours > 0)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--hours must be positive, found " + hours);
        }
        if (!(reserve >= 0 && reserve < 1)) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--reserve must be at least 0 and below 1, found "
                    + reserve);
        }
        if (screen && !strategy.equalsIgnoreCase("genetic") && !strategy.equalsIgnoreCase("local")) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--screen works with --strategy genetic or "
                    + "local, found '" + strategy + "'");
        }
        Instant deadline = until == null ? null : nextTime(until);
        Cohort c = cohort.read();
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings settings = scoring.settings("search", command, seed,
                budget == null ? Double.POSITIVE_INFINITY : budget, model.threads());
        try (Decoder decoder = model.open();
             ScoringSession session = ScoringSession.open(decoder, c, settings)) {
            Strategy s = strategy(session);
            Reports.header(pw, session);
            pw.printf("Critical means %s. Lesion mode: %s.%n", session.settings().criterion().describe(),
                    session.settings().mode().label());
            pw.printf("Search: %s (%s), seed %d; budget %s%s%s.%s%n", s.name(), s.settings(), seed,
                    budget == null ? "none" : budget + " scored sets of the search part",
                    hours == null ? "" : ", at most " + hours + " h", deadline == null ? "" : ", until " + deadline,
                    session.run() != null && session.run().resumed() ? " Resuming an earlier run of this command." : "");
            SearchProgress progress = new SearchProgress(spec.commandLine().getErr(), budget,
                    org.cruxset.search.strategy.SurrogateFits.of(s));
            SearchRun.Result r = SearchRun.run(session, s, new SearchRun.Settings(
                    hours == null ? Double.POSITIVE_INFINITY : hours * 3600, deadline, seed, !noPrune, certify,
                    reserve, race),
                    progress);
            progress.done();
            print(pw, session, s, r);
        }
        return 0;
    }

    private Strategy strategy(ScoringSession session) {
        Atlas atlas = session.cohort().atlas();
        Ranking given = ranking == null ? null : RankingFile.read(ranking, atlas);
        return switch (strategy.toLowerCase(Locale.ROOT)) {
            case "grow" -> new GrowStrategy(signal(), lazy);
            case "ranked" -> new RankedStrategy(given);
            case "prune" -> new PruneStrategy(from == null ? null : session.toInputs(LesionSpec.parse(from, atlas)));
            case "exhaustive" -> exhaustive(session, given);
            case "random" -> new RandomStrategy();
            case "genetic" -> new org.cruxset.search.strategy.GeneticStrategy(
                    org.cruxset.search.SearchConfig.read(config).genetic(), given, screen());
            case "surrogate" -> new org.cruxset.search.strategy.SurrogateStrategy(
                    org.cruxset.search.SearchConfig.read(config).surrogate(), given);
            case "local" -> new org.cruxset.search.strategy.LocalStrategy(
                    org.cruxset.search.SearchConfig.read(config).local(), given, screen());
            default -> throw new CommandLine.ParameterException(spec.commandLine(), "--strategy must be grow, ranked, "
                    + "prune, exhaustive, random, genetic, local or surrogate, found '" + strategy + "'");
        };
    }

    /** The screen of --screen (settings from the config's screen section), or null. */
    private org.cruxset.search.strategy.SurrogateScreen screen() {
        return screen ? new org.cruxset.search.strategy.SurrogateScreen(
                org.cruxset.search.SearchConfig.read(config).screen()) : null;
    }

    private boolean signal() {
        return switch (signal) {
            case "probability" -> false;
            case "accuracy" -> true;
            default -> throw new CommandLine.ParameterException(spec.commandLine(),
                    "--signal must be probability or accuracy, found '" + signal + "'");
        };
    }

    private Strategy exhaustive(ScoringSession session, Ranking given) {
        Atlas atlas = session.cohort().atlas();
        if (pool.equals("all")) {
            return new ExhaustiveStrategy(RegionSet.all(session.inputs().batch().regions()), "all regions");
        }
        if (pool.startsWith(LesionSpec.NETWORK_PREFIX)) {
            return new ExhaustiveStrategy(session.toInputs(LesionSpec.parse(pool, atlas)), pool);
        }
        if (pool.startsWith("top:")) {
            int m;
            try {
                m = Integer.parseInt(pool.substring(4));
            } catch (NumberFormatException e) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--pool top:M needs a whole number, found '"
                        + pool + "'");
            }
            if (given == null) {
                return new TopOfSingleLesions(m);
            }
            if (given.kind() != Ranking.Kind.REGIONS) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--pool top:M needs a ranking of regions");
            }
            List<RegionSet> prefixes = given.prefixes(atlas);
            RegionSet top = prefixes.get(Math.min(m, prefixes.size()) - 1);
            return new ExhaustiveStrategy(session.toInputs(top), "top " + m + " of " + ranking);
        }
        throw new CommandLine.ParameterException(spec.commandLine(), "--pool must be top:M, network:NAME or all, found '"
                + pool + "'");
    }

    /** Exhaustive search over the top m regions of the single-lesion ranking, computed first on the search part. */
    private static final class TopOfSingleLesions implements Strategy {
        private final int m;

        TopOfSingleLesions(int m) {
            this.m = m;
        }

        @Override
        public String name() {
            return "exhaustive";
        }

        @Override
        public String settings() {
            return "pool=top " + m + " of the single-lesion ranking";
        }

        @Override
        public void run(SearchContext ctx) {
            Ranking r = org.cruxset.search.rank.SingleLesion.rank(ctx);
            List<RegionSet> prefixes = r.prefixes(ctx.session().cohort().atlas());
            RegionSet top = ctx.session().toInputs(prefixes.get(Math.min(m, prefixes.size()) - 1));
            new ExhaustiveStrategy(top, "top " + m + " of the single-lesion ranking").run(ctx);
        }
    }

    private static Instant nextTime(String text) {
        LocalTime t;
        try {
            t = LocalTime.parse(text);
        } catch (DateTimeParseException e) {
            throw new IllegalArgumentException("--until must be a time of day HH:MM, found '" + text + "'");
        }
        LocalDateTime now = LocalDateTime.now();
        LocalDateTime at = now.toLocalDate().atTime(t);
        if (!at.isAfter(now)) {
            at = at.plusDays(1);
        }
        return at.atZone(ZoneId.systemDefault()).toInstant();
    }

    private void print(PrintWriter pw, ScoringSession session, Strategy s, SearchRun.Result r) {
        pw.println();
        pw.printf("Stopped: %s (%s). Scored sets charged: %.0f%s; this session decoded %d sets whole, reused %d from "
                        + "the store, replayed %d already paid; %.1f s of search.%n", r.status(), r.stopMessage(), r.charged(),
                budget == null ? "" : " of " + budget, session.scorer().decodedCount(), session.scorer().storedCount(),
                session.scorer().replayedCount(), r.elapsedSeconds());
        if (r.batches() > 0) {
            pw.printf("Batches: %d sent to the scorer, %.1f sets each on average, %d at most.%n", r.batches(),
                    (double) r.batchedSets() / r.batches(), r.largestBatch());
        }
        int samples = session.search().inputs().size();
        pw.printf("Racing: %s. Sample-evaluations charged: %.0f (%.1f scored sets of %d samples); %d critical-or-not "
                        + "decisions, %d of them (%.0f%%) settled by a race before every sample was scored; %.1f s.%n",
                race ? "on (--no-race to score every set whole)" : "off", r.charged() * samples, r.charged(), samples,
                r.decisions(), r.racedDecisions(), r.decisions() == 0 ? 0.0 : 100.0 * r.racedDecisions() / r.decisions(),
                r.elapsedSeconds());
        if (r.resumed()) {
            pw.printf("Resumed: %.1f s of search were spent in earlier sessions of this run%s.%n", r.elapsedBeforeSeconds(),
                    hours == null ? "" : ", of the " + hours + " h allowed");
        }
        if (s instanceof RankedStrategy ranked && ranked.ranking() != null && ranking == null) {
            Path file = scoring.out().resolve(RANKING_FILE);
            RankingFile.write(file, ranked.ranking());
            pw.printf("Single-lesion ranking written to %s (give it to --ranking, or read it in Python or R).%n", file);
        }
        if (s instanceof RankedStrategy ranked && ranked.prefix() != null) {
            CriticalPrefix.Result p = ranked.prefix();
            pw.printf("Ranking: smallest critical prefix %s of %d units (%d prefixes scored)%s.%n",
                    p.length() < 0 ? "none" : Integer.toString(p.length()), ranked.ranking().size(), p.scored().size(),
                    p.monotoneAsSeen() ? "; monotone where scored"
                            : "; non-monotone where scored: " + String.join("; ", p.nonMonotone())
                            + " (a shorter critical prefix cannot be ruled out)");
        }
        for (String line : s.notes()) {
            pw.println(line);
        }
        org.cruxset.search.strategy.SurrogateFits fits = org.cruxset.search.strategy.SurrogateFits.of(s);
        if (fits != null) {
            pw.printf("Accounting: decoder %.1f scored sets charged (%.0f sample-evaluations; %d sets decoded whole in "
                            + "this session); surrogate %d fits in %.1f s; wall %.1f s of search in all.%n", r.charged(),
                    r.charged() * samples, session.scorer().decodedCount(), fits.fits(), fits.seconds(),
                    r.elapsedSeconds());
        }
        if (r.bestSize() < 0) {
            pw.println("No critical set was found. Raise the budget, try another strategy, or check the criterion.");
        } else {
            pw.printf("Smallest critical sets found: size %d, %d distinct%s.%n", r.bestSize(), r.reported().size(),
                    r.notKept() > 0 ? " (and " + r.notKept() + " more not kept)" : "");
            List<String[]> rows = new ArrayList<>();
            rows.add(new String[] {"#", "regions", "networks", "search accuracy (95% Wilson)", "search",
                "confirmation accuracy (95% Wilson)", "confirmation", "certificate"});
            int i = 1;
            for (SearchRun.Reported x : r.reported()) {
                rows.add(new String[] {Integer.toString(i++), names(session, x.set()), networks(session, x.set()),
                    accuracy(x.search()), "CRITICAL", x.confirmation() == null ? "-" : accuracy(x.confirmation()),
                    x.confirmationCritical() == null ? "-" : x.confirmationCritical() ? "CRITICAL" : "not confirmed",
                    x.certificate() != null ? "irreducible" : "not computed"});
            }
            Table.print(pw, rows);
            pw.printf("Core (in every set): %s; interchangeable: %s.%n", r.core().isEmpty() ? "none" : names(session, r.core()),
                    r.interchangeable().isEmpty() ? "none" : names(session, r.interchangeable()));
            if (session.confirmation().isEmpty()) {
                pw.println("No confirmation part (--confirm 0): these scores were selected on the same samples and are "
                        + "optimistic.");
            }
        }
        pw.println();
        pw.println("Front (best set found at each size where no smaller set scored as low; every size is in the store):");
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"size", "accuracy", "p(true)", "critical", "set"});
        double lowest = Double.POSITIVE_INFINITY;
        for (Front.Entry e : r.front()) {
            if (!(e.score().accuracy() < lowest)) {
                continue;
            }
            lowest = e.score().accuracy();
            rows.add(new String[] {Integer.toString(e.size()), String.format("%.3f", e.score().accuracy()),
                String.format("%.3f", e.score().meanTrueClassProbability()), e.critical() ? "yes" : "no",
                e.size() <= 8 ? (e.size() == 0 ? "(intact)" : names(session, e.set())) : e.size() + " regions"});
        }
        Table.print(pw, rows);
        double intact = session.intact().score().accuracy();
        pw.printf("Front hypervolume, objectives (size / %d, accuracy) both minimised, reference point (1, %.3f = intact "
                        + "accuracy): %.4f of at most %.4f.%n", session.inputs().batch().regions(), intact,
                Hypervolume.ofFront(r.front(), session.inputs().batch().regions(), intact, SetScore::accuracy), intact);
        pw.printf("%nResults: %s (cruxset export --out %s writes TSV views, including the anytime trace)%n",
                scoring.out().resolve(ScoringSession.STORE_FILE), scoring.out());
    }

    static String names(ScoringSession session, RegionSet inputSet) {
        Atlas atlas = session.cohort().atlas();
        int[] regionOf = session.inputs().regionOfInput();
        StringBuilder sb = new StringBuilder();
        for (int p : inputSet.positions()) {
            sb.append(sb.length() == 0 ? "" : ",").append(atlas.region(regionOf[p]).name());
        }
        return sb.toString();
    }

    private static String networks(ScoringSession session, RegionSet inputSet) {
        Atlas atlas = session.cohort().atlas();
        int[] regionOf = session.inputs().regionOfInput();
        java.util.TreeMap<String, Integer> count = new java.util.TreeMap<>();
        for (int p : inputSet.positions()) {
            count.merge(atlas.region(regionOf[p]).network(), 1, Integer::sum);
        }
        StringBuilder sb = new StringBuilder();
        count.forEach((k, v) -> sb.append(sb.length() == 0 ? "" : ",").append(k).append(v > 1 ? "×" + v : ""));
        return sb.toString();
    }

    private static String accuracy(SetScore s) {
        return String.format("%.3f (%.3f-%.3f), n = %d", s.accuracy(), s.wilsonLow(), s.wilsonHigh(), s.n());
    }

    /** The progress bar of a search: sets charged of the budget, store hits, best critical size so far. */
    private static final class SearchProgress implements SearchContext.Listener {
        private final ProgressBar bar;
        private final Long budget;
        private long last;

        private final org.cruxset.search.strategy.SurrogateFits fits;

        SearchProgress(PrintWriter err, Long budget, org.cruxset.search.strategy.SurrogateFits fits) {
            this.fits = fits;
            this.bar = new ProgressBar(err, "search");
            this.budget = budget;
        }

        @Override
        public void scored(SearchContext ctx) {
            long now = System.nanoTime();
            long every = System.console() != null ? 300_000_000L : 10_000_000_000L;
            if (now - last < every) {
                return;
            }
            last = now;
            int done = (int) ctx.charged();
            int total = budget == null ? done : (int) Math.min(Integer.MAX_VALUE, budget);
            int best = ctx.front().bestCriticalSize();
            bar.update(done, Math.max(total, 1), String.format("store hits %d, best critical size %s%s",
                    ctx.scorer().storedCount() + ctx.scorer().replayedCount(), best < 0 ? "none yet" : best,
                    fits == null ? "" : fits.progress()));
        }

        void done() {
            bar.done();
        }
    }
}
