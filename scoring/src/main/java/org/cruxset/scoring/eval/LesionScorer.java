package org.cruxset.scoring.eval;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.HashSet;
import java.util.LinkedHashSet;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.EvaluationKey;
import org.cruxset.scoring.store.ResultsStore;

/**
 * The one scorer every strategy spends its budget through. It scores lesion sets (in model input positions) on
 * fixed held-out inputs under one lesion mode, keeps every score in the results store, and never pays twice: a set
 * this run already paid for is replayed free; a set another run stored is charged to this run's budget (so
 * strategies compare on equal budgets) but costs no decoder time; only the rest is decoded, in chunks that are
 * committed as they finish, so a killed run loses at most the chunk in flight. Not thread-safe; it parallelises
 * decoding itself. A batch is handled in time linear in its size, and memory stays bounded however many sets a run
 * scores (a size-capped cache in front of the store).
 *
 * <p>Each set costs {@code costPerSet} of the budget unit: 1 for the search part (the unit is one set scored on all
 * of its samples), 0 for the confirmation part, whose scores are reported beside the search but never charged.
 */
public final class LesionScorer {
    /** Where a score came from. */
    public enum Source {
        /** Decoded now. */
        DECODED,
        /** Found in the store, made by another run: charged, no decoder time. */
        STORED,
        /** Already paid for by this run (earlier in it, or before a resume): free. */
        REPLAYED
    }

    /**
     * A scored set: its score and outcomes, where the score came from, and {@code charged}, the run's budget spent
     * once it paid for this set (the same after a resume; counted in memory when there is no store).
     */
    public record Scored(RegionSet set, SetScore score, Outcomes outcomes, Source source, double charged) {
    }

    private final Decoder decoder;
    private final Decoder.Bound bound;
    private final ModelInputs inputs;
    private final String modelHash;
    private final String dataHash;
    private final String preprocessing;
    private final LesionMode mode;
    private final long modeSeed;
    private final LesionFill fill;
    private final ResultsStore store;
    private final ResultsStore.Run run;
    private final Budget budget;
    private final double costPerSet;
    private final int threads;
    private final int chunk;
    private final java.util.function.IntFunction<String> regionName;
    private final Map<RegionSet, Scored> memo;
    private int decoded;
    private long decodedSamples;
    private long decodeNanos;
    private int stored;
    private int replayed;

    /**
     * A scorer of {@code decoder} on {@code inputs}. {@code store} and {@code run} may both be null (no persistence);
     * {@code costPerSet} (0 or more) is what one set is charged to {@code budget} and recorded as in the store;
     * {@code regionName} names a model input for the store's human-readable columns.
     */
    public LesionScorer(Decoder decoder, ModelInputs inputs, LesionMode mode, long modeSeed, LesionFill fill,
                        ResultsStore store, ResultsStore.Run run, Budget budget, double costPerSet, int threads,
                        java.util.function.IntFunction<String> regionName) {
        this.decoder = Objects.requireNonNull(decoder, "decoder");
        this.inputs = Objects.requireNonNull(inputs, "inputs");
        this.bound = decoder.bind(inputs.batch());
        this.modelHash = decoder.card().modelHash();
        this.dataHash = DataHash.of(inputs);
        this.preprocessing = decoder.card().preprocessing().label();
        this.mode = Objects.requireNonNull(mode, "mode");
        this.modeSeed = modeSeed;
        this.fill = Objects.requireNonNull(fill, "fill");
        if ((store == null) != (run == null)) {
            throw new IllegalArgumentException("store and run must both be given or both be null");
        }
        this.store = store;
        this.run = run;
        this.budget = Objects.requireNonNull(budget, "budget");
        if (!(costPerSet >= 0) || Double.isInfinite(costPerSet)) {
            throw new IllegalArgumentException("costPerSet must be finite and at least 0, found " + costPerSet);
        }
        this.costPerSet = costPerSet;
        this.threads = threads;
        this.chunk = decoder.setsPerCall(threads);
        this.regionName = Objects.requireNonNull(regionName, "regionName");
        this.memo = store == null ? new HashMap<>() : boundedCache(inputs.size());
        this.races = store == null ? new HashMap<>() : boundedRaces(inputs.size());
        if (store != null) {
            store.registerDataset(dataHash, inputs);
        }
    }

    /** Megabytes of recent scores kept in memory in front of the store (system property cruxset.scoreCacheMB). */
    public static final int CACHE_MB = Integer.getInteger("cruxset.scoreCacheMB", 64);

