package org.cruxset.search.bench;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchConfig;
import org.cruxset.search.SearchRun;
import org.cruxset.search.Strategy;
import org.cruxset.search.StrategySpec;
import org.cruxset.search.strategy.GeneticStrategy;
import org.cruxset.search.strategy.LocalStrategy;
import org.cruxset.search.strategy.SurrogateFits;
import org.cruxset.search.strategy.SurrogateScreen;

/**
 * The search benchmark: strategies run on {@link PlantedProblem} instances (one per seed, each run in a fresh store,
 * through the real scorer, store and default criterion) at given budgets; per strategy and budget it reports the
 * success rate (the proven minimum size reached), the median best critical size, the median sets charged to reach it,
 * how often the result contains a named trap, and the median budget spent in all (sample-evaluations = sets × the
 * search part's samples) and wall time. A strategy name with {@code ~race} runs it with racing, with {@code ~screen}
 * (genetic, local) through a surrogate screen.
 */
public final class SearchSuite {
    /** The strategies of the suite; later strategies join this list. */
    public static final List<String> STRATEGIES = List.of("random", "grow", "grow+prune", "ranked+prune", "genetic",
            "local", "surrogate", "genetic~screen", "local~screen");

    /** One run: its strategy, seed, budget, best critical size (−1: none), sets to reach it, trapped, the proof. */
    public record Run(String strategy, long seed, long budget, int bestSize, double chargedToBest, boolean trapped,
                      PlantedProblem.Proof proof, int minimum, double charged, long sampleEvaluations,
                      double seconds, long decisions, long racedDecisions, int fits, double fitSeconds,
                      long candidates, long skipped, long spotChecked, long falseSkips) {
        /** Whether the run reached the proven minimum size. */
        public boolean success() {
            return bestSize == minimum;
        }
    }

    /** The summary of one strategy at one budget. */
    public record Row(String strategy, long budget, int runs, int successes, double medianBest, double medianSetsToBest,
                      int trapped, double medianSampleEvaluations, double medianSeconds, double racedShare,
                      double medianFits, double medianFitSeconds, long candidates, long skipped, long spotChecked,
                      long falseSkips) {
    }

    /**
     * A strategy against a baseline on the same seeds and budget: per seed, the sets charged until the strategy first
     * reached the baseline's best critical size (its sets to best when it reached that size or a smaller one;
     * infinite when it never did), and their median beside the baseline's.
     */
    public record Paired(String strategy, String baseline, long budget, double[] setsToBaselineBest,
                         double[] baselineSetsToBest, double median, double baselineMedian) {
        /** The ratio of the medians (strategy over baseline). */
        public double ratio() {
            return median / baselineMedian;
        }
    }

    /** {@code strategy}'s runs paired with {@code baseline}'s by seed at each budget they share. */
    public static List<Paired> paired(List<Run> runs, String strategy, String baseline) {
        List<Paired> out = new ArrayList<>();
        java.util.TreeSet<Long> budgets = new java.util.TreeSet<>();
        for (Run r : runs) {
            budgets.add(r.budget());
        }
        for (long b : budgets) {
            List<Double> mine = new ArrayList<>();
            List<Double> theirs = new ArrayList<>();
            for (Run base : runs) {
                if (!base.strategy().equals(baseline) || base.budget() != b || base.bestSize() < 0) {
                    continue;
                }
                for (Run r : runs) {
                    if (r.strategy().equals(strategy) && r.budget() == b && r.seed() == base.seed()) {
                        mine.add(r.bestSize() >= 0 && r.bestSize() <= base.bestSize() ? r.chargedToBest()
                                : Double.POSITIVE_INFINITY);
                        theirs.add(base.chargedToBest());
                    }
                }
            }
            if (!mine.isEmpty()) {
                double[] m = mine.stream().mapToDouble(Double::doubleValue).toArray();
                double[] t = theirs.stream().mapToDouble(Double::doubleValue).toArray();
                out.add(new Paired(strategy, baseline, b, m, t, median(m), median(t)));
            }
        }
        return out;
    }

    private SearchSuite() {
    }

