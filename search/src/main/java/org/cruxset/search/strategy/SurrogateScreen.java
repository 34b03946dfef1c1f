package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.BetaDistribution;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.EvaluationKey;
import org.cruxset.scoring.store.SearchRecords;
import org.cruxset.search.SearchContext;
import org.cruxset.surrogate.SurrogateModel;

/**
 * Screening of a strategy's candidates by a surrogate of their graded distance from criticality ({@link Grading}: 0
 * exactly for critical sets). Two kinds of candidate are not sent to the decoder:
 * <ul>
 * <li><em>not critical</em>: its lower predictive bound, mean − z·sd, lies above half the smallest non-critical grade
 * seen and above the model's prediction of every critical set it was trained on. It gets its predicted grade (never
 * below that smallest non-critical grade, so it can never pass for critical).</li>
 * <li><em>dominated</em> (genetic search, unless {@code dominated} is off): it is larger than a critical set already
 * scored, so whatever its score it cannot enter the front of size against distance from criticality, nor be a
 * smallest critical set; after {@link #restarted()}, only if it also contains a critical set this run scored or its
 * predicted grade is under half the smallest non-critical grade. It gets its predicted grade (never below 0), which
 * keeps its place among the other dominated candidates of a population. Under racing a critical set is always scored
 * whole, so these are a search's dearest candidates. Local search never skips them (see {@code StrategySpec}).</li>
 * </ul>
 * A skipped candidate is flagged in the skip log of the store with its reason, and can never be reported: only scored
 * sets reach the front. A seeded share {@code spotCheck} of the not-critical skips is scored anyway; a check that finds
 * a critical set is a false skip, and the run's notes give the false-skip rate with its exact (Clopper–Pearson) 95%
 * interval. Dominated skips are not checked: a smaller critical set is known, so none of them can be a loss.
 *
 * <p>The model is fitted before every batch on the last {@code window} scored sets: the sets this run scored whole
 * before its first batch (its ranking and prefix), then its screened batches, after the sets earlier runs left in the
 * store when {@code warmStart} (none is skipped before {@code warmup} sets were seen), over the regions whose lesion
 * varies among them; a candidate that lesions a region never lesioned there, or spares one always lesioned there, is
 * outside what the model has seen and is always scored.
 * Deterministic given the scores: a resumed run refits, skips and checks the same sets.
 */
public final class SurrogateScreen {
    /** Settings of a screen. */
    public record Settings(String model, double z, int warmup, int window, double spotCheck, int pairPool, int burnIn,
                           int trees, boolean warmStart, boolean dominated) {
        public Settings {
            if (!SurrogateFits.MODELS.contains(model)) {
                throw new IllegalArgumentException("screen model must be one of " + SurrogateFits.MODELS + ", found '"
                        + model + "'");
            }
            if (!(z > 0) || warmup < 1 || window < 10 || !(spotCheck >= 0 && spotCheck <= 1) || pairPool < 0
                    || burnIn < 0 || trees < 2) {
                throw new IllegalArgumentException("screen: z must be positive, warmup at least 1, window at least 10, "
                        + "spotCheck within [0, 1], pairPool and burnIn at least 0, trees at least 2");
            }
        }

        /** The defaults. */
        public static Settings defaults() {
            return new Settings("additive", 2.0, 100, 1500, 0.05, 0, 100, 30, true, true);
        }

        /** These settings with dominated skips on or off. */
        public Settings withDominated(boolean on) {
            return new Settings(model, z, warmup, window, spotCheck, pairPool, burnIn, trees, warmStart, on);
        }

        String describe() {
            return String.format(Locale.ROOT, "screen model=%s, z=%s, warmup=%d, window=%d, spotCheck=%s, warmStart=%s, "
                    + "dominated=%s", model, z, warmup, window, spotCheck, warmStart, dominated);
        }
    }

    private final Settings settings;
    private final SurrogateFits fits;
    private final List<RegionSet> seen = new ArrayList<>();
    private final List<Double> grades = new ArrayList<>();
    private SplittableRandom rng;
    private long candidates;
    private long skipped;
    private long checked;
    private long falseSkips;
    private long dominatedSkips;
    private long unseen;
    private int position;
    private int warmed;
    private int before;
    /** The minimal ones among the critical sets this run scored whole, and how many whole scores were read. */
    private final List<RegionSet> criticalSets = new ArrayList<>();
    private int wholeRead;
    private boolean restarted;

