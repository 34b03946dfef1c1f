package org.cruxset.search.strategy.local;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.strategy.Grading;
import org.cruxset.search.strategy.RankedPool;
import org.cruxset.search.strategy.SurrogateScreen;
import org.optaplanner.core.api.score.buildin.hardmediumsoftlong.HardMediumSoftLongScore;

/**
 * Each step's sampled neighbourhood, scored as one batch through the search context, and the graded score the solver
 * reads from it. The neighbourhood of a set: restoring each lesioned region, lesioning {@code additions} intact
 * regions drawn from the ranked pool or at random ({@link RankedPool#draw}), and {@code swaps} swaps (a random
 * lesioned region restored, an intact one drawn the same way lesioned).
 * The hard score is how far a set is from critical: its correct samples above the most a critical set may have (times
 * 1000), plus, while it is not critical, its mean true-class probability (in thousandths), so the solver has something
 * to climb; the medium score is minus the set's size; the soft score is how firmly the set collapses the decoder
 * (its correct samples, then its mean true-class probability, fewer and lower better), so that among critical sets
 * of one size the solver keeps the one furthest below the collapse threshold, which leaves the most room to remove
 * further regions. Only the current step's scores are kept in memory. With a {@link SurrogateScreen}, the batch goes
 * through the screen: a non-critical set's hard score is then its graded distance from criticality ({@link Grading},
 * predicted for skipped sets), critical sets keep the scores above.
 */
final class Neighbourhood {
    private final SearchContext ctx;
    private final SplittableRandom rng;
    private final RankedPool pool;
    private final int additions;
    private final int swaps;
    private final int limit;
    private final Map<RegionSet, SetScore> cache = new HashMap<>();
    /** With a screen: the graded distance of each non-critical set of the step (skipped ones' predicted). */
    private final Map<RegionSet, Double> graded = new HashMap<>();
    private final SurrogateScreen screen;
    private final Grading grading = new Grading("mixed");
    private int batches;
    private long batchedSets;

    Neighbourhood(SearchContext ctx, SplittableRandom rng, RankedPool pool, int additions, int swaps,
                  SurrogateScreen screen) {
        this.ctx = ctx;
        this.screen = screen;
        this.rng = rng;
        this.pool = pool;
        this.additions = additions;
        this.swaps = swaps;
        this.limit = ctx.maxCorrectWhenCritical();
    }

    /** The moves of this step, their sets scored as one batch first. */
    List<FlipMove> moves(LesionPlan plan) {
        List<RegionVar> on = new ArrayList<>();
        List<RegionVar> off = new ArrayList<>();
        for (RegionVar v : plan.getRegions()) {
            (Boolean.TRUE.equals(v.getLesioned()) ? on : off).add(v);
        }
        RegionSet current = plan.set();
        List<FlipMove> moves = new ArrayList<>();
        LinkedHashSet<RegionSet> sets = new LinkedHashSet<>();
        for (RegionVar v : on) {
            moves.add(new FlipMove(List.of(v)));
            sets.add(current.without(v.position()));
        }
        List<RegionVar> all = plan.getRegions();
        for (int i = 0; i < Math.min(additions, off.size()); i++) {
            RegionVar v = all.get(pool.draw(current, rng));
            moves.add(new FlipMove(List.of(v)));
            sets.add(current.with(v.position()));
        }
        for (int i = 0; i < swaps && !on.isEmpty() && !off.isEmpty(); i++) {
            RegionVar a = on.get(rng.nextInt(on.size()));
            RegionVar b = all.get(pool.draw(current, rng));
            moves.add(new FlipMove(List.of(a, b)));
            sets.add(current.without(a.position()).with(b.position()));
        }
        cache.clear();
        graded.clear();
        List<RegionSet> batch = new ArrayList<>(sets);
        if (screen == null) {
            for (LesionScorer.Scored s : ctx.score(batch)) {
                cache.put(s.set(), s.score());
            }
        } else {
            // The screen scores what it does not skip; critical sets (grade 0) were scored whole, and are read back
            // from the run's own store (paid already) for their soft score.
            double[] g = screen.grades(ctx, grading, batch);
            List<RegionSet> critical = new ArrayList<>();
            for (int i = 0; i < batch.size(); i++) {
                if (g[i] == 0) {
                    critical.add(batch.get(i));
                } else {
                    graded.put(batch.get(i), g[i]);
                }
            }
            for (LesionScorer.Scored s : ctx.score(critical)) {
                cache.put(s.set(), s.score());
            }
        }
        batches++;
        batchedSets += batch.size();
        return moves;
    }

    /** The graded score of the plan's set, from this step's batch or scored alone (e.g. the first set). */
    HardMediumSoftLongScore score(LesionPlan plan) {
        RegionSet s = plan.set();
        Double g = graded.get(s);
        if (g != null) {
            // Screened and not critical: the graded distance (in millionths) stands for how far it is from critical.
            long distance = Math.max(1, Math.round(g * 1e6));
            return HardMediumSoftLongScore.of(-distance, -s.size(), -distance);
        }
        SetScore q = cache.get(s);
        if (q == null) {
            q = ctx.score(s).score();
            cache.put(s, q);
        }
        boolean critical = !s.isEmpty() && ctx.critical(q);
        long excess = Math.max(0, q.correct() - limit);
        long fine = Math.round(999 * q.meanTrueClassProbability());
        long depth = q.correct() * 1000L + fine;
        return HardMediumSoftLongScore.of(critical ? 0 : -(excess * 1000 + fine), -s.size(), -depth);
    }

    /** Steps whose neighbourhood was scored, and the mean batch size. */
    int batches() {
        return batches;
    }

    double meanBatch() {
        return batches == 0 ? 0 : (double) batchedSets / batches;
    }
}