    /**
     * A least-recently-used cache of scores sized to {@link #CACHE_MB}: with a store behind it, memory does not grow
     * with the number of sets scored (an evicted set is found again in the store, already paid). Without a store every
     * score is kept, since memory is then the only record of what was paid.
     */
    private static Map<RegionSet, Scored> boundedCache(int samples) {
        long perEntry = 8L * samples + 400;
        int max = (int) Math.max(1024, Math.min(Integer.MAX_VALUE, CACHE_MB * 1024L * 1024L / perEntry));
        return new LinkedHashMap<>(1024, 0.75f, true) {
            private static final long serialVersionUID = 1L;

            @Override
            protected boolean removeEldestEntry(Map.Entry<RegionSet, Scored> eldest) {
                return size() > max;
            }
        };
    }

    /** An LRU cache of racing progress sized to {@link #CACHE_MB}, for scorers with a store behind them. */
    private static Map<RegionSet, RaceState> boundedRaces(int samples) {
        long perEntry = 9L * samples + 400;
        int max = (int) Math.max(1024, Math.min(Integer.MAX_VALUE, CACHE_MB * 1024L * 1024L / perEntry));
        return new LinkedHashMap<>(1024, 0.75f, true) {
            private static final long serialVersionUID = 1L;

            @Override
            protected boolean removeEldestEntry(Map.Entry<RegionSet, RaceState> eldest) {
                return size() > max;
            }
        };
    }

    /** The key of a set under this scorer's model, data and mode. */
    public EvaluationKey key(RegionSet set) {
        return new EvaluationKey(modelHash, dataHash, preprocessing, mode, modeSeed, set);
    }

    /** SHA-256 of the scored data. */
    public String dataHash() {
        return dataHash;
    }

    /** The scored inputs. */
    public ModelInputs inputs() {
        return inputs;
    }

    public Budget budget() {
        return budget;
    }

    /** Sets decoded by this scorer. */
    public int decodedCount() {
        return decoded;
    }

    /** Sample-evaluations decoded by this scorer (whole sets and raced chunks alike). */
    public long decodedSamples() {
        return decodedSamples;
    }

    /** Seconds spent in the decoder's passes by this scorer (whole sets and raced chunks alike). */
    public double decodeSeconds() {
        return decodeNanos / 1e9;
    }

    /** Sets found in the store from other runs. */
    public int storedCount() {
        return stored;
    }

    /** Sets this run had already paid for. */
    public int replayedCount() {
        return replayed;
    }

    /** Scores one set. */
    public Scored score(RegionSet set) {
        return score(List.of(set)).get(0);
    }

    /** What lesioned regions are replaced with on this scorer's inputs. */
    public org.cruxset.scoring.decoder.LesionFill fill() {
        return fill;
    }

    /**
     * Scores {@code sets} (in order; duplicates allowed); fails before decoding anything when the sets this run has
     * not yet paid for do not fit the budget.
     */
    public List<Scored> score(List<RegionSet> sets) {
        return score(sets, false, budget.remaining());
    }

    /**
     * Scores the longest prefix of {@code sets} whose sets not yet paid for fit the budget, and returns the scores
     * of that prefix (all of {@code sets} when they fit): how a search meets its budget exactly.
     */
    public List<Scored> scoreWithinBudget(List<RegionSet> sets) {
        return scoreWithinBudget(sets, 0);
    }

    /**
     * As {@link #scoreWithinBudget(List)}, leaving {@code keep} scored sets of the budget unspent (for a later phase
     * of the same run).
     */
    public List<Scored> scoreWithinBudget(List<RegionSet> sets, double keep) {
        return score(sets, true, available(keep));
    }

    /** What the budget allows beyond leaving {@code keep} unspent (0 when {@code keep} is all of it, even unlimited). */
    private double available(double keep) {
        double remaining = budget.remaining();
        return keep >= remaining ? 0 : remaining - keep;
    }

    /**
     * Returns the longest prefix of {@code sets} that this run has already paid for, decoding and charging nothing:
     * how a resumed search replays what it had found when it has no time left to score anything new.
     */
    public List<Scored> scorePaid(List<RegionSet> sets) {
        return score(sets, true, 0);
    }

