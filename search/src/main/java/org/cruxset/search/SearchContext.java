package org.cruxset.search;

import java.time.Instant;
import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.SplittableRandom;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.EvaluationKey;
import org.cruxset.scoring.store.SearchRecords;

/**
 * What a strategy sees: the search part's scorer behind a budget and a clock, the collapse criterion, the intact
 * score, the search's seed, and the {@link Front} of what was found. Every set goes through {@link #score}, which
 * scores as much of a batch as the budget allows (the last batch is truncated to meet it exactly), records front
 * improvements in the store's anytime trace, and throws {@link StopSearch} when the budget or time is spent. Once the
 * time is spent it still replays sets the run had already paid for (they cost no time), so a resumed run with no time
 * left reports what it had found. Not thread-safe.
 */
public final class SearchContext {
    /** Told after every scored batch. */
    public interface Listener {
        void scored(SearchContext ctx);
    }

    private final ScoringSession session;
    private final LesionScorer scorer;
    private final CollapseCriterion criterion;
    private final SetScore intact;
    private final long seed;
    private final Front front;
    private final SearchRecords records;
    private final long startNanos = System.nanoTime();
    private final double elapsedBefore;
    private final double timeLimitSeconds;
    private final Instant deadline;
    private final Listener listener;
    private final Map<RegionSet, Long> certified = new HashMap<>();
    private final List<SearchRecords.TraceEntry> pendingTrace = new ArrayList<>();
    private final List<EarlierScore> wholeScores = new ArrayList<>();
    private LesionScorer.Racing racing;
    private long decisions;
    private long racedDecisions;
    private double charged;
    private int maxCorrect = Integer.MIN_VALUE;
    private double chargedAtBest = Double.NaN;
    private int tracePosition;
    private long lastSaveNanos = System.nanoTime();
    private int batches;
    private long batchedSets;
    private int largestBatch;
    private double reserve;

    /**
     * A context over {@code session}'s search part. {@code records} (nullable: no store) keep the trace;
     * {@code elapsedBefore} is search time spent in earlier sessions of the same run; {@code timeLimitSeconds}
     * (infinite: none) bounds the total search time; {@code deadline} (nullable) is a wall-clock end.
     */
    public SearchContext(ScoringSession session, long seed, SearchRecords records, double elapsedBefore,
                         double timeLimitSeconds, Instant deadline, Listener listener) {
        this.session = Objects.requireNonNull(session, "session");
        this.scorer = session.scorer();
        this.criterion = session.settings().criterion();
        this.intact = session.intact().score();
        this.seed = seed;
        this.front = new Front(scorer.inputs().batch().regions());
        this.records = records;
        this.elapsedBefore = elapsedBefore;
        this.timeLimitSeconds = timeLimitSeconds;
        this.deadline = deadline;
        this.listener = listener == null ? c -> { } : listener;
        this.charged = 1;
        front.offer(session.intact().set(), intact, false);
    }

    /** Number of regions (model inputs) a set is drawn from. */
    public int regions() {
        return scorer.inputs().batch().regions();
    }

    /** The empty set over the model's inputs. */
    public RegionSet empty() {
        return RegionSet.empty(regions());
    }

    /** The score of the intact decoder on the search part. */
    public SetScore intact() {
        return intact;
    }

    /**
     * The most correct samples a set may have on the search part and still be critical under the criterion (−1 when
     * none qualifies); the graded distance from criticality of a set is its correct samples above this.
     */
    public int maxCorrectWhenCritical() {
        if (maxCorrect == Integer.MIN_VALUE) {
            maxCorrect = criterion.criticalCount(intact.n(), intact.chance(), intact);
        }
        return maxCorrect;
    }

    /** Whether a score on the search part is critical. */
    public boolean critical(SetScore score) {
        return criterion.critical(score, intact);
    }

    /** The session (for names, parts and the store). */
    public ScoringSession session() {
        return session;
    }

    /** What was found so far. */
    public Front front() {
        return front;
    }

    /** A generator for one purpose of the strategy, split from the search seed by a fixed label. */
    public SplittableRandom random(String purpose) {
        return new SplittableRandom(seed * 0x9E3779B97F4A7C15L + purpose.hashCode());
    }

    /** Sets charged so far in this run, the intact set included (the same after a resume as without one). */
    public double charged() {
        return charged;
    }

