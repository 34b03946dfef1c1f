package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.Objective;
import org.cruxset.search.SearchContext;
import org.cruxset.search.Strategy;

/**
 * Backward elimination from a critical set: score every one-region-smaller subset (one batch); while some are still
 * critical, move to the best of them (lowest accuracy, then lowest mean true-class probability, then model input
 * order); stop when none is. The last batch is the set's <em>irreducibility certificate</em>: every subset with one
 * region restored was scored and none is critical. Starts from a given set, or from all regions.
 */
public final class PruneStrategy implements Strategy {
    /** How many of the best critical sets {@link #certifyBest} prunes or certifies by default. */
    public static final int DEFAULT_CERTIFY = 20;

    private final RegionSet start;

    /** Prunes {@code start} (model input positions), or all regions when null. */
    public PruneStrategy(RegionSet start) {
        this.start = start;
    }

    @Override
    public String name() {
        return "prune";
    }

    @Override
    public String settings() {
        return "from=" + (start == null ? "all regions" : start.size() + " regions " + start);
    }

    @Override
    public void run(SearchContext ctx) {
        RegionSet from = start == null ? RegionSet.all(ctx.regions()) : start;
        if (from.universe() != ctx.regions()) {
            throw new IllegalArgumentException("the start set is over " + from.universe() + " regions, the model takes "
                    + ctx.regions());
        }
        LesionScorer.Scored s = ctx.score(from);
        if (!ctx.critical(s.score())) {
            throw new IllegalArgumentException("prune needs a critical start set; " + from.size() + " regions are not "
                    + "critical (accuracy " + s.score().accuracy() + ")");
        }
        prune(ctx, from);
    }

    /**
     * Prunes the critical set {@code set} to an irreducible one, certifies it, and returns it. Each step decides which
     * one-region-smaller subsets are critical ({@link SearchContext#decideCritical}: raced when racing is on), scores
     * those whole and moves to the best; when none is, every subset is scored whole for the certificate (a raced
     * verdict is never a certificate) and the step is checked again on the whole scores.
     */
    public static RegionSet prune(SearchContext ctx, RegionSet set) {
        RegionSet current = set;
        while (true) {
            int[] members = current.positions();
            List<RegionSet> subsets = new ArrayList<>(members.length);
            for (int p : members) {
                subsets.add(current.without(p));
            }
            List<RegionSet> likely = new ArrayList<>();
            for (LesionScorer.Raced r : ctx.decideCritical(subsets)) {
                if (r.atMost() && !r.set().isEmpty()) {
                    likely.add(r.set());
                }
            }
            LesionScorer.Scored best = likely.isEmpty() ? null : bestCritical(ctx, ctx.score(likely));
            if (best == null) {
                best = bestCritical(ctx, ctx.score(subsets));
            }
            if (best == null) {
                ctx.certifyIrreducible(current, subsets);
                return current;
            }
            current = best.set();
        }
    }

    /** The critical set among {@code scored} with the lowest accuracy, then mean true-class probability; or null. */
    private static LesionScorer.Scored bestCritical(SearchContext ctx, List<LesionScorer.Scored> scored) {
        LesionScorer.Scored best = null;
        for (LesionScorer.Scored s : scored) {
            if (!s.set().isEmpty() && ctx.critical(s.score())
                    && (best == null || Objective.BETTER.compare(s.score(), best.score()) < 0)) {
                best = s;
            }
        }
        return best;
    }

    /**
     * Until the best critical sets found (the first {@code max} of them) all carry irreducibility certificates:
     * prunes each uncertified one (which certifies it, or finds a smaller critical set that becomes the best). A set
     * that was already irreducible costs its one-smaller subsets, free when already scored.
     */
    public static void certifyBest(SearchContext ctx, int max) {
        while (true) {
            RegionSet next = null;
            List<RegionSet> best = ctx.front().bestCriticalSets();
            for (int i = 0; i < Math.min(max, best.size()); i++) {
                if (!ctx.isCertified(best.get(i))) {
                    next = best.get(i);
                    break;
                }
            }
            if (next == null) {
                return;
            }
            prune(ctx, next);
        }
    }
}
