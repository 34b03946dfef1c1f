package org.cruxset.scoring.simulate;

import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.eval.Budget;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A trained decoder's own ground truth on a planted pool: every subset of the pool (at most 2^10) lesioned with zeros
 * and scored through the {@link LesionScorer} on the search part of the held-out samples, judged under each of
 * several collapse criteria (the first is the default one); the minimum-size critical sets of each criterion are then
 * re-scored on the confirmation part, as a search's results would be.
 */
public record DecoderTruth(List<String> pool, Parts parts, SetScore intact, SetScore confirmationIntact,
                           List<Entry> sets, List<Verdicts> verdicts) {
    public DecoderTruth {
        pool = List.copyOf(pool);
        Objects.requireNonNull(parts, "parts");
        Objects.requireNonNull(intact, "intact");
        sets = List.copyOf(sets);
        verdicts = List.copyOf(verdicts);
        if (verdicts.isEmpty()) {
            throw new IllegalArgumentException("a decoder truth needs at least one criterion");
        }
    }

    /** One lesioned subset of the pool, its search-part score and whether it is critical under each criterion. */
    public record Entry(List<String> regions, SetScore score, List<Boolean> critical) {
        public Entry {
            regions = List.copyOf(regions);
            critical = List.copyOf(critical);
        }
    }

    /**
     * What one criterion makes of the pool: its minimum-size critical sets, its inclusion-minimal critical sets, and
     * each minimum set scored on the confirmation part (empty without one) with the verdict there.
     */
    public record Verdicts(CollapseCriterion criterion, List<List<String>> minimumCriticalSets,
                           List<List<String>> inclusionMinimalCriticalSets, List<Confirmed> confirmed) {
        public Verdicts {
            Objects.requireNonNull(criterion, "criterion");
            minimumCriticalSets = minimumCriticalSets.stream().map(List::copyOf).toList();
            inclusionMinimalCriticalSets = inclusionMinimalCriticalSets.stream().map(List::copyOf).toList();
            confirmed = List.copyOf(confirmed);
        }
    }

    /** A set re-scored on the confirmation part and whether it is critical there. */
    public record Confirmed(List<String> regions, SetScore score, boolean critical) {
        public Confirmed {
            regions = List.copyOf(regions);
        }
    }

    /** The minimum-size critical sets under the first (default) criterion. */
    public List<List<String>> minimumCriticalSets() {
        return verdicts.get(0).minimumCriticalSets();
    }

    /**
     * Lesions every subset of {@code pool} (region names, all model inputs: {@code positions} gives each one's input
     * position) and scores it on {@code search}; {@code confirmation} (nullable) is the confirmation part's inputs.
     */
    public static DecoderTruth compute(Decoder decoder, Parts parts, ModelInputs search, ModelInputs confirmation,
                                       List<String> pool, int[] positions, List<CollapseCriterion> criteria,
                                       int threads) {
        int k = pool.size();
        if (k > 10) {
            throw new IllegalArgumentException("the pool must have at most 10 regions, found " + k);
        }
        if (criteria.isEmpty()) {
            throw new IllegalArgumentException("give at least one collapse criterion");
        }
        int n = search.batch().regions();
        int count = 1 << k;
        List<RegionSet> subsets = new ArrayList<>(count);
        for (int bits = 0; bits < count; bits++) {
            RegionSet set = RegionSet.empty(n);
            for (int i = 0; i < k; i++) {
                if ((bits & (1 << i)) != 0) {
                    set = set.with(positions[i]);
                }
            }
            subsets.add(set);
        }
        List<LesionScorer.Scored> scored = scorer(decoder, search, threads).score(subsets);
        SetScore intact = scored.get(0).score();
        LesionScorer confirmScorer = confirmation == null ? null : scorer(decoder, confirmation, threads);
        SetScore confirmIntact = confirmScorer == null ? null
                : confirmScorer.score(RegionSet.empty(n)).score();
        boolean[][] critical = new boolean[criteria.size()][count];
        List<Verdicts> verdicts = new ArrayList<>();
        for (int c = 0; c < criteria.size(); c++) {
            CollapseCriterion criterion = criteria.get(c);
            for (int bits = 1; bits < count; bits++) {
                critical[c][bits] = criterion.critical(scored.get(bits).score(), intact);
            }
            List<Integer> minimum = minimum(critical[c]);
            List<Confirmed> confirmed = new ArrayList<>();
            if (confirmScorer != null) {
                for (int bits : minimum) {
                    SetScore q = confirmScorer.score(subsets.get(bits)).score();
                    confirmed.add(new Confirmed(names(pool, bits), q, criterion.critical(q, confirmIntact)));
                }
            }
            verdicts.add(new Verdicts(criterion, names(pool, minimum), names(pool, inclusionMinimal(critical[c])),
                    confirmed));
        }
        List<Entry> entries = new ArrayList<>();
        for (int bits = 0; bits < count; bits++) {
            List<Boolean> flags = new ArrayList<>();
            for (boolean[] perCriterion : critical) {
                flags.add(perCriterion[bits]);
            }
            entries.add(new Entry(names(pool, bits), scored.get(bits).score(), flags));
        }
        return new DecoderTruth(pool, parts, intact, confirmIntact, entries, verdicts);
    }

    private static LesionScorer scorer(Decoder decoder, ModelInputs inputs, int threads) {
        return new LesionScorer(decoder, inputs, LesionMode.ZERO, 0, LesionFill.ZERO, null, null, Budget.unlimited(0),
                1.0, threads, p -> Integer.toString(p));
    }

    private static List<Integer> minimum(boolean[] critical) {
        int minSize = Integer.MAX_VALUE;
        for (int bits = 0; bits < critical.length; bits++) {
            if (critical[bits]) {
                minSize = Math.min(minSize, Integer.bitCount(bits));
            }
        }
        List<Integer> out = new ArrayList<>();
        for (int bits = 0; bits < critical.length; bits++) {
            if (critical[bits] && Integer.bitCount(bits) == minSize) {
                out.add(bits);
            }
        }
        return out;
    }

    private static List<Integer> inclusionMinimal(boolean[] critical) {
        List<Integer> out = new ArrayList<>();
        for (int bits = 1; bits < critical.length; bits++) {
            if (!critical[bits]) {
                continue;
            }
            boolean minimal = true;
            for (int sub = (bits - 1) & bits; sub != 0; sub = (sub - 1) & bits) {
                if (critical[sub]) {
                    minimal = false;
                    break;
                }
            }
            if (minimal) {
                out.add(bits);
            }
        }
        return out;
    }

    private static List<List<String>> names(List<String> pool, List<Integer> sets) {
        List<List<String>> out = new ArrayList<>();
        for (int bits : sets) {
            out.add(names(pool, bits));
        }
        return out;
    }

    private static List<String> names(List<String> pool, int bits) {
        List<String> out = new ArrayList<>();
        for (int i = 0; i < pool.size(); i++) {
            if ((bits & (1 << i)) != 0) {
                out.add(pool.get(i));
            }
        }
        return out;
    }
}