    /** Runs {@code strategy} on the instance of {@code seed} with {@code budget} scored sets, in a store in {@code dir}. */
    public static Run runOne(PlantedProblem.Config config, SearchConfig strategies, String strategy, long seed,
                             long budget, Path dir) {
        PlantedProblem p = new PlantedProblem(config, seed);
        CollapseCriterion criterion = CollapseCriterion.defaults();
        ScoringSession.Settings settings = new ScoringSession.Settings(LesionMode.ZERO, 0, null, criterion, budget, 1,
                dir, "bench", "bench search " + strategy + " seed " + seed + " budget " + budget, seed,
                Parts.DEFAULT_SEED, Parts.DEFAULT_CONFIRM);
        try (Decoder decoder = p.decoder(); ScoringSession session = ScoringSession.open(decoder, p.cohort(), settings)) {
            PlantedProblem.Proof proof = p.proof(PlantedProblem.ids(session.inputs().batch()), criterion);
            StrategySpec spec = StrategySpec.parse(strategy);
            long t0 = System.nanoTime();
            long[] decisions = new long[2];
            Strategy chosen = spec.create(strategies);
            SearchRun.Result r = SearchRun.run(session, chosen,
                    new SearchRun.Settings(Double.POSITIVE_INFINITY, null, seed, spec.prune(), 5,
                            SearchRun.Settings.DEFAULT_RESERVE, spec.race()), ctx -> {
                        decisions[0] = ctx.decisions();
                        decisions[1] = ctx.racedDecisions();
                    });
            double seconds = (System.nanoTime() - t0) / 1e9;
            int n = session.search().inputs().size();
            RegionSet trapRegions = p.trapRegions();
            boolean trapped = false;
            for (SearchRun.Reported x : r.reported()) {
                boolean all = !trapRegions.isEmpty();
                for (int t : trapRegions.positions()) {
                    all &= x.set().contains(t);
                }
                trapped |= all;
            }
            SurrogateFits fits = SurrogateFits.of(chosen);
            SurrogateScreen used = chosen instanceof GeneticStrategy g ? g.screen()
                    : chosen instanceof LocalStrategy l ? l.screen() : null;
            long[] screen = used != null ? used.counts() : new long[5];
            return new Run(strategy, seed, budget, r.bestSize(), r.chargedAtBest(), trapped, proof, p.minimumSize(),
                    r.charged(), Math.round(r.charged() * n), seconds, decisions[0], decisions[1],
                    fits == null ? 0 : fits.fits(), fits == null ? 0 : fits.seconds(), screen[0], screen[1], screen[2],
                    screen[3]);
        }
    }

    /**
     * Runs every strategy × budget × seed with the strategy settings {@code settings} and summarises; {@code log}
     * (nullable) hears each run.
     */
    public static List<Row> run(PlantedProblem.Config config, SearchConfig settings, List<String> strategies,
                                List<Long> budgets, List<Long> seeds, Path dir, PrintWriter log) {
        return run(config, settings, strategies, budgets, seeds, dir, log, new ArrayList<>());
    }

    /** As {@link #run(PlantedProblem.Config, SearchConfig, List, List, List, Path, PrintWriter)}, adding every run to {@code sink}. */
    public static List<Row> run(PlantedProblem.Config config, SearchConfig settings, List<String> strategies,
                                List<Long> budgets, List<Long> seeds, Path dir, PrintWriter log, List<Run> sink) {
        List<Row> rows = new ArrayList<>();
        int n = 0;
        for (String s : strategies) {
            for (long b : budgets) {
                List<Run> runs = new ArrayList<>();
                for (long seed : seeds) {
                    Run r = runOne(config, settings, s, seed, b, dir.resolve("run-" + (n++)));
                    if (!r.proof().holds()) {
                        throw new IllegalStateException("the planted minimum of seed " + seed + " is not proven: " + r.proof());
                    }
                    runs.add(r);
                    sink.add(r);
                    if (log != null) {
                        log.printf("  %-14s budget %6d seed %3d: best critical size %s%s%s%n", s, b, seed,
                                r.bestSize() < 0 ? "none" : r.bestSize(),
                                r.bestSize() < 0 ? "" : String.format(" after %.0f sets", r.chargedToBest()),
                                r.trapped() ? " (a trap)" : "");
                        log.flush();
                    }
                }
                rows.add(summarise(s, b, runs));
            }
        }
        return rows;
    }

    static Row summarise(String strategy, long budget, List<Run> runs) {
        double[] best = new double[runs.size()];
        List<Double> toBest = new ArrayList<>();
        int ok = 0;
        int trapped = 0;
        for (int i = 0; i < runs.size(); i++) {
            Run r = runs.get(i);
            best[i] = r.bestSize() < 0 ? Double.POSITIVE_INFINITY : r.bestSize();
            if (r.bestSize() >= 0) {
                toBest.add(r.chargedToBest());
            }
            ok += r.success() ? 1 : 0;
            trapped += r.trapped() ? 1 : 0;
        }
        double[] tb = toBest.stream().mapToDouble(Double::doubleValue).toArray();
        double[] evaluations = runs.stream().mapToDouble(Run::sampleEvaluations).toArray();
        double[] seconds = runs.stream().mapToDouble(Run::seconds).toArray();
        long decisions = runs.stream().mapToLong(Run::decisions).sum();
        long raced = runs.stream().mapToLong(Run::racedDecisions).sum();
        return new Row(strategy, budget, runs.size(), ok, median(best), tb.length == 0 ? Double.NaN : median(tb), trapped,
                median(evaluations), median(seconds), decisions == 0 ? 0 : (double) raced / decisions,
                median(runs.stream().mapToDouble(Run::fits).toArray()),
                median(runs.stream().mapToDouble(Run::fitSeconds).toArray()),
                runs.stream().mapToLong(Run::candidates).sum(), runs.stream().mapToLong(Run::skipped).sum(),
                runs.stream().mapToLong(Run::spotChecked).sum(), runs.stream().mapToLong(Run::falseSkips).sum());
    }

    /** The median (mean of the middle two for an even count); infinities sort last. */
    static double median(double[] v) {
        double[] x = v.clone();
        Arrays.sort(x);
        int n = x.length;
        return n % 2 == 1 ? x[n / 2] : (x[n / 2 - 1] + x[n / 2]) / 2;
    }
}