    private List<Scored> score(List<RegionSet> sets, boolean truncate, double available) {
        Map<RegionSet, Scored> result = new HashMap<>();
        Set<RegionSet> unknown = new LinkedHashSet<>();
        for (RegionSet s : sets) {
            if (s.universe() != inputs.batch().regions()) {
                throw new IllegalArgumentException("set over " + s.universe() + " regions, the model takes "
                        + inputs.batch().regions());
            }
            if (result.containsKey(s)) {
                continue;
            }
            Scored m = memo.get(s);
            if (m != null) {
                result.put(s, replay(m));
            } else {
                unknown.add(s);
            }
        }
        int keep = sets.size();
        if (!unknown.isEmpty()) {
            Map<EvaluationKey, RegionSet> byKey = new LinkedHashMap<>();
            for (RegionSet s : unknown) {
                byKey.put(key(s), s);
            }
            Map<EvaluationKey, ResultsStore.Stored> found = store == null ? Map.of() : store.lookup(run, byKey.keySet());
            Set<EvaluationKey> paid = new HashSet<>();
            for (ResultsStore.Stored st : found.values()) {
                if (st.paid()) {
                    paid.add(st.key());
                }
            }
            Set<RegionSet> unpaid = new HashSet<>();
            for (Map.Entry<EvaluationKey, RegionSet> e : byKey.entrySet()) {
                if (!paid.contains(e.getKey())) {
                    unpaid.add(e.getValue());
                }
            }
            double cost = unpaid.size() * costPerSet;
            if (!budget.allows(cost) || cost > available + 1e-9) {
                if (!truncate) {
                    throw new IllegalStateException("budget exhausted: " + budget.spent() + " of " + budget.limit()
                            + " scored sets spent, " + cost + " more needed");
                }
                keep = fittingPrefix(sets, unpaid, Math.min(available, budget.remaining()));
                Set<RegionSet> kept = new HashSet<>(sets.subList(0, keep));
                byKey.values().removeIf(s -> !kept.contains(s));
            }
            List<EvaluationKey> reusedKeys = new ArrayList<>();
            List<RegionSet> toDecode = new ArrayList<>();
            for (Map.Entry<EvaluationKey, RegionSet> e : byKey.entrySet()) {
                ResultsStore.Stored st = found.get(e.getKey());
                if (st == null) {
                    toDecode.add(e.getValue());
                    continue;
                }
                Source src = paid.contains(e.getKey()) ? Source.REPLAYED : Source.STORED;
                double charged;
                if (src == Source.STORED) {
                    reusedKeys.add(e.getKey());
                    budget.charge(costPerSet);
                    charged = budget.spent();
                    stored++;
                } else {
                    charged = snap(st.spentWhenPaid());
                    replayed++;
                }
                Scored sc = new Scored(e.getValue(), st.score(), st.outcomes(), src, charged);
                memo.put(e.getValue(), sc);
                result.put(e.getValue(), sc);
            }
            if (!reusedKeys.isEmpty()) {
                store.record(run, List.of(), reusedKeys, costPerSet);
            }
            for (int start = 0; start < toDecode.size(); start += chunk) {
                List<RegionSet> part = toDecode.subList(start, Math.min(toDecode.size(), start + chunk));
                decodeChunk(part, result);
            }
        }
        List<Scored> out = new ArrayList<>(keep);
        for (RegionSet s : sets.subList(0, keep)) {
            out.add(result.get(s));
        }
        return out;
    }

    /** The longest prefix of {@code sets} whose distinct unpaid sets cost at most {@code available}. */
    private int fittingPrefix(List<RegionSet> sets, Set<RegionSet> unpaid, double available) {
        double spent = 0;
        Set<RegionSet> counted = new HashSet<>();
        for (int i = 0; i < sets.size(); i++) {
            RegionSet s = sets.get(i);
            if (unpaid.contains(s) && counted.add(s)) {
                if (spent + costPerSet > available + 1e-9) {
                    return i;
                }
                spent += costPerSet;
            }
        }
        return sets.size();
    }

    private Scored replay(Scored m) {
        return m.source() == Source.REPLAYED ? m : new Scored(m.set(), m.score(), m.outcomes(), Source.REPLAYED,
                m.charged());
    }

    private void decodeChunk(List<RegionSet> part, Map<RegionSet, Scored> result) {
        List<InputMask> masks = new ArrayList<>(part.size());
        for (RegionSet s : part) {
            masks.add(new InputMask(s, fill));
        }
        long t0 = System.nanoTime();
        float[][][] probs = bound.probabilities(masks, threads);
        long spent = System.nanoTime() - t0;
        decodeNanos += spent;
        decodedSamples += (long) part.size() * inputs.size();
        double wall = spent / 1e9 / part.size();
        int[] labels = inputs.labels();
        List<ResultsStore.NewEvaluation> fresh = new ArrayList<>();
        for (int i = 0; i < part.size(); i++) {
            RegionSet s = part.get(i);
            Outcomes o = Outcomes.of(probs[i], labels);
            SetScore sc = SetScore.of(o, labels, inputs.classLabels().size());
            budget.charge(costPerSet);
            Scored scored = new Scored(s, sc, o, Source.DECODED, snap(budget.spent()));
            memo.put(s, scored);
            result.put(s, scored);
            decoded++;
            if (store != null) {
                fresh.add(new ResultsStore.NewEvaluation(key(s), names(s), sc, o, wall));
            }
        }
        if (store != null) {
            store.record(run, fresh, List.of(), costPerSet);
        }
    }

    // ---------------------------------------------------------------- racing

