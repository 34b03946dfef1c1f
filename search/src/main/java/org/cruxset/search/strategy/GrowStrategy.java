package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.PriorityQueue;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.Objective;
import org.cruxset.search.SearchContext;
import org.cruxset.search.Strategy;

/**
 * Greedy forward addition: from the empty set, add the region whose lesion, together with those already chosen,
 * lowers the score most, until the set is critical. Each step scores every remaining region as one batch. The step
 * signal is the mean true-class probability (ties: accuracy, then model input order), finer than accuracy, which
 * changes only when a sample flips; {@code accuracy} orders by accuracy first.
 *
 * <p>{@code lazy} re-scores only the candidate whose last known gain is largest, and takes it when its fresh gain is
 * still the largest (lazy evaluation of stale gains: Minoux 1978; CELF, Leskovec et al. 2007). That equals plain
 * greedy only when gains never grow as regions are added (diminishing returns); synergy between regions breaks it,
 * so lazy is a labelled heuristic, off by default.
 *
 * <p>With racing on ({@link SearchContext#racing()}), a step races the candidates for the lowest signal (whether the
 * chosen one is critical is then read from its whole score, as without racing): all candidates advance a chunk of samples at a time on the same samples, and a candidate is dropped once
 * a paired test says its signal is above the leader's (see {@link #dominated}), with δ the race's alpha spent
 * linearly over the looks and split over the candidates; the survivors are scored whole and the best taken as without
 * racing. (Bounds that hold for any distribution, Serfling's or the empirical Bernstein–Serfling bound of Bardenet &amp;
 * Maillard 2015, were tried first: their range terms kept every candidate alive on the search benchmark, so racing
 * saved 1-2%.)
 */
public final class GrowStrategy implements Strategy {
    private final boolean byAccuracy;
    private final boolean lazy;

    /** Greedy addition; {@code byAccuracy} orders steps by accuracy first; {@code lazy} uses stale gains. */
    public GrowStrategy(boolean byAccuracy, boolean lazy) {
        this.byAccuracy = byAccuracy;
        this.lazy = lazy;
    }

    @Override
    public String name() {
        return "grow";
    }

    @Override
    public String settings() {
        return "signal=" + (byAccuracy ? "accuracy" : "probability") + ", lazy=" + lazy;
    }

    private Comparator<SetScore> order() {
        return byAccuracy ? Objective.BETTER : Objective.BETTER_BY_PROBABILITY;
    }

    /** The signal a step lowers: accuracy or mean true-class probability. */
    private double signal(SetScore s) {
        return byAccuracy ? s.accuracy() : s.meanTrueClassProbability();
    }

    @Override
    public void run(SearchContext ctx) {
        RegionSet current = ctx.empty();
        SetScore currentScore = ctx.intact();
        PriorityQueue<double[]> stale = null;
        while (current.isEmpty() || !ctx.critical(currentScore)) {
            if (current.size() == ctx.regions()) {
                return;
            }
            LesionScorer.Scored next;
            if (ctx.racing() != null) {
                next = racedStep(ctx, current);
            } else if (!lazy || stale == null) {
                List<LesionScorer.Scored> scored = scoreAll(ctx, current);
                next = scored.get(0);
                for (LesionScorer.Scored s : scored) {
                    if (order().compare(s.score(), next.score()) < 0) {
                        next = s;
                    }
                }
                if (lazy) {
                    stale = new PriorityQueue<>((x, y) -> x[0] != y[0] ? Double.compare(y[0], x[0])
                            : Double.compare(x[1], y[1]));
                    for (LesionScorer.Scored s : scored) {
                        if (s != next) {
                            stale.add(new double[] {signal(currentScore) - signal(s.score()), added(s.set(), current)});
                        }
                    }
                }
            } else {
                next = lazyStep(ctx, current, currentScore, stale);
            }
            current = next.set();
            currentScore = next.score();
        }
    }

