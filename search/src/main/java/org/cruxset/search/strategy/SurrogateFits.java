package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import org.cruxset.search.SearchContext;
import org.cruxset.surrogate.AdditiveModel;
import org.cruxset.surrogate.ForestModel;
import org.cruxset.surrogate.QuadraticFeatures;
import org.cruxset.surrogate.Quality;
import org.cruxset.surrogate.SparseQuadraticModel;
import org.cruxset.surrogate.SurrogateModel;

/**
 * The surrogate models a strategy fits, and their ledger: which model, how many fits, the seconds they took apart from
 * decoder time, and how well each fit predicted the batch scored after it (held-out R², Spearman ρ, coverage of 95%
 * intervals, {@link Quality}). Every fit and its quality also go to the results store through the context.
 */
public final class SurrogateFits {
    /** The model kinds. */
    public static final List<String> MODELS = List.of("quadratic", "additive", "forest");

    private final String kind;
    private final int burnIn;
    private final int trees;
    private final String purpose;
    private final List<Quality> qualities = new ArrayList<>();
    private int fits;
    private double seconds;
    private int lastTraining;
    private String lastModel = "";

    /** Fits of {@code kind} (one of {@link #MODELS}) for {@code purpose} ("surrogate" or "screen"). */
    public SurrogateFits(String kind, int burnIn, int trees, String purpose) {
        if (!MODELS.contains(kind)) {
            throw new IllegalArgumentException("model must be one of " + MODELS + ", found '" + kind + "'");
        }
        this.kind = kind;
        this.burnIn = burnIn;
        this.trees = trees;
        this.purpose = purpose;
    }

    /**
     * A model of {@code kind} over {@code regions} positions, fitted on {@code sets} and {@code y}: the quadratic one
     * with pair terms among {@code pairPool}, kept draws 32 after {@code burnIn} sweeps; the forest with
     * {@code trees} trees.
     */
    public SurrogateModel fit(SearchContext ctx, int regions, int[] pairPool,
                              List<org.cruxset.scoring.lesion.RegionSet> sets, double[] y, long seed) {
        long t0 = System.nanoTime();
        SurrogateModel m = switch (kind) {
            case "quadratic" -> new SparseQuadraticModel(new QuadraticFeatures(regions, pairPool), burnIn, 32, seed);
            case "additive" -> new AdditiveModel(regions, 1.0);
            default -> new ForestModel(regions, trees, 8, 0.5, seed);
        };
        m.fit(sets, y);
        double s = (System.nanoTime() - t0) / 1e9;
        fits++;
        seconds += s;
        lastTraining = sets.size();
        lastModel = m.describe();
        ctx.recordFit(purpose, fits, sets.size(), lastModel, s);
        return m;
    }

    /** Records how the last fit predicted the batch scored after it. */
    public void quality(SearchContext ctx, SurrogateModel.Prediction predicted, double[] actual) {
        Quality q = Quality.of(predicted, actual);
        qualities.add(q);
        ctx.recordFitQuality(purpose, fits, q.sets(), q.r2(), q.spearman(), q.coverage());
    }

    /** For a progress bar: fits so far and the last batch's Spearman ρ and coverage ("" before the first fit). */
    public String progress() {
        if (fits == 0) {
            return "";
        }
        if (qualities.isEmpty()) {
            return String.format(Locale.ROOT, ", %d fits", fits);
        }
        Quality q = qualities.get(qualities.size() - 1);
        return String.format(Locale.ROOT, ", %d fits, last batch ρ %s, coverage %s", fits, fmt(q.spearman()),
                fmt(q.coverage()));
    }

    /** Fits so far. */
    public int fits() {
        return fits;
    }

    /** Seconds spent fitting. */
    public double seconds() {
        return seconds;
    }

    /** The qualities measured, one per scored batch after a fit. */
    public List<Quality> qualities() {
        return List.copyOf(qualities);
    }

    /** Report lines: the model, the fits and their cost, and the prediction quality (last and median). */
    public List<String> notes() {
        List<String> out = new ArrayList<>();
        if (fits == 0) {
            out.add(String.format(Locale.ROOT, "Surrogate (%s): no fit yet.", kind));
            return out;
        }
        out.add(String.format(Locale.ROOT, "%s model: %d fits in %.1f s (surrogate time, apart from decoder time); "
                + "last: %s.", purpose.equals("screen") ? "Screen" : "Surrogate", fits, seconds, lastModel));
        if (!qualities.isEmpty()) {
            Quality last = qualities.get(qualities.size() - 1);
            out.add(String.format(Locale.ROOT, "%s quality on each newest batch, predicted before it was scored "
                    + "(%d batches): held-out R² median %s (last %s), Spearman ρ median %s (last %s), 95%% interval "
                    + "coverage median %s (last %s).", purpose.equals("screen") ? "Screen model (on the candidates "
                    + "it sent to the decoder: not skipped, or spot-checked)" : "Surrogate", qualities.size(), fmt(median(Quality::r2)), fmt(last.r2()),
                    fmt(median(Quality::spearman)), fmt(last.spearman()), fmt(median(Quality::coverage)),
                    fmt(last.coverage())));
        }
        return out;
    }

    private double median(java.util.function.ToDoubleFunction<Quality> f) {
        double[] v = qualities.stream().mapToDouble(f).filter(x -> !Double.isNaN(x)).sorted().toArray();
        return org.cruxset.scoring.stats.ClusteredStats.quantile(v, 0.5);
    }

    private static String fmt(double v) {
        return Double.isNaN(v) ? "n/a" : String.format(Locale.ROOT, "%.2f", v);
    }

    /** The fits of a strategy that uses a surrogate (the surrogate strategy, or genetic with a screen), or null. */
    public static SurrogateFits of(org.cruxset.search.Strategy s) {
        if (s instanceof SurrogateStrategy st) {
            return st.fits();
        }
        if (s instanceof LocalStrategy l && l.screen() != null) {
            return l.screen().fits();
        }
        return s instanceof GeneticStrategy g && g.screen() != null ? g.screen().fits() : null;
    }

    /** The last training size. */
    public int lastTraining() {
        return lastTraining;
    }
}