    /**
     * How sets are raced: the overall error rate of a raced verdict ({@code alpha}; 0 for deterministic stops only),
     * the seed of the order in which the part's samples are scored, and the samples per chunk.
     */
    public record Racing(double alpha, long orderSeed, int chunk) {
        public Racing {
            if (!(alpha >= 0 && alpha < 1)) {
                throw new IllegalArgumentException("race alpha must be in [0, 1), found " + alpha);
            }
            if (chunk < 1) {
                throw new IllegalArgumentException("race chunk must be at least 1 sample, found " + chunk);
            }
        }

        /** Error rate 0.01, and chunks of an eighth of the part, at least 32 samples (whole engine blocks). */
        public static Racing defaults(long orderSeed, int samples) {
            return new Racing(0.01, orderSeed, Math.max(32, (samples + 7) / 8));
        }
    }

    /**
     * A raced set: whether its full-part count of correct samples is at most the threshold ({@code atMost}), the
     * samples this run has paid for, how many of them were correct and the sum of their true-class probabilities,
     * the run's budget spent once it last paid for the set (the same after a resume), and the full score when every
     * sample is scored (null otherwise: the verdict is then a raced one, wrong with probability at most the race's
     * alpha).
     */
    public record Raced(RegionSet set, boolean atMost, int samples, int correct, double probabilitySum, double charged,
                        Scored full) {
        /** Whether the verdict rests on every sample. */
        public boolean exact() {
            return full != null;
        }

        /** The verdict of a whole score against {@code threshold}. */
        public static Raced of(Scored full, boolean atMost) {
            return new Raced(full.set(), atMost, full.score().n(), full.score().correct(),
                    full.score().meanTrueClassProbability() * full.score().n(), full.charged(), full);
        }
    }

    /** One set's progress in a race: the outcomes of the first samples of the order, and what this run has paid. */
    private static final class RaceState {
        int[] predicted;
        float[] probability;
        /** Samples with outcomes (scored by this run or another). */
        int done;
        /** Samples this run has paid for: always a look. */
        int paid;
        /** This run's budget spent once it paid for each look (index = look; NaN beyond the last paid). */
        double[] chargedAt;
    }

    private Racing racing;
    private int[] raceOrder;
    private int[] raceLooks;
    private Decoder.Bound[] chunkBound;
    /**
     * Racing progress by set: every state without a store; with one, the most recently used ones (a cache like the
     * scores', the rest reloaded from the store's partial evaluations when asked for again).
     */
    private final Map<RegionSet, RaceState> races;
    /** The states of the sets the current racing call works on, held for the whole call. */
    private Map<RegionSet, RaceState> active = Map.of();

    /**
     * Races {@code sets} (in order; duplicates allowed) against {@code threshold}: is each set's count of correct
     * samples on the whole part at most the threshold ({@link CollapseCriterion#criticalCount} gives it for the
     * collapse criterion)? Samples are scored in the racing order, a look (chunk) at a time for every open set, until
     * {@link RaceRule} settles each; a raced set costs the fraction of the samples it used. A set's verdict is taken
     * at the first look that settles it, so a resumed run, finding progress a killed one paid for, answers exactly as
     * the uninterrupted run did. Sets scored whole without racing are answered from their scores as {@link
     * #scoreWithinBudget} would charge them; raced progress is kept in the store (and completed later without scoring
     * a sample twice). Returns the longest prefix of {@code sets} that is settled within the budget, leaving {@code
     * keep} unspent.
     */
    public List<Raced> raceWithinBudget(List<RegionSet> sets, int threshold, Racing settings, double keep) {
        int n = inputs.size();
        bindRace(settings);
        RaceRule rule = RaceRule.of(n, threshold, raceLooks, settings.alpha());
        Map<RegionSet, Raced> out = new HashMap<>();
        List<RegionSet> open = new ArrayList<>();
        for (Scored sc : resolveRaces(sets, open, keep)) {
            out.put(sc.set(), Raced.of(sc, sc.score().correct() <= threshold));
        }
        double available = available(keep);
        List<RegionSet> racing = new ArrayList<>();
        for (RegionSet s : open) {
            int j = verdictLook(active.get(s), rule);
            if (j >= 0) {
                out.put(s, raced(s, active.get(s), rule, j));
            } else {
                racing.add(s);
            }
        }
        while (!racing.isEmpty()) {
            List<RegionSet> step = affordable(racing, available);
            if (step.isEmpty()) {
                break;
            }
            available -= cost(step);
            advance(step);
            List<RegionSet> still = new ArrayList<>();
            for (RegionSet s : racing) {
                RaceState st = active.get(s);
                int j = verdictLook(st, rule);
                if (j >= 0) {
                    out.put(s, raced(s, st, rule, j));
                } else {
                    still.add(s);
                }
            }
            racing = still;
        }
        return prefix(sets, out);
    }