    /** Sets charged when the best critical size was first reached (NaN when none was found). */
    public double chargedAtBest() {
        return chargedAtBest;
    }

    /**
     * Keeps {@code sets} scored sets of the budget back from what {@link #score} may spend (0: none): the share a
     * search run holds for the certificates it computes after its strategy.
     */
    public void reserve(double sets) {
        if (!(sets >= 0)) {
            throw new IllegalArgumentException("the reserve must be 0 or more, found " + sets);
        }
        this.reserve = sets;
    }

    /** The budget of scored sets, or infinity. */
    public double budgetLimit() {
        return scorer.budget().limit();
    }

    /** Search time over all sessions of this run, in seconds. */
    public double elapsedSeconds() {
        return elapsedBefore + (System.nanoTime() - startNanos) / 1e9;
    }

    /** Search time spent in earlier sessions of this run, in seconds. */
    public double elapsedBeforeSeconds() {
        return elapsedBefore;
    }

    /** Search time left, in seconds (infinite without a time limit; a deadline is not counted here). */
    public double secondsLeft() {
        return Math.max(0, timeLimitSeconds - elapsedSeconds());
    }

    /** Batches scored in this session. */
    public int batches() {
        return batches;
    }

    /** Sets asked for in this session's batches, stored, replayed or decoded alike. */
    public long batchedSets() {
        return batchedSets;
    }

    /** The largest batch asked for in this session. */
    public int largestBatch() {
        return largestBatch;
    }

    /** The underlying scorer (for counts of decoded, stored and replayed sets). */
    public LesionScorer scorer() {
        return scorer;
    }

    /**
     * Scores {@code sets} on the search part, in order. When the time is spent, sets this run already paid for are
     * still replayed (they cost no time: a resumed run replays them to its frontier) and the search then stops; when
     * the budget is spent, it stops after scoring the prefix that fits.
     */
    public List<LesionScorer.Scored> score(List<RegionSet> sets) {
        boolean late = beginBatch(sets.size());
        List<LesionScorer.Scored> scored = late ? scorer.scorePaid(sets) : scorer.scoreWithinBudget(sets, reserve);
        account(scored);
        endBatch(scored.size(), sets.size(), late);
        return scored;
    }

    /**
     * Races {@code sets} (see {@link LesionScorer#raceWithinBudget}) with the settings given to {@link #race}, or
     * scores them whole when racing is off: is each set critical on the whole search part? Fully scored sets go to the
     * front and the trace like {@link #score(List)}'s; raced verdicts do not (every reported set is fully scored).
     * Stops like {@link #score(List)} when the time or the budget is spent (after time, only progress already paid
     * for is used).
     */
    public List<LesionScorer.Raced> decideCritical(List<RegionSet> sets) {
        if (racing == null) {
            List<LesionScorer.Raced> out = new ArrayList<>(sets.size());
            for (LesionScorer.Scored s : score(sets)) {
                out.add(LesionScorer.Raced.of(s, critical(s.score())));
            }
            decisions += out.size();
            return out;
        }
        boolean late = beginBatch(sets.size());
        List<LesionScorer.Raced> raced = scorer.raceWithinBudget(sets, maxCorrectWhenCritical(), racing, keep(late));
        List<LesionScorer.Scored> exact = new ArrayList<>();
        for (LesionScorer.Raced r : raced) {
            decisions++;
            if (r.exact()) {
                exact.add(r.full());
            } else {
                racedDecisions++;
            }
            charge(r.charged());
        }
        account(exact);
        endBatch(raced.size(), sets.size(), late);
        return raced;
    }

    /**
     * Brings each of {@code sets} to look {@code look} of the racing order and returns their progress there (see
     * {@link LesionScorer#advanceWithinBudget}); sets completed on the way go to the front and the trace. Racing must
     * be on. Stops like {@link #decideCritical} when the time or the budget is spent.
     */
    public List<LesionScorer.Progress> advance(List<RegionSet> sets, int look) {
        if (racing == null) {
            throw new IllegalStateException("advance needs racing on");
        }
        boolean late = beginBatch(sets.size());
        List<LesionScorer.Progress> progress = scorer.advanceWithinBudget(sets, look, racing, keep(late));
        List<LesionScorer.Scored> exact = new ArrayList<>();
        for (LesionScorer.Progress p : progress) {
            if (p.complete()) {
                exact.add(p.full());
            }
            charge(p.charged());
        }
        account(exact);
        endBatch(progress.size(), sets.size(), late);
        return progress;
    }

