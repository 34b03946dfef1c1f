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
        Objects.requireNonNull(decoder, "decoder");
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

    private String names(RegionSet s) {
        StringBuilder sb = new StringBuilder();
        for (int p : s.positions()) {
            sb.append(sb.length() == 0 ? "" : ",").append(regionName.apply(p));
        }
        return sb.toString();
    }
}