    /**
     * A set's progress in the racing order at one look: the samples of that look, how many of them were correct,
     * the sum of their true-class probabilities, each sample's true-class probability and correctness in racing order
     * (so two sets can be compared sample by sample), this run's budget spent once it paid for that look (the same
     * after a resume), and the full score once every sample is scored (else null).
     */
    public record Progress(RegionSet set, int samples, int correct, double probabilitySum, float[] probabilities,
                           boolean[] correctness, double charged, Scored full) {
        /** Whether every sample is scored. */
        public boolean complete() {
            return full != null;
        }
    }

    /**
     * Brings each of {@code sets} (in order; duplicates allowed) to look {@code look} of the racing order ({@code
     * settings}: looks after every chunk of samples), paying for samples not yet paid, and returns each set's progress
     * at that look; progress already paid beyond it (e.g. by a killed run being resumed) is reported at that look,
     * as the uninterrupted run saw it. Sets scored whole without racing are answered from their scores as {@link
     * #scoreWithinBudget} would charge them. Returns the longest prefix of {@code sets} brought there within the
     * budget less {@code keep}. What a strategy racing its own comparisons (selecting the best of many candidates,
     * say) builds on.
     */
    public List<Progress> advanceWithinBudget(List<RegionSet> sets, int look, Racing settings, double keep) {
        bindRace(settings);
        if (look < 0 || look >= raceLooks.length) {
            throw new IllegalArgumentException("look must be within 0.." + (raceLooks.length - 1) + ", found " + look);
        }
        Map<RegionSet, Progress> out = new HashMap<>();
        List<RegionSet> open = new ArrayList<>();
        for (Scored sc : resolveRaces(sets, open, keep)) {
            out.put(sc.set(), progress(sc));
        }
        double available = available(keep);
        List<RegionSet> behind = new ArrayList<>();
        for (RegionSet s : open) {
            if (active.get(s).paid >= raceLooks[look]) {
                out.put(s, progress(s, active.get(s), look));
            } else {
                behind.add(s);
            }
        }
        while (!behind.isEmpty()) {
            List<RegionSet> step = affordable(behind, available);
            if (step.isEmpty()) {
                break;
            }
            available -= cost(step);
            advance(step);
            List<RegionSet> still = new ArrayList<>();
            for (RegionSet s : behind) {
                RaceState st = active.get(s);
                if (st.paid >= raceLooks[look]) {
                    out.put(s, progress(s, st, look));
                } else {
                    still.add(s);
                }
            }
            behind = still;
        }
        return prefix(sets, out);
    }

    /** The number of looks of the racing order (after every chunk of samples; the last sees every sample). */
    public int raceLooks(Racing settings) {
        bindRace(settings);
        return raceLooks.length;
    }

    /**
     * Sorts the distinct sets of {@code sets} into raced ones (with progress in memory or in the store, or with none
     * and no whole score: added to {@code open} with a state) and sets scored whole without racing, which are
     * answered (and charged) as {@link #scoreWithinBudget} would; returns those whole scores.
     */
    private List<Scored> resolveRaces(List<RegionSet> sets, List<RegionSet> open, double keep) {
        if (costPerSet == 0) {
            throw new IllegalStateException("racing is for the searched part; this scorer charges nothing per set");
        }
        List<RegionSet> distinct = new ArrayList<>(new LinkedHashSet<>(sets));
        List<RegionSet> missing = new ArrayList<>();
        active = new HashMap<>();
        for (RegionSet s : distinct) {
            if (s.universe() != inputs.batch().regions()) {
                throw new IllegalArgumentException("set over " + s.universe() + " regions, the model takes "
                        + inputs.batch().regions());
            }
            RaceState st = races.get(s);
            if (st == null) {
                missing.add(s);
            } else {
                active.put(s, st);
            }
        }
        loadRaceStates(missing);
        List<RegionSet> noProgress = new ArrayList<>();
        for (RegionSet s : missing) {
            if (!active.containsKey(s)) {
                noProgress.add(s);
            }
        }
        List<RegionSet> whole = new ArrayList<>();
        List<RegionSet> fresh = new ArrayList<>();
        splitScored(noProgress, whole, fresh);
        for (RegionSet s : fresh) {
            RaceState st = newState();
            races.put(s, st);
            active.put(s, st);
        }
        Set<RegionSet> wholeSet = new HashSet<>(whole);
        for (RegionSet s : distinct) {
            if (!wholeSet.contains(s)) {
                open.add(s);
            }
        }
        return scoreWithinBudget(whole, keep);
    }

    private RaceState newState() {
        RaceState st = new RaceState();
        st.predicted = new int[inputs.size()];
        st.probability = new float[inputs.size()];
        st.chargedAt = new double[raceLooks.length];
        java.util.Arrays.fill(st.chargedAt, Double.NaN);
        return st;
    }

