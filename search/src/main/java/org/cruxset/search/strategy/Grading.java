package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;

/**
 * The graded distance of a lesion set from criticality, minimised by the genetic and surrogate strategies: 0 for a
 * critical set; otherwise, by {@code kind}, the share of correct samples above the most a critical set may have
 * ({@code excess}), the mean true-class probability ({@code probability}), or half of each ({@code mixed}), plus a small
 * floor so that every non-critical set grades above every critical one.
 */
public final class Grading {
    /** The kinds of grading. */
    public static final List<String> KINDS = List.of("excess", "probability", "mixed");

    private final String kind;

    /** A grading of {@code kind} (one of {@link #KINDS}). */
    public Grading(String kind) {
        if (!KINDS.contains(kind)) {
            throw new IllegalArgumentException("grading must be excess, probability or mixed, found '" + kind + "'");
        }
        this.kind = kind;
    }

    /** The grading's kind. */
    public String kind() {
        return kind;
    }

    /**
     * The graded distances of {@code batch}: from whole scores, or with racing on, from whole scores for the sets a
     * race says may be critical and from the raced samples for the rest (their distance estimated from the samples
     * scored so far; critical sets, the only ones a search reports, are always scored whole).
     */
    public double[] grades(SearchContext ctx, List<RegionSet> batch) {
        int limit = ctx.maxCorrectWhenCritical();
        double[] out = new double[batch.size()];
        if (ctx.racing() == null) {
            List<LesionScorer.Scored> scored = ctx.score(batch);
            for (int j = 0; j < batch.size(); j++) {
                out[j] = grade(ctx, scored.get(j).score(), batch.get(j).size());
            }
            return out;
        }
        List<LesionScorer.Raced> raced = ctx.decideCritical(batch);
        List<RegionSet> maybe = new ArrayList<>();
        for (LesionScorer.Raced r : raced) {
            if (r.atMost() && !r.exact()) {
                maybe.add(r.set());
            }
        }
        Map<RegionSet, SetScore> whole = new HashMap<>();
        for (LesionScorer.Scored s : ctx.score(maybe)) {
            whole.put(s.set(), s.score());
        }
        int n = ctx.intact().n();
        for (int j = 0; j < batch.size(); j++) {
            LesionScorer.Raced r = raced.get(j);
            SetScore s = r.exact() ? r.full().score() : whole.get(r.set());
            if (s != null) {
                out[j] = grade(ctx, s, batch.get(j).size());
            } else {
                double excess = Math.max(0, (double) r.correct() / r.samples() * n - limit) / n;
                out[j] = graded(excess, r.probabilitySum() / r.samples());
            }
        }
        return out;
    }

    /** The graded distance from criticality of a whole score of a set of {@code size} regions (0 when critical). */
    public double grade(SearchContext ctx, SetScore s, int size) {
        if (size > 0 && ctx.critical(s)) {
            return 0;
        }
        return graded(Math.max(0, s.correct() - ctx.maxCorrectWhenCritical()) / (double) s.n(),
                s.meanTrueClassProbability());
    }

    /** The graded distance of a non-critical set with {@code excess} correct share above the limit and mean {@code p}. */
    public double graded(double excess, double p) {
        return switch (kind) {
            case "excess" -> excess + 1e-3 * p;
            case "probability" -> p + 1e-3;
            default -> 0.5 * excess + 0.5 * p + 1e-3;
        };
    }
}
