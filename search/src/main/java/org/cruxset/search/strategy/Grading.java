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
     * What is known of one set of a batch after {@link #measure}: its whole score, or (raced, not critical) the
     * correct samples and true-class probability sum over the {@code samples} scored so far.
     */
    public record Measured(RegionSet set, SetScore whole, int correct, int samples, double probabilitySum) {
        /** The estimated share of correct samples of the whole search part. */
        public double correctShare() {
            return whole != null ? (double) whole.correct() / whole.n() : (double) correct / samples;
        }

        /** The estimated mean true-class probability. */
        public double meanProbability() {
            return whole != null ? whole.meanTrueClassProbability() : probabilitySum / samples;
        }
    }

    /**
     * Scores {@code batch}: whole, or with racing on, whole for the sets a race says may be critical and as far as the
     * race went for the rest (critical sets, the only ones a search reports, are always scored whole).
     */
    public static List<Measured> measure(SearchContext ctx, List<RegionSet> batch) {
        List<Measured> out = new ArrayList<>(batch.size());
        if (ctx.racing() == null) {
            for (LesionScorer.Scored s : ctx.score(batch)) {
                out.add(new Measured(s.set(), s.score(), 0, 0, 0));
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
        for (LesionScorer.Raced r : raced) {
            SetScore s = r.exact() ? r.full().score() : whole.get(r.set());
            out.add(s != null ? new Measured(r.set(), s, 0, 0, 0)
                    : new Measured(r.set(), null, r.correct(), r.samples(), r.probabilitySum()));
        }
        return out;
    }

    /** The graded distances of {@code batch} (see {@link #measure}). */
    public double[] grades(SearchContext ctx, List<RegionSet> batch) {
        List<Measured> measured = measure(ctx, batch);
        double[] out = new double[batch.size()];
        for (int j = 0; j < out.length; j++) {
            out[j] = grade(ctx, measured.get(j));
        }
        return out;
    }

    /** The graded distance of an earlier run's score (see {@link SearchContext#earlierScores}). */
    public double grade(SearchContext ctx, SearchContext.EarlierScore e) {
        int limit = ctx.maxCorrectWhenCritical();
        if (e.set().size() > 0 && e.correct() <= limit) {
            return 0;
        }
        return graded(Math.max(0, e.correct() - limit) / (double) ctx.intact().n(), e.meanTrueProbability());
    }

    /** The signed margin of an earlier run's score (see {@link #margin(SearchContext, Measured)}). */
    public static double margin(SearchContext ctx, SearchContext.EarlierScore e) {
        int n = ctx.intact().n();
        double m = (e.correct() - ctx.maxCorrectWhenCritical() - 0.5) / n;
        return e.correct() <= ctx.maxCorrectWhenCritical() ? Math.min(-0.5 / n, m) : Math.max(0.5 / n, m);
    }

    /** The graded distance of a measured set (from its whole score when it has one). */
    public double grade(SearchContext ctx, Measured m) {
        if (m.whole() != null) {
            return grade(ctx, m.whole(), m.set().size());
        }
        int n = ctx.intact().n();
        double excess = Math.max(0, m.correctShare() * n - ctx.maxCorrectWhenCritical()) / n;
        return graded(excess, m.meanProbability());
    }

    /**
     * The signed margin of a measured set from the criterion's limit, in shares of the search part's samples:
     * (correct − limit − ½) / n, negative exactly when the set is critical (estimated from the raced samples when the
     * set was not scored whole).
     */
    public static double margin(SearchContext ctx, Measured m) {
        int n = ctx.intact().n();
        if (m.whole() != null && m.set().size() > 0 && ctx.critical(m.whole())) {
            return Math.min(-0.5 / n, (m.whole().correct() - ctx.maxCorrectWhenCritical() - 0.5) / n);
        }
        return Math.max(0.5 / n, (m.correctShare() * n - ctx.maxCorrectWhenCritical() - 0.5) / n);
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