    /** The longest prefix of {@code sets} that fits {@code available} when each pays for its next look. */
    private List<RegionSet> affordable(List<RegionSet> sets, double available) {
        List<RegionSet> step = new ArrayList<>();
        double cost = 0;
        for (RegionSet s : sets) {
            double c = nextLookCost(active.get(s));
            if (cost + c > available + 1e-9) {
                break;
            }
            cost += c;
            step.add(s);
        }
        return step;
    }

    private double cost(List<RegionSet> sets) {
        double c = 0;
        for (RegionSet s : sets) {
            c += nextLookCost(active.get(s));
        }
        return c;
    }

    private double nextLookCost(RaceState st) {
        int next = lookOf(st.paid, raceLooks) + 1;
        return costPerSet * (raceLooks[next] - st.paid) / inputs.size();
    }

    private static <T> List<T> prefix(List<RegionSet> sets, Map<RegionSet, T> out) {
        List<T> result = new ArrayList<>();
        for (RegionSet s : sets) {
            T r = out.get(s);
            if (r == null) {
                break;
            }
            result.add(r);
        }
        return result;
    }

    /**
     * Splits the distinct sets of {@code sets} into those with a full score in memory or in the store ({@code full})
     * and the rest ({@code open}), in order.
     */
    private void splitScored(List<RegionSet> sets, List<RegionSet> full, List<RegionSet> open) {
        Map<EvaluationKey, RegionSet> unknownKeys = new LinkedHashMap<>();
        for (RegionSet s : new LinkedHashSet<>(sets)) {
            if (memo.containsKey(s)) {
                full.add(s);
            } else {
                unknownKeys.put(key(s), s);
            }
        }
        if (store != null && !unknownKeys.isEmpty()) {
            Set<EvaluationKey> stored = store.lookup(run, unknownKeys.keySet()).keySet();
            for (Map.Entry<EvaluationKey, RegionSet> e : unknownKeys.entrySet()) {
                (stored.contains(e.getKey()) ? full : open).add(e.getValue());
            }
        } else {
            open.addAll(unknownKeys.values());
        }
    }

    /** The progress of a set scored whole without racing, its samples in racing order. */
    private Progress progress(Scored sc) {
        int n = sc.outcomes().size();
        int[] labels = inputs.labels();
        double sum = 0;
        float[] prob = new float[n];
        boolean[] right = new boolean[n];
        for (int i = 0; i < n; i++) {
            int s = raceOrder[i];
            prob[i] = sc.outcomes().trueClassProbability(s);
            right[i] = sc.outcomes().predicted(s) == labels[s];
            sum += prob[i];
        }
        return new Progress(sc.set(), sc.score().n(), sc.score().correct(), sum, prob, right, sc.charged(), sc);
    }

    /** A raced set's progress at look {@code look} (paid for). */
    private Progress progress(RegionSet s, RaceState st, int look) {
        int m = raceLooks[look];
        int[] labels = inputs.labels();
        double sum = 0;
        int correct = 0;
        boolean[] right = new boolean[m];
        for (int i = 0; i < m; i++) {
            sum += st.probability[i];
            right[i] = st.predicted[i] == labels[raceOrder[i]];
            correct += right[i] ? 1 : 0;
        }
        Scored full = look == raceLooks.length - 1 ? completed(s) : null;
        return new Progress(s, m, correct, sum, java.util.Arrays.copyOf(st.probability, m), right, st.chargedAt[look],
                full);
    }

    /** Correct samples among a raced set's first {@code m} in racing order. */
    private int correctIn(RaceState st, int m) {
        int[] labels = inputs.labels();
        int c = 0;
        for (int i = 0; i < m; i++) {
            if (st.predicted[i] == labels[raceOrder[i]]) {
                c++;
            }
        }
        return c;
    }

    /** The first look paid for at which {@code rule} settles the set, or −1 when none does yet. */
    private int verdictLook(RaceState st, RaceRule rule) {
        int last = lookOf(st.paid, raceLooks);
        for (int j = 0; j <= last; j++) {
            if (rule.verdict(j, correctIn(st, raceLooks[j])) != RaceRule.Verdict.OPEN) {
                return j;
            }
        }
        return -1;
    }

    /** The last look at or below {@code paid} samples (−1: none). */
    private static int lookOf(int paid, int[] looks) {
        int look = -1;
        for (int j = 0; j < looks.length && looks[j] <= paid; j++) {
            look = j;
        }
        return look;
    }

