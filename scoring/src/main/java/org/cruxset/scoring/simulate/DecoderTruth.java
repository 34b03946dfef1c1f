package org.cruxset.scoring.simulate;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A trained decoder's own ground truth on a planted pool: every subset of the pool (at most 2^10) lesioned with
 * zeros and scored on held-out samples; a set is critical when its accuracy is not significantly above chance
 * (one-sided exact binomial at level {@code alpha}).
 */
public record DecoderTruth(List<String> pool, double alpha, SetScore intact, List<Entry> sets,
                           List<List<String>> minimumCriticalSets, List<List<String>> inclusionMinimalCriticalSets) {
    public DecoderTruth {
        pool = List.copyOf(pool);
        sets = List.copyOf(sets);
        minimumCriticalSets = List.copyOf(minimumCriticalSets);
        inclusionMinimalCriticalSets = List.copyOf(inclusionMinimalCriticalSets);
    }

    /** One lesioned subset of the pool and its score. */
    public record Entry(List<String> regions, SetScore score, boolean critical) {
        public Entry {
            regions = List.copyOf(regions);
        }
    }

    /**
     * Lesions every subset of {@code pool} (region names, all in the model's inputs: {@code positions} gives each
     * one's input position) and scores it on {@code inputs}.
     */
    public static DecoderTruth compute(Decoder decoder, ModelInputs inputs, List<String> pool, int[] positions,
                                       double alpha, int threads) {
        int k = pool.size();
        if (k > 10) {
            throw new IllegalArgumentException("the pool must have at most 10 regions, found " + k);
        }
        int n = inputs.batch().regions();
        int count = 1 << k;
        List<InputMask> masks = new ArrayList<>(count);
        for (int bits = 0; bits < count; bits++) {
            RegionSet set = RegionSet.empty(n);
            for (int i = 0; i < k; i++) {
                if ((bits & (1 << i)) != 0) {
                    set = set.with(positions[i]);
                }
            }
            masks.add(InputMask.zero(set));
        }
        Decoder.Bound bound = decoder.bind(inputs.batch());
        SetScore[] scores = new SetScore[count];
        int chunk = 64;
        for (int start = 0; start < count; start += chunk) {
            int end = Math.min(count, start + chunk);
            float[][][] probs = bound.probabilities(masks.subList(start, end), threads);
            for (int m = start; m < end; m++) {
                scores[m] = SetScore.of(probs[m - start], inputs);
            }
        }
        CollapseCriterion criterion = new CollapseCriterion(CollapseCriterion.Kind.BINOMIAL, alpha);
        boolean[] critical = new boolean[count];
        List<Entry> entries = new ArrayList<>();
        for (int bits = 0; bits < count; bits++) {
            critical[bits] = criterion.critical(scores[bits], scores[0]);
            entries.add(new Entry(names(pool, bits), scores[bits], critical[bits]));
        }
        int minSize = Integer.MAX_VALUE;
        for (int bits = 0; bits < count; bits++) {
            if (critical[bits]) {
                minSize = Math.min(minSize, Integer.bitCount(bits));
            }
        }
        List<List<String>> minimum = new ArrayList<>();
        List<List<String>> inclusion = new ArrayList<>();
        for (int bits = 0; bits < count; bits++) {
            if (!critical[bits]) {
                continue;
            }
            if (Integer.bitCount(bits) == minSize) {
                minimum.add(names(pool, bits));
            }
            boolean minimal = true;
            for (int sub = (bits - 1) & bits; minimal && bits != 0; sub = (sub - 1) & bits) {
                if (critical[sub]) {
                    minimal = false;
                }
                if (sub == 0) {
                    break;
                }
            }
            if (minimal) {
                inclusion.add(names(pool, bits));
            }
        }
        return new DecoderTruth(pool, alpha, scores[0], entries, minimum, inclusion);
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
