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
            if (!lazy || stale == null) {
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