    /** Fixes the racing order and chunk bindings on first use; later calls must race with the same settings. */
    private void bindRace(Racing settings) {
        Objects.requireNonNull(settings, "settings");
        if (racing != null) {
            if (!racing.equals(settings)) {
                throw new IllegalArgumentException("this scorer races with " + racing + ", asked for " + settings);
            }
            return;
        }
        int n = inputs.size();
        raceOrder = raceOrder(n, settings.orderSeed());
        raceLooks = RaceRule.looks(n, settings.chunk());
        chunkBound = new Decoder.Bound[raceLooks.length];
        racing = settings;
    }

    /**
     * The racing order of {@code n} samples: a Fisher–Yates shuffle (from the last position down) of 0..n−1 driven by
     * {@code SplittableRandom(orderSeed)}.
     */
    public static int[] raceOrder(int n, long orderSeed) {
        int[] order = new int[n];
        for (int i = 0; i < n; i++) {
            order[i] = i;
        }
        java.util.SplittableRandom rng = new java.util.SplittableRandom(orderSeed);
        for (int i = n - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = order[i];
            order[i] = order[j];
            order[j] = t;
        }
        return order;
    }

    /** The decoder bound to chunk {@code c} of the racing order, its fill reading the whole part's samples. */
    private Decoder.Bound chunkBound(int c) {
        if (chunkBound[c] == null) {
            int from = c * racing.chunk();
            int to = Math.min(inputs.size(), from + racing.chunk());
            float[][] series = new float[to - from][];
            int[] lengths = new int[to - from];
            for (int i = from; i < to; i++) {
                series[i - from] = inputs.batch().series(raceOrder[i]);
                lengths[i - from] = inputs.batch().length(raceOrder[i]);
            }
            chunkBound[c] = decoder.bind(org.cruxset.scoring.decoder.InputBatch.of(inputs.batch().regions(), series,
                    lengths));
        }
        return chunkBound[c];
    }

    /** The lesion fill for chunk {@code c}: sample i of the chunk is sample {@code raceOrder[c·chunk + i]} of the part. */
    private LesionFill chunkFill(int c) {
        int base = c * racing.chunk();
        org.cruxset.scoring.decoder.InputBatch whole = inputs.batch();
        return new LesionFill() {
            @Override
            public void fill(org.cruxset.scoring.decoder.InputBatch batch, int sample, int region, float[] out) {
                fill.fill(whole, raceOrder[base + sample], region, out);
            }

            @Override
            public boolean isZero() {
                return fill.isZero();
            }
        };
    }

    /** Loads the stored racing progress of {@code sets} (those without any get no state here). */
    private void loadRaceStates(List<RegionSet> sets) {
        if (store == null || sets.isEmpty()) {
            return;
        }
        Map<EvaluationKey, RegionSet> byKey = new LinkedHashMap<>();
        for (RegionSet s : sets) {
            byKey.put(key(s), s);
        }
        Map<EvaluationKey, ResultsStore.Partial> found = store.partials(run, byKey.keySet(), racing.orderSeed(),
                racing.chunk());
        for (Map.Entry<EvaluationKey, ResultsStore.Partial> e : found.entrySet()) {
            ResultsStore.Partial p = e.getValue();
            RaceState st = newState();
            st.done = p.outcomes().size();
            st.paid = p.samplesPaid();
            for (int i = 0; i < st.done; i++) {
                st.predicted[i] = p.outcomes().predicted(i);
                st.probability[i] = p.outcomes().trueClassProbability(i);
            }
            double[] at = p.spentAfter();
            System.arraycopy(at, 0, st.chargedAt, 0, Math.min(at.length, st.chargedAt.length));
            races.put(byKey.get(e.getKey()), st);
            active.put(byKey.get(e.getKey()), st);
        }
    }