    /** One step with racing (see the class comment). */
    private LesionScorer.Scored racedStep(SearchContext ctx, RegionSet current) {
        List<RegionSet> candidates = new ArrayList<>();
        for (int p = 0; p < ctx.regions(); p++) {
            if (!current.contains(p)) {
                candidates.add(current.with(p));
            }
        }
        int n = ctx.intact().n();
        double alpha = ctx.racing().alpha();
        int chunk = ctx.racing().chunk();
        List<RegionSet> alive = candidates;
        int looks = ctx.raceLooks();
        for (int look = 0; alive.size() > 1 && look < looks; look++) {
            List<LesionScorer.Progress> progress = ctx.advance(alive, look);
            // The leader: the lowest mean signal so far; every other candidate is compared with it sample by sample.
            LesionScorer.Progress leader = progress.get(0);
            for (LesionScorer.Progress p : progress) {
                if (mean(p, p.samples()) < mean(leader, leader.samples())) {
                    leader = p;
                }
            }
            boolean allComplete = true;
            List<RegionSet> next = new ArrayList<>();
            double delta = alpha * Math.min(chunk, n) / n / candidates.size();
            for (LesionScorer.Progress p : progress) {
                allComplete &= p.complete();
                if (p == leader || !dominated(p, leader, n, delta)) {
                    next.add(p.set());
                }
            }
            alive = next;
            if (allComplete) {
                break;
            }
        }
        LesionScorer.Scored best = null;
        for (LesionScorer.Scored s : ctx.score(alive)) {
            if (best == null || order().compare(s.score(), best.score()) < 0) {
                best = s;
            }
        }
        return best;
    }

    /** The mean signal of a candidate's first {@code m} samples in racing order. */
    private double mean(LesionScorer.Progress p, int m) {
        double sum = 0;
        for (int i = 0; i < m; i++) {
            sum += byAccuracy ? (p.correctness()[i] ? 1 : 0) : p.probabilities()[i];
        }
        return sum / m;
    }

    /**
     * Whether candidate {@code p}'s whole-part signal is above {@code leader}'s: a one-sided paired test of the mean
     * per-sample difference over the samples both have, with the finite-population correction of sampling without
     * replacement, (mean − z·sd·sqrt((1 − m/N)/m) > 0, z the normal quantile of 1 − δ; the paired t-race of racing
     * algorithms, common practice). Exact once both are complete. A heuristic step of a heuristic strategy: a wrong
     * drop changes which region greedy adds, never a reported verdict.
     */
    private boolean dominated(LesionScorer.Progress p, LesionScorer.Progress leader, int n, double delta) {
        int m = Math.min(p.samples(), leader.samples());
        double sum = 0;
        double sq = 0;
        for (int i = 0; i < m; i++) {
            double d = byAccuracy ? (p.correctness()[i] ? 1 : 0) - (leader.correctness()[i] ? 1 : 0)
                    : p.probabilities()[i] - leader.probabilities()[i];
            sum += d;
            sq += d * d;
        }
        double mean = sum / m;
        if (m >= n) {
            return mean > 0;
        }
        double sd = Math.sqrt(Math.max(0, (sq - m * mean * mean) / Math.max(1, m - 1)));
        double z = new org.apache.commons.math3.distribution.NormalDistribution(null, 0, 1)
                .inverseCumulativeProbability(1 - delta);
        return mean - z * sd * Math.sqrt((1 - (double) m / n) / m) > 0;
    }

    /** Scores every remaining region added to {@code current}, as one batch in model input order. */
    private static List<LesionScorer.Scored> scoreAll(SearchContext ctx, RegionSet current) {
        List<RegionSet> batch = new ArrayList<>();
        for (int p = 0; p < ctx.regions(); p++) {
            if (!current.contains(p)) {
                batch.add(current.with(p));
            }
        }
        return ctx.score(batch);
    }

    private static int added(RegionSet with, RegionSet current) {
        for (int p : with.positions()) {
            if (!current.contains(p)) {
                return p;
            }
        }
        throw new IllegalStateException("no region added to " + current);
    }

    /** One lazy step: re-score the top stale candidate until one keeps the largest gain. */
    private LesionScorer.Scored lazyStep(SearchContext ctx, RegionSet current, SetScore currentScore,
                                         PriorityQueue<double[]> stale) {
        while (true) {
            double[] top = stale.poll();
            int p = (int) top[1];
            RegionSet with = current.with(p);
            LesionScorer.Scored s = ctx.score(with);
            double fresh = signal(currentScore) - signal(s.score());
            double[] second = stale.peek();
            if (second == null || fresh > second[0] || (fresh == second[0] && p < second[1])) {
                return s;
            }
            stale.add(new double[] {fresh, p});
        }
    }
}