    /** A screen with {@code settings}. */
    public SurrogateScreen(Settings settings) {
        this.settings = settings;
        this.fits = new SurrogateFits(settings.model(), settings.burnIn(), settings.trees(), "screen");
    }

    /** The settings in one line. */
    public String describe() {
        return settings.describe();
    }

    /**
     * The graded distances of {@code batch}, scoring through the context only the candidates the screen does not skip
     * (and the spot checks).
     */
    public double[] grades(SearchContext ctx, Grading grading, List<RegionSet> batch) {
        if (rng == null) {
            rng = ctx.random("screen");
            if (settings.warmStart()) {
                for (SearchContext.EarlierScore e : ctx.earlierScores()) {
                    if (e.set().size() > 0) {
                        seen.add(e.set());
                        grades.add(grading.grade(ctx, e));
                        warmed++;
                    }
                }
            }
            for (SearchContext.EarlierScore e : List.copyOf(ctx.wholeScores())) {
                if (e.set().size() > 0) {
                    seen.add(e.set());
                    grades.add(grading.grade(ctx, e));
                    before++;
                }
            }
        }
        candidates += batch.size();
        if (seen.size() < settings.warmup()) {
            double[] g = grading.grades(ctx, batch);
            remember(batch, g);
            return g;
        }
        int from = Math.max(0, seen.size() - settings.window());
        List<RegionSet> window = seen.subList(from, seen.size());
        int n = ctx.regions();
        int[] count = new int[n];
        double floor = Double.POSITIVE_INFINITY;
        for (int i = 0; i < window.size(); i++) {
            for (int p : window.get(i).positions()) {
                count[p]++;
            }
            double g = grades.get(from + i);
            if (g > 0) {
                floor = Math.min(floor, g);
            }
        }
        if (floor == Double.POSITIVE_INFINITY) {
            double[] g = grading.grades(ctx, batch);
            remember(batch, g);
            return g;
        }
        int[] toSpace = new int[n];
        int d = 0;
        for (int p = 0; p < n; p++) {
            toSpace[p] = count[p] > 0 && count[p] < window.size() ? d++ : -1;
        }
        if (d == 0) {
            double[] g = grading.grades(ctx, batch);
            remember(batch, g);
            return g;
        }
        List<RegionSet> train = new ArrayList<>(window.size());
        for (RegionSet s : window) {
            train.add(project(s, toSpace, d));
        }
        double[] ty = grades.subList(from, seen.size()).stream().mapToDouble(Double::doubleValue).toArray();
        int[] pairPool = mostVaried(count, window.size(), toSpace, settings.pairPool());
        SurrogateModel model = fits.fit(ctx, d, pairPool, train, ty, rng.nextLong());
        // Skip only what the model places above every critical set it was trained on, and clearly above zero.
        List<RegionSet> criticalSeen = new ArrayList<>();
        for (int i = 0; i < train.size(); i++) {
            if (ty[i] == 0) {
                criticalSeen.add(train.get(i));
            }
        }
        double threshold = floor / 2;
        if (!criticalSeen.isEmpty()) {
            for (double v : model.predict(criticalSeen).mean()) {
                threshold = Math.max(threshold, v);
            }
        }
        List<RegionSet> projected = new ArrayList<>();
        List<Integer> modelled = new ArrayList<>();
        for (int i = 0; i < batch.size(); i++) {
            if (inside(batch.get(i), count, window.size())) {
                projected.add(project(batch.get(i), toSpace, d));
                modelled.add(i);
            } else {
                unseen++;
            }
        }
        int bestCritical = settings.dominated() ? ctx.front().bestCriticalSize() : -1;
        if (settings.dominated()) {
            readCritical(ctx, grading);
        }
        double[] mean = new double[batch.size()];
        double[] sd = new double[batch.size()];
        boolean[] notCritical = new boolean[batch.size()];
        boolean[] skip = new boolean[batch.size()];
        boolean[] check = new boolean[batch.size()];
        if (!projected.isEmpty()) {
            SurrogateModel.Prediction p = model.predict(projected);
            for (int j = 0; j < modelled.size(); j++) {
                int i = modelled.get(j);
                mean[i] = p.mean()[j];
                sd[i] = p.sd()[j];
                notCritical[i] = mean[i] - settings.z() * sd[i] > threshold;
                skip[i] = notCritical[i] || bestCritical > 0 && batch.get(i).size() > bestCritical
                        && (!restarted || containsCritical(batch.get(i)) || mean[i] < floor / 2);
                check[i] = notCritical[i] && rng.nextDouble() < settings.spotCheck();
            }
        }
        List<RegionSet> toScore = new ArrayList<>();
        List<Integer> at = new ArrayList<>();
        for (int i = 0; i < batch.size(); i++) {
            if (!skip[i] || check[i]) {
                toScore.add(batch.get(i));
                at.add(i);
            }
        }
        List<Grading.Measured> measured = Grading.measure(ctx, toScore);
        double[] out = new double[batch.size()];
        double[] scoredGrades = new double[toScore.size()];
        double[] scoredMean = new double[toScore.size()];
        double[] scoredSd = new double[toScore.size()];
        boolean[] critical = new boolean[batch.size()];
        for (int j = 0; j < toScore.size(); j++) {
            int i = at.get(j);
            Grading.Measured m = measured.get(j);
            out[i] = grading.grade(ctx, m);
            critical[i] = m.whole() != null && m.set().size() > 0 && ctx.critical(m.whole());
            scoredGrades[j] = out[i];
            scoredMean[j] = mean[i];
            scoredSd[j] = sd[i];
        }
        remember(toScore, scoredGrades);
        List<SearchRecords.Skip> log = new ArrayList<>();
        for (int i = 0; i < batch.size(); i++) {
            if (!skip[i]) {
                continue;
            }
            skipped++;
            if (notCritical[i]) {
                checked += check[i] ? 1 : 0;
                falseSkips += check[i] && critical[i] ? 1 : 0;
            } else {
                dominatedSkips++;
            }
            if (!check[i]) {
                out[i] = Math.max(mean[i], notCritical[i] ? floor : 0);
            }
            RegionSet s = batch.get(i);
            String reason = notCritical[i] ? "not critical: lower bound above " + fmt(threshold)
                    + " (half the smallest non-critical grade, and every critical set's prediction)"
                    : "dominated: larger than a critical set of " + bestCritical + " regions already scored"
                    + (!restarted ? "" : containsCritical(s) ? ", and contains a critical set already scored"
                    : ", and predicted critical");
            log.add(new SearchRecords.Skip(position++, EvaluationKey.setHex(s), s.universe(), s.size(), mean[i], sd[i],
                    mean[i] - settings.z() * sd[i], reason, check[i], check[i] ? out[i] : null,
                    check[i] ? critical[i] : null));
        }
        ctx.recordSkips(log);
        if (!toScore.isEmpty()) {
            fits.quality(ctx, new SurrogateModel.Prediction(scoredMean, scoredSd), scoredGrades);
        }
        return out;
    }