    /**
     * Pays for the next look of every set of {@code step}: samples already scored (by another run) are only paid
     * for, the rest decoded chunk by chunk, sets at the same chunk together; each group's progress and charges are
     * committed in one transaction, and a set that reaches the last sample gets its full evaluation stored.
     */
    private void advance(List<RegionSet> step) {
        int n = inputs.size();
        int[] labels = inputs.labels();
        Map<Integer, List<RegionSet>> byChunk = new java.util.TreeMap<>();
        for (RegionSet s : step) {
            RaceState st = active.get(s);
            int target = raceLooks[lookOf(st.paid, raceLooks) + 1];
            byChunk.computeIfAbsent(st.done >= target ? -1 : st.done / racing.chunk(), k -> new ArrayList<>()).add(s);
        }
        for (Map.Entry<Integer, List<RegionSet>> e : byChunk.entrySet()) {
            List<RegionSet> group = e.getValue();
            for (int from = 0; from < group.size(); from += chunk) {
                List<RegionSet> part = group.subList(from, Math.min(group.size(), from + chunk));
                long t0 = System.nanoTime();
                if (e.getKey() >= 0) {
                    int c = e.getKey();
                    LesionFill cf = chunkFill(c);
                    List<InputMask> masks = new ArrayList<>(part.size());
                    for (RegionSet s : part) {
                        masks.add(new InputMask(s, cf));
                    }
                    long d0 = System.nanoTime();
                    float[][][] probs = chunkBound(c).probabilities(masks, threads);
                    decodeNanos += System.nanoTime() - d0;
                    for (float[][] one : probs) {
                        decodedSamples += one.length;
                    }
                    int base = c * racing.chunk();
                    for (int i = 0; i < part.size(); i++) {
                        RaceState st = active.get(part.get(i));
                        for (int q = 0; q < probs[i].length; q++) {
                            int label = labels[raceOrder[base + q]];
                            float[] p = probs[i][q];
                            int best = 0;
                            for (int k = 1; k < p.length; k++) {
                                if (p[k] > p[best]) {
                                    best = k;
                                }
                            }
                            st.predicted[base + q] = best;
                            st.probability[base + q] = p[label];
                        }
                        st.done = base + probs[i].length;
                    }
                }
                double wall = (System.nanoTime() - t0) / 1e9;
                List<ResultsStore.PartialUpdate> updates = new ArrayList<>();
                List<RegionSet> completed = new ArrayList<>();
                for (RegionSet s : part) {
                    RaceState st = active.get(s);
                    int look = lookOf(st.paid, raceLooks) + 1;
                    double c = costPerSet * (raceLooks[look] - st.paid) / n;
                    budget.charge(c);
                    st.paid = raceLooks[look];
                    st.chargedAt[look] = snap(budget.spent());
                    if (store != null) {
                        updates.add(new ResultsStore.PartialUpdate(key(s), racing.orderSeed(), racing.chunk(),
                                new Outcomes(java.util.Arrays.copyOf(st.predicted, st.done),
                                        java.util.Arrays.copyOf(st.probability, st.done)), st.paid, c,
                                java.util.Arrays.copyOf(st.chargedAt, look + 1)));
                    }
                    if (st.paid == n) {
                        completed.add(s);
                    }
                }
                if (store != null) {
                    store.recordPartials(run, updates);
                }
                complete(completed, wall / Math.max(1, part.size()));
            }
        }
    }

    /** A budget snapshot as a whole number of samples: fractional charges summed in another order agree exactly. */
    private double snap(double spent) {
        if (costPerSet == 0 || Double.isNaN(spent)) {
            return spent;
        }
        int n = inputs.size();
        return Math.round(spent * n) / (double) n;
    }

    /** Stores and remembers the full evaluation of raced sets that have every sample scored (charged nothing more). */
    private void complete(List<RegionSet> done, double wallEach) {
        if (done.isEmpty()) {
            return;
        }
        int n = inputs.size();
        int[] labels = inputs.labels();
        List<ResultsStore.NewEvaluation> fresh = new ArrayList<>();
        for (RegionSet s : done) {
            RaceState st = active.get(s);
            int[] predicted = new int[n];
            float[] probability = new float[n];
            for (int i = 0; i < n; i++) {
                predicted[raceOrder[i]] = st.predicted[i];
                probability[raceOrder[i]] = st.probability[i];
            }
            Outcomes o = new Outcomes(predicted, probability);
            SetScore sc = SetScore.of(o, labels, inputs.classLabels().size());
            Scored scored = new Scored(s, sc, o, Source.DECODED, st.chargedAt[raceLooks.length - 1]);
            memo.put(s, scored);
            decoded++;
            if (store != null) {
                fresh.add(new ResultsStore.NewEvaluation(key(s), names(s), sc, o, wallEach));
            }
        }
        if (store != null) {
            store.record(run, fresh, List.of(), 0);
        }
    }

    /** The full score of a raced set with every sample paid for. */
    private Scored completed(RegionSet s) {
        Scored full = memo.get(s);
        if (full == null) {
            complete(List.of(s), 0);
            full = memo.get(s);
        }
        return full;
    }

    private Raced raced(RegionSet s, RaceState st, RaceRule rule, int look) {
        int m = raceLooks[look];
        boolean atMost = rule.verdict(look, correctIn(st, m)) == RaceRule.Verdict.AT_MOST;
        if (look == raceLooks.length - 1) {
            Scored full = completed(s);
            return new Raced(s, atMost, m, full.score().correct(), full.score().meanTrueClassProbability() * m,
                    st.chargedAt[look], full);
        }
        double sum = 0;
        for (int i = 0; i < m; i++) {
            sum += st.probability[i];
        }
        return new Raced(s, atMost, m, correctIn(st, m), sum, st.chargedAt[look], null);
    }

    private String names(RegionSet s) {
        StringBuilder sb = new StringBuilder();
        for (int p : s.positions()) {
            sb.append(sb.length() == 0 ? "" : ",").append(regionName.apply(p));
        }
        return sb.toString();
    }
}
