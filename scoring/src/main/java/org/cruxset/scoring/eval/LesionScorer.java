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
        this.chunk = Math.max(1, Math.min(64, 4 * threads));
        this.regionName = Objects.requireNonNull(regionName, "regionName");
        this.memo = store == null ? new HashMap<>() : boundedCache(inputs.size());
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
        return score(sets, true, Math.max(0, budget.remaining() - keep));
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
                    charged = st.spentWhenPaid();
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
        double wall = (System.nanoTime() - t0) / 1e9 / part.size();
        int[] labels = inputs.labels();
        List<ResultsStore.NewEvaluation> fresh = new ArrayList<>();
        for (int i = 0; i < part.size(); i++) {
            RegionSet s = part.get(i);
            Outcomes o = Outcomes.of(probs[i], labels);
            SetScore sc = SetScore.of(o, labels, inputs.classLabels().size());
            budget.charge(costPerSet);
            Scored scored = new Scored(s, sc, o, Source.DECODED, budget.spent());
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
     * samples this run has paid for and how many of them were correct, and the full score when every sample is
     * scored (null otherwise: the verdict is then a raced one, wrong with probability at most the race's alpha).
     */
    public record Raced(RegionSet set, boolean atMost, int samples, int correct, Scored full) {
        /** Whether the verdict rests on every sample. */
        public boolean exact() {
            return full != null;
        }
    }

    /** One set's progress in a race: the outcomes of the first samples of the order, and what this run has paid. */
    private static final class RaceState {
        int[] predicted;
        float[] probability;
        int done;
        int paid;
        int correct;
        int look = -1;
        RaceRule.Verdict verdict = RaceRule.Verdict.OPEN;
    }

    private Racing racing;
    private int[] raceOrder;
    private Decoder.Bound[] chunkBound;
    private final Map<RegionSet, RaceState> races = new HashMap<>();

    /**
     * Races {@code sets} (in order; duplicates allowed) against {@code threshold}: is each set's count of correct
     * samples on the whole part at most the threshold ({@link CollapseCriterion#criticalCount} gives it for the
     * collapse criterion)? Samples are scored in the racing order, a chunk at a time for every open set, until
     * {@link RaceRule} settles each; a raced set costs the fraction of the samples it used. Sets already fully scored
     * are answered from their scores as {@link #scoreWithinBudget} would charge them; raced progress is kept in the
     * store (and completed later without scoring a sample twice). Returns the longest prefix of {@code sets} that is
     * settled within the budget, leaving {@code keep} unspent.
     */
    public List<Raced> raceWithinBudget(List<RegionSet> sets, int threshold, Racing settings, double keep) {
        Objects.requireNonNull(settings, "settings");
        if (costPerSet == 0) {
            throw new IllegalStateException("racing is for the searched part; this scorer charges nothing per set");
        }
        int n = inputs.size();
        bindRace(settings);
        RaceRule rule = RaceRule.of(n, threshold, RaceRule.looks(n, settings.chunk()), settings.alpha());
        int[] looks = rule.looks();
        // Sets with a full score in memory or in the store: answered as scoring would charge them.
        List<RegionSet> distinct = new ArrayList<>(new LinkedHashSet<>(sets));
        List<RegionSet> full = new ArrayList<>();
        List<RegionSet> open = new ArrayList<>();
        Map<EvaluationKey, RegionSet> unknownKeys = new LinkedHashMap<>();
        for (RegionSet s : distinct) {
            if (s.universe() != inputs.batch().regions()) {
                throw new IllegalArgumentException("set over " + s.universe() + " regions, the model takes "
                        + inputs.batch().regions());
            }
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
        Map<RegionSet, Raced> out = new HashMap<>();
        List<Scored> known = scoreWithinBudget(full, keep);
        for (Scored sc : known) {
            out.put(sc.set(), new Raced(sc.set(), sc.score().correct() <= threshold, n, sc.score().correct(), sc));
        }
        loadRaceStates(open);
        // Sets whose progress already settles them (after a resume) need no more samples.
        List<RegionSet> racing = new ArrayList<>();
        for (RegionSet s : open) {
            RaceState st = races.get(s);
            settle(st, rule, looks);
            if (st.verdict == RaceRule.Verdict.OPEN) {
                racing.add(s);
            } else {
                out.put(s, raced(s, st, n));
            }
        }
        double available = Math.max(0, budget.remaining() - keep);
        while (!racing.isEmpty()) {
            // Each open set's next look; pay in list order while the budget lasts.
            List<RegionSet> step = new ArrayList<>();
            double cost = 0;
            for (RegionSet s : racing) {
                RaceState st = races.get(s);
                double c = costPerSet * (looks[st.look + 1] - st.paid) / n;
                if (cost + c > available + 1e-9) {
                    break;
                }
                cost += c;
                step.add(s);
            }
            if (step.isEmpty()) {
                break;
            }
            available -= cost;
            advance(step, looks);
            List<RegionSet> still = new ArrayList<>();
            for (RegionSet s : racing) {
                RaceState st = races.get(s);
                if (step.contains(s)) {
                    settle(st, rule, looks);
                }
                if (st.verdict == RaceRule.Verdict.OPEN) {
                    still.add(s);
                } else {
                    out.put(s, raced(s, st, n));
                }
            }
            racing = still;
        }
        List<Raced> result = new ArrayList<>();
        for (RegionSet s : sets) {
            Raced r = out.get(s);
            if (r == null) {
                break;
            }
            result.add(r);
        }
        return result;
    }

    /** Fixes the racing order and chunk bindings on first use; later calls must race with the same settings. */
    private void bindRace(Racing settings) {
        if (racing != null) {
            if (!racing.equals(settings)) {
                throw new IllegalArgumentException("this scorer races with " + racing + ", asked for " + settings);
            }
            return;
        }
        int n = inputs.size();
        raceOrder = raceOrder(n, settings.orderSeed());
        chunkBound = new Decoder.Bound[(n + settings.chunk() - 1) / settings.chunk()];
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

    /** Loads the racing progress of {@code sets} this scorer does not hold yet, from the store when there is one. */
    private void loadRaceStates(List<RegionSet> sets) {
        int n = inputs.size();
        Map<EvaluationKey, RegionSet> missing = new LinkedHashMap<>();
        for (RegionSet s : sets) {
            if (!races.containsKey(s)) {
                missing.put(key(s), s);
            }
        }
        Map<EvaluationKey, ResultsStore.Partial> found = store == null || missing.isEmpty() ? Map.of()
                : store.partials(run, missing.keySet(), racing.orderSeed(), racing.chunk());
        int[] labels = inputs.labels();
        for (Map.Entry<EvaluationKey, RegionSet> e : missing.entrySet()) {
            RaceState st = new RaceState();
            st.predicted = new int[n];
            st.probability = new float[n];
            ResultsStore.Partial p = found.get(e.getKey());
            if (p != null) {
                st.done = p.outcomes().size();
                st.paid = p.samplesPaid();
                for (int i = 0; i < st.done; i++) {
                    st.predicted[i] = p.outcomes().predicted(i);
                    st.probability[i] = p.outcomes().trueClassProbability(i);
                }
                for (int i = 0; i < st.paid; i++) {
                    if (st.predicted[i] == labels[raceOrder[i]]) {
                        st.correct++;
                    }
                }
            }
            races.put(e.getValue(), st);
        }
    }

    /** The verdict of a set's progress: at its last look paid for. */
    private void settle(RaceState st, RaceRule rule, int[] looks) {
        st.look = -1;
        for (int j = 0; j < looks.length && looks[j] <= st.paid; j++) {
            st.look = j;
        }
        st.verdict = st.look < 0 ? RaceRule.Verdict.OPEN : rule.verdict(st.look, st.correct);
    }

    /**
     * Brings every set of {@code step} to its next look: samples already scored (by another run) are paid for,
     * the rest decoded chunk by chunk, sets at the same chunk together; each group's progress and charges are
     * committed in one transaction, and a set that reaches the last sample gets its full evaluation stored.
     */
    private void advance(List<RegionSet> step, int[] looks) {
        int n = inputs.size();
        int[] labels = inputs.labels();
        Map<Integer, List<RegionSet>> byChunk = new java.util.TreeMap<>();
        for (RegionSet s : step) {
            RaceState st = races.get(s);
            int target = looks[st.look + 1];
            if (st.done >= target) {
                byChunk.computeIfAbsent(-1, k -> new ArrayList<>()).add(s);
            } else {
                byChunk.computeIfAbsent(st.done / racing.chunk(), k -> new ArrayList<>()).add(s);
            }
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
                    float[][][] probs = chunkBound(c).probabilities(masks, threads);
                    int base = c * racing.chunk();
                    for (int i = 0; i < part.size(); i++) {
                        RaceState st = races.get(part.get(i));
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
                    RaceState st = races.get(s);
                    int target = looks[st.look + 1];
                    for (int i = st.paid; i < target; i++) {
                        if (st.predicted[i] == labels[raceOrder[i]]) {
                            st.correct++;
                        }
                    }
                    double c = costPerSet * (target - st.paid) / n;
                    budget.charge(c);
                    st.paid = target;
                    if (store != null) {
                        updates.add(new ResultsStore.PartialUpdate(key(s), racing.orderSeed(), racing.chunk(),
                                new Outcomes(java.util.Arrays.copyOf(st.predicted, st.done),
                                        java.util.Arrays.copyOf(st.probability, st.done)), st.paid, c));
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

    /** Stores and remembers the full evaluation of raced sets that have every sample scored (charged nothing more). */
    private void complete(List<RegionSet> done, double wallEach) {
        if (done.isEmpty()) {
            return;
        }
        int n = inputs.size();
        int[] labels = inputs.labels();
        List<ResultsStore.NewEvaluation> fresh = new ArrayList<>();
        for (RegionSet s : done) {
            RaceState st = races.get(s);
            int[] predicted = new int[n];
            float[] probability = new float[n];
            for (int i = 0; i < n; i++) {
                predicted[raceOrder[i]] = st.predicted[i];
                probability[raceOrder[i]] = st.probability[i];
            }
            Outcomes o = new Outcomes(predicted, probability);
            SetScore sc = SetScore.of(o, labels, inputs.classLabels().size());
            Scored scored = new Scored(s, sc, o, Source.DECODED, budget.spent());
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

    private Raced raced(RegionSet s, RaceState st, int n) {
        Scored full = st.paid == n ? memo.get(s) : null;
        if (st.paid == n && full == null) {
            complete(List.of(s), 0);
            full = memo.get(s);
        }
        return new Raced(s, st.verdict == RaceRule.Verdict.AT_MOST, st.paid, st.correct, full);
    }

    private String names(RegionSet s) {
        StringBuilder sb = new StringBuilder();
        for (int p : s.positions()) {
            sb.append(sb.length() == 0 ? "" : ",").append(regionName.apply(p));
        }
        return sb.toString();
    }
}