    /**
     * Marks a restart of the search (a fresh population after a stall, to escape a trap): from now on a candidate
     * larger than the best critical set is skipped only when it contains a critical set this run scored or its
     * predicted grade is under half the smallest non-critical grade, since the way out of a trap can lead through
     * larger sets that are not critical.
     */
    public void restarted() {
        restarted = true;
    }

    /** Adds this run's newly scored critical sets to the minimal ones. */
    private void readCritical(SearchContext ctx, Grading grading) {
        List<SearchContext.EarlierScore> whole = ctx.wholeScores();
        for (; wholeRead < whole.size(); wholeRead++) {
            SearchContext.EarlierScore e = whole.get(wholeRead);
            if (e.set().size() == 0 || grading.grade(ctx, e) != 0 || containsCritical(e.set())
                    || criticalSets.contains(e.set())) {
                continue;
            }
            criticalSets.removeIf(c -> c.size() > e.set().size() && c.containsAll(e.set()));
            criticalSets.add(e.set());
        }
    }

    /** Whether {@code s} strictly contains a critical set this run scored. */
    private boolean containsCritical(RegionSet s) {
        for (RegionSet c : criticalSets) {
            if (c.size() < s.size() && s.containsAll(c)) {
                return true;
            }
        }
        return false;
    }