    /** Counts a batch of {@code size} sets asked for; returns whether the time is already spent. */
    private boolean beginBatch(int size) {
        batchedSets += size;
        largestBatch = Math.max(largestBatch, size);
        return timeUp();
    }

    /** The budget to leave unspent: the reserve, or all of it once the time is spent (only paid progress is used). */
    private double keep(boolean late) {
        return late ? Double.POSITIVE_INFINITY : reserve;
    }

    private void charge(double spentWhenPaid) {
        if (!Double.isNaN(spentWhenPaid)) {
            charged = Math.max(charged, spentWhenPaid);
        }
    }

    /** Ends a batch that answered {@code got} of {@code asked} sets, stopping the search when it fell short. */
    private void endBatch(int got, int asked, boolean late) {
        batches++;
        if (!late) {
            listener.scored(this);
        }
        if (got < asked) {
            if (late) {
                throw new StopSearch(StopSearch.Reason.TIME, "the time limit was reached after "
                        + Math.round(elapsedSeconds()) + " s of search");
            }
            throw new StopSearch(StopSearch.Reason.BUDGET, reserve > 0
                    ? "the search's share of the budget of " + (long) scorer.budget().limit() + " scored sets is spent ("
                    + (long) reserve + " kept for certificates)"
                    : "the budget of " + (long) scorer.budget().limit() + " scored sets is spent");
        }
    }

    /** The number of looks of the racing order (racing must be on). */
    public int raceLooks() {
        return scorer.raceLooks(racing);
    }

    /** Races "critical or not" decisions with {@code settings} from now on (null: score every set whole). */
    public void race(LesionScorer.Racing settings) {
        this.racing = settings;
    }

    /** The racing settings, or null when sets are scored whole. */
    public LesionScorer.Racing racing() {
        return racing;
    }

    /** Critical-or-not decisions made, and how many of them were settled by a race before every sample was scored. */
    public long decisions() {
        return decisions;
    }

    /** See {@link #decisions()}. */
    public long racedDecisions() {
        return racedDecisions;
    }

    /** Scores one set (see {@link #score(List)}). */
    public LesionScorer.Scored score(RegionSet set) {
        return score(List.of(set)).get(0);
    }

    private boolean timeUp() {
        return elapsedSeconds() >= timeLimitSeconds || (deadline != null && !Instant.now().isBefore(deadline));
    }

    private void account(List<LesionScorer.Scored> scored) {
        for (LesionScorer.Scored s : scored) {
            if (!Double.isNaN(s.charged())) {
                charged = Math.max(charged, s.charged());
            }
        }
        Map<Integer, LesionScorer.Scored> improved = new HashMap<>();
        int bestBefore = front.bestCriticalSize();
        for (LesionScorer.Scored s : scored) {
            wholeScores.add(new EarlierScore(s.set(), s.score().correct(), s.score().meanTrueClassProbability()));
            boolean critical = s.set().size() > 0 && critical(s.score());
            if (front.offer(s.set(), s.score(), critical)) {
                improved.put(s.set().size(), s);
            }
        }
        if (front.bestCriticalSize() != bestBefore) {
            chargedAtBest = charged;
        }
        List<Integer> sizes = new ArrayList<>(improved.keySet());
        sizes.sort(null);
        for (int k : sizes) {
            LesionScorer.Scored s = improved.get(k);
            Front.Entry e = front.at(k);
            if (e.set().equals(s.set())) {
                pendingTrace.add(new SearchRecords.TraceEntry(tracePosition++, charged, elapsedSeconds(),
                        scorer.key(s.set()), k, e.critical()));
            }
        }
        save(false);
    }

    /** Writes the pending trace and the time spent (at most once a second unless {@code force}). */
    void save(boolean force) {
        if (records == null) {
            pendingTrace.clear();
            return;
        }
        long now = System.nanoTime();
        if (force || now - lastSaveNanos >= 1_000_000_000L) {
            records.progress(List.copyOf(pendingTrace), elapsedSeconds());
            pendingTrace.clear();
            lastSaveNanos = now;
        }
    }

