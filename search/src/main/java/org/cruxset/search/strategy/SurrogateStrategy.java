package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.Strategy;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.SingleLesion;
import org.cruxset.surrogate.Annealing;
import org.cruxset.surrogate.SurrogateModel;

/**
 * Surrogate-assisted search (BOCS-style, Baptista &amp; Poloczek 2018): rounds of fit a model of the signed margin
 * from criticality ({@link Grading#margin}: negative exactly for critical sets) on every set scored so far → minimise
 * an acquisition over sets on the model alone → score only the few best candidates with the decoder.
 *
 * <p><b>Where it searches.</b> 2^N sets cannot be modelled evenly, so the search runs within a <em>space</em>: the
 * ranking's critical superset (single lesions on the search part, or a given ranking: its first
 * {@code supersetFactor} × k regions, k the length of its smallest critical prefix, as {@code genetic} and
 * {@code local} start from) together with the ranking's first {@code pool} regions; regions outside the space stay
 * intact. The notes of a run say which space it was.
 *
 * <p><b>Acquisition.</b> λ|x| + max(0, f(x)), with f a posterior draw of the model (Thompson sampling: one draw per
 * candidate) or the lower confidence bound mean − κ·sd ({@code lcb}): the size of the set, plus how far the model
 * says it is from critical; so its minimisers are the smallest sets the draw calls critical. Each candidate is the best
 * not-yet-scored set of a simulated-annealing chain of single-region flips, half of the chains from the smallest
 * critical set found so far, half from the superset (so a search that first came down into one inclusion-minimal set
 * keeps looking for others). The first round scores {@code initial} variants of the superset (each region kept with
 * probability 0.9). Deterministic given the scores: a resumed run replays to the same point.
 */
public final class SurrogateStrategy implements Strategy {
    /** Settings, each with a default chosen on the search benchmark. */
    public record Settings(String model, String acquisition, int rounds, int candidates, double lambda, double kappa,
                           int initial, int pool, double supersetFactor, int pairPool, int burnIn, int trees,
                           int annealSteps, int window, boolean warmStart) {
        public Settings {
            if (!SurrogateFits.MODELS.contains(model)) {
                throw new IllegalArgumentException("model must be one of " + SurrogateFits.MODELS + ", found '" + model
                        + "'");
            }
            if (!acquisition.equals("thompson") && !acquisition.equals("lcb")) {
                throw new IllegalArgumentException("acquisition must be thompson or lcb, found '" + acquisition + "'");
            }
            if (rounds < 1 || candidates < 1 || initial < 1 || pool < 0 || pairPool < 0 || burnIn < 0 || trees < 2
                    || annealSteps < 1 || window < 0) {
                throw new IllegalArgumentException("rounds, candidates, initial, annealSteps must be at least 1, trees "
                        + "at least 2, pool, pairPool, burnIn, window at least 0");
            }
            if (!(lambda > 0) || !(kappa >= 0) || !(supersetFactor >= 1)) {
                throw new IllegalArgumentException("lambda must be positive, kappa at least 0, supersetFactor at least 1");
            }
        }

        /** The defaults. */
        public static Settings defaults() {
            return new Settings("forest", "thompson", 80, 8, 0.01, 2.0, 16, 0, 1.5, 12, 100, 50, 2000, 0, true);
        }

        String describe() {
            return String.format(Locale.ROOT, "model=%s, acquisition=%s%s, rounds=%d, candidates=%d, lambda=%s, "
                            + "initial=%d, pool=%d, supersetFactor=%s, pairPool=%d, burnIn=%d, trees=%d, annealSteps=%d, "
                            + "window=%d, warmStart=%s", model, acquisition, acquisition.equals("lcb") ? " (kappa " + kappa + ")" : "",
                    rounds, candidates, lambda, initial, pool, supersetFactor, pairPool, burnIn, trees, annealSteps,
                    window, warmStart);
        }
    }

    private final Settings settings;
    private final Ranking given;
    private final SurrogateFits fits;
    private String space = "not chosen yet";
    private int warmed;