    private void remember(List<RegionSet> sets, double[] g) {
        for (int i = 0; i < sets.size(); i++) {
            seen.add(sets.get(i));
            grades.add(g[i]);
        }
    }

    /** Whether every bit of {@code s} takes a value seen among the window's sets. */
    private static boolean inside(RegionSet s, int[] count, int size) {
        for (int p = 0; p < count.length; p++) {
            boolean on = s.contains(p);
            if (on && count[p] == 0 || !on && count[p] == size) {
                return false;
            }
        }
        return true;
    }

    private static RegionSet project(RegionSet s, int[] toSpace, int d) {
        int[] pos = s.positions();
        int[] out = new int[pos.length];
        int k = 0;
        for (int p : pos) {
            if (toSpace[p] >= 0) {
                out[k++] = toSpace[p];
            }
        }
        return RegionSet.of(d, Arrays.copyOf(out, k));
    }

    /** The {@code m} varying positions (in space indices) whose share of lesioned sets is nearest one half. */
    private static int[] mostVaried(int[] count, int size, int[] toSpace, int m) {
        List<Integer> varying = new ArrayList<>();
        for (int p = 0; p < count.length; p++) {
            if (toSpace[p] >= 0) {
                varying.add(p);
            }
        }
        varying.sort((a, b) -> Double.compare(Math.abs(count[a] - size / 2.0), Math.abs(count[b] - size / 2.0)));
        int[] out = new int[Math.min(m, varying.size())];
        for (int i = 0; i < out.length; i++) {
            out[i] = toSpace[varying.get(i)];
        }
        Arrays.sort(out);
        return out;
    }

    /** Report lines: candidates, skips, spot checks and the false-skip rate, then the model's ledger. */
    public List<String> notes() {
        List<String> out = new ArrayList<>();
        out.add(String.format(Locale.ROOT, "Screen (%s): %d candidates, %d skipped without a decoder call (%.1f%%): %d "
                        + "predicted not critical, %d dominated (larger than a critical set already scored); %d always "
                        + "scored as outside what the model had seen. Training data besides the screened batches: %d sets "
                        + "this run scored before them (its ranking and prefix), %d sets of earlier runs.",
                settings.describe(), candidates, skipped, candidates == 0 ? 0.0 : 100.0 * skipped / candidates,
                skipped - dominatedSkips, dominatedSkips, unseen, before, warmed));
        out.add(String.format(Locale.ROOT, "Screen spot checks with the decoder: %d of the not-critical skips, %d of "
                        + "them critical (false skips): false-skip rate %s. Dominated skips are not spot-checked: a "
                        + "smaller critical set was already scored, so none can be a loss.", checked, falseSkips,
                checked == 0 ? "not measured (no spot check)" : String.format(Locale.ROOT, "%.3f (95%% %.3f-%.3f, "
                        + "Clopper-Pearson)", (double) falseSkips / checked, clopperLow(falseSkips, checked),
                        clopperHigh(falseSkips, checked))));
        if (settings.model().equals("quadratic")) {
            out.add("Screen model pair terms: among the " + settings.pairPool() + " regions lesioned in the share of the "
                    + "window's sets nearest one half (the most varied).");
        }
        out.addAll(fits.notes());
        return out;
    }

    /** The ledger of the model fits. */
    public SurrogateFits fits() {
        return fits;
    }

    /** Candidates, skips (both kinds), spot checks (of not-critical skips), false skips, dominated skips. */
    public long[] counts() {
        return new long[] {candidates, skipped, checked, falseSkips, dominatedSkips};
    }

    // Source: the Clopper-Pearson interval as Beta quantiles (common practice; Clopper & Pearson 1934).
    static double clopperLow(long k, long n) {
        return k == 0 ? 0 : new BetaDistribution(k, n - k + 1).inverseCumulativeProbability(0.025);
    }

    static double clopperHigh(long k, long n) {
        return k == n ? 1 : new BetaDistribution(k + 1, n - k).inverseCumulativeProbability(0.975);
    }

    private static String fmt(double v) {
        return String.format(Locale.ROOT, "%.4g", v);
    }
}