    /**
     * Records that {@code set} is critical and irreducible: none of {@code subsets} (every one-region-smaller subset,
     * already scored) is critical. Returns the certificate's id (0 without a store).
     */
    public long certifyIrreducible(RegionSet set, List<RegionSet> subsets) {
        long id = 0;
        if (records != null) {
            List<EvaluationKey> keys = new ArrayList<>();
            for (RegionSet s : subsets) {
                keys.add(scorer.key(s));
            }
            save(true);
            id = records.certificate(new SearchRecords.Certificate("irreducible", scorer.key(set), null, null, true,
                    keys));
        }
        certified.put(set, id);
        return id;
    }

    /** Records that no set of size at most {@code maxSize} within {@code pool} is critical; returns its id. */
    public long certifyExhaustive(RegionSet pool, int maxSize) {
        if (records == null) {
            return 0;
        }
        save(true);
        return records.certificate(new SearchRecords.Certificate("exhaustive", null,
                EvaluationKey.setHex(pool), maxSize, true, List.of()));
    }

    /**
     * The search-part scores that earlier runs on the same model, data, preprocessing, lesion mode and mode seed left
     * in the store (empty without a store), in the order they were stored, as sets over this run's regions with their
     * correct samples and mean true-class probability: training data for a surrogate that costs this run nothing.
     */
    public List<EarlierScore> earlierScores() {
        if (session.store() == null || session.run() == null) {
            return List.of();
        }
        List<EarlierScore> out = new ArrayList<>();
        for (org.cruxset.scoring.store.ResultsStore.EarlierScore e : session.store().earlierScores(session.run(),
                scorer.key(empty()))) {
            if (e.universe() == regions() && e.n() == intact.n()) {
                out.add(new EarlierScore(EvaluationKey.parseSetHex(e.setHex(), e.universe()), e.correct(),
                        e.meanTrueProbability()));
            }
        }
        return out;
    }

    /**
     * The exhaustive certificates earlier runs in this scoring context recorded under this run's criterion (empty
     * without a store), each as the pool of model inputs searched and the largest size ruled out.
     */
    public List<ExhaustiveProof> earlierExhaustiveCertificates() {
        if (session.store() == null || session.run() == null) {
            return List.of();
        }
        List<ExhaustiveProof> out = new ArrayList<>();
        for (org.cruxset.scoring.store.ResultsStore.ExhaustiveCertificate e : session.store().exhaustiveCertificates(
                session.run(), scorer.key(empty()), session.settings().criterion().label())) {
            out.add(new ExhaustiveProof(e.runId(), EvaluationKey.parseSetHex(e.poolHex(), regions()), e.maxSize()));
        }
        return out;
    }

    /** An earlier run's proof that no set of at most {@code maxSize} regions within {@code pool} is critical. */
    public record ExhaustiveProof(long runId, RegionSet pool, int maxSize) {
    }

    /**
     * The search-part sets this run has scored whole so far (a resumed run's replay included), in the order scored,
     * with their correct samples and mean true-class probability: e.g. the ranking and prefix a strategy scored before
     * its own batches.
     */
    public List<EarlierScore> wholeScores() {
        return Collections.unmodifiableList(wholeScores);
    }

    /** A score of a set on this run's search part (an earlier run's, or this run's own). */
    public record EarlierScore(RegionSet set, int correct, double meanTrueProbability) {
    }

    /** Records a surrogate fit in the store (nothing without one; a resumed run's replay writes nothing twice). */
    public void recordFit(String purpose, int fit, int trainingSets, String model, double seconds) {
        if (records != null) {
            records.surrogateFit(purpose, fit, trainingSets, model, seconds);
        }
    }

    /** Records how fit {@code fit} predicted the batch scored after it. */
    public void recordFitQuality(String purpose, int fit, int sets, double r2, double spearman, double coverage) {
        if (records != null) {
            records.surrogateQuality(purpose, fit, sets, r2, spearman, coverage);
        }
    }

    /** Records skipped sets in the store's skip log (positions already stored are ignored). */
    public void recordSkips(List<SearchRecords.Skip> skips) {
        if (records != null) {
            records.skips(skips);
        }
    }

    /** Whether {@code set} carries an irreducibility certificate from this run. */
    public boolean isCertified(RegionSet set) {
        return certified.containsKey(set);
    }

    /** The id of {@code set}'s irreducibility certificate, or null. */
    public Long certificateOf(RegionSet set) {
        return certified.get(set);
    }
}