    /** A surrogate search with {@code settings} within a space taken from {@code ranking} (single lesions when null). */
    public SurrogateStrategy(Settings settings, Ranking ranking) {
        this.settings = settings;
        this.given = ranking;
        this.fits = new SurrogateFits(settings.model(), settings.burnIn(), settings.trees(), "surrogate");
    }

    @Override
    public String name() {
        return "surrogate";
    }

    @Override
    public String settings() {
        return settings.describe() + ", ranking=" + (given == null ? SingleLesion.SOURCE : "given");
    }

    /** The ledger of the model fits. */
    public SurrogateFits fits() {
        return fits;
    }

    @Override
    public List<String> notes() {
        List<String> out = new ArrayList<>();
        out.add("Surrogate search space: " + space + "; " + (settings.warmStart() ? warmed + " sets within it scored "
                + "by earlier runs on the same model, data and lesion mode were used as training data (not charged)"
                : "earlier runs' scores not used (warmStart false)") + ".");
        out.addAll(fits.notes());
        return out;
    }

    @Override
    public void run(SearchContext ctx) {
        RankedPool ranked = RankedPool.of(ctx, given, settings.pool(), 0);
        RegionSet superset = ranked.criticalSuperset(ctx, settings.supersetFactor());
        LinkedHashSet<Integer> chosen = new LinkedHashSet<>();
        List<Integer> order = ranked.order();
        for (int p : order) {
            if (superset != null && superset.contains(p)) {
                chosen.add(p);
            }
        }
        int supersetSize = chosen.size();
        for (int i = 0; i < Math.min(settings.pool(), order.size()); i++) {
            chosen.add(order.get(i));
        }
        if (chosen.isEmpty()) {
            space = "none: no prefix of the ranking is critical and the pool is empty (set pool above 0)";
            return;
        }
        int[] spaceToInput = chosen.stream().mapToInt(Integer::intValue).toArray();
        int d = spaceToInput.length;
        space = String.format(Locale.ROOT, "%d regions: %s%s (regions outside it stay intact)", d,
                superset == null ? "no prefix of the ranking is critical"
                        : "the critical superset of the " + (given == null ? "single-lesion ranking" : "given ranking")
                        + " (" + supersetSize + " regions: " + settings.supersetFactor() + " × its smallest critical "
                        + "prefix)",
                settings.pool() > 0 ? " and its first " + settings.pool() + " regions" : "");
        if (settings.model().equals("quadratic")) {
            space += "; pair terms of the quadratic model among the space's first " + Math.min(settings.pairPool(), d)
                    + " regions in ranking order";
        }
        int[] pairPool = new int[Math.min(settings.pairPool(), d)];
        for (int i = 0; i < pairPool.length; i++) {
            pairPool[i] = i;
        }
        SplittableRandom rng = ctx.random("surrogate");
        List<RegionSet> seen = new ArrayList<>();
        List<Double> y = new ArrayList<>();
        Set<RegionSet> done = new HashSet<>();
        RegionSet start = RegionSet.empty(d);
        for (int i = 0; i < supersetSize; i++) {
            start = start.with(i);
        }
        if (superset == null) {
            start = RegionSet.all(d);
        }
        int[] inputToSpace = new int[ctx.regions()];
        java.util.Arrays.fill(inputToSpace, -1);
        for (int i = 0; i < d; i++) {
            inputToSpace[spaceToInput[i]] = i;
        }
        int warm = 0;
        if (settings.warmStart()) {
            for (SearchContext.EarlierScore e : ctx.earlierScores()) {
                RegionSet inSpace = RegionSet.empty(d);
                boolean inside = e.set().size() > 0;
                for (int p : e.set().positions()) {
                    inside &= inputToSpace[p] >= 0;
                    if (inside) {
                        inSpace = inSpace.with(inputToSpace[p]);
                    }
                }
                if (inside && done.add(inSpace)) {
                    seen.add(inSpace);
                    y.add(Grading.margin(ctx, e));
                    warm++;
                }
            }
        }
        warmed = warm;
        List<RegionSet> first = new ArrayList<>();
        if (done.add(start)) {
            first.add(start);
        }
        for (int i = 0; i < settings.initial() * 20 && first.size() < settings.initial(); i++) {
            RegionSet v = RegionSet.empty(d);
            for (int p : start.positions()) {
                if (rng.nextDouble() < 0.9) {
                    v = v.with(p);
                }
            }
            if (v.size() > 0 && done.add(v)) {
                first.add(v);
            }
        }
        score(ctx, first, spaceToInput, seen, y);
        if (seen.isEmpty()) {
            return;
        }
        for (int round = 0; round < settings.rounds(); round++) {
            List<RegionSet> train = settings.window() > 0 && seen.size() > settings.window()
                    ? seen.subList(seen.size() - settings.window(), seen.size()) : seen;
            double[] ty = y.subList(y.size() - train.size(), y.size()).stream().mapToDouble(Double::doubleValue)
                    .toArray();
            SurrogateModel model = fits.fit(ctx, d, pairPool, new ArrayList<>(train), ty, rng.nextLong());
            RegionSet incumbent = incumbent(seen, y, start);
            List<RegionSet> batch = new ArrayList<>();
            for (int c = 0; c < settings.candidates(); c++) {
                RegionSet from = c % 2 == 0 ? incumbent : start;
                RegionSet next = anneal(model, c + round * settings.candidates(), from, done, rng);
                if (next != null && done.add(next)) {
                    batch.add(next);
                }
            }
            if (batch.isEmpty()) {
                return;
            }
            SurrogateModel.Prediction predicted = model.predict(batch);
            double[] actual = score(ctx, batch, spaceToInput, seen, y);
            fits.quality(ctx, predicted, actual);
        }
    }

    /** Scores {@code batch} (space sets) through the context and appends them and their margins; returns the margins. */
    private static double[] score(SearchContext ctx, List<RegionSet> batch, int[] spaceToInput, List<RegionSet> seen,
                                  List<Double> y) {
        List<RegionSet> inputs = new ArrayList<>(batch.size());
        for (RegionSet s : batch) {
            RegionSet in = ctx.empty();
            for (int p : s.positions()) {
                in = in.with(spaceToInput[p]);
            }
            inputs.add(in);
        }
        List<Grading.Measured> measured = Grading.measure(ctx, inputs);
        double[] out = new double[batch.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = Grading.margin(ctx, measured.get(i));
            seen.add(batch.get(i));
            y.add(out[i]);
        }
        return out;
    }

    /** The smallest critical set scored (lowest margin among equals), or {@code start} when none is critical. */
    private static RegionSet incumbent(List<RegionSet> seen, List<Double> y, RegionSet start) {
        RegionSet best = null;
        double bestMargin = 0;
        for (int i = 0; i < seen.size(); i++) {
            RegionSet s = seen.get(i);
            if (y.get(i) < 0 && s.size() > 0 && (best == null || s.size() < best.size()
                    || s.size() == best.size() && y.get(i) < bestMargin)) {
                best = s;
                bestMargin = y.get(i);
            }
        }
        return best == null ? start : best;
    }

    private double acquisition(SurrogateModel model, int draw, RegionSet s) {
        List<RegionSet> one = List.of(s);
        double f;
        if (settings.acquisition().equals("thompson")) {
            f = model.draw(one, draw)[0];
        } else {
            SurrogateModel.Prediction p = model.predict(one);
            f = p.mean()[0] - settings.kappa() * p.sd()[0];
        }
        return settings.lambda() * s.size() + Math.max(0, f);
    }

    /** Simulated annealing from {@code start} ({@link Annealing}); the best set not yet scored, or null. */
    private RegionSet anneal(SurrogateModel model, int draw, RegionSet start, Set<RegionSet> done,
                             SplittableRandom rng) {
        return Annealing.bestUnseen(start, s -> acquisition(model, draw, s), settings.annealSteps(),
                4 * settings.lambda(), 1e-2, done, false, rng);
    }
}
