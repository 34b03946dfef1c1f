package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.Strategy;

/**
 * Random sets of every size, the floor every strategy must beat: rounds over sizes 1, 2, ..., each round drawing one
 * new set of each size (one batch a round); once a critical set of size k is found, only sizes below k are drawn.
 * Sizes with at most {@link #ENUMERATE} sets are drawn without repeats from a seeded shuffle of all of them (so a
 * budget of 2^N covers every set); larger sizes draw uniform random sets. Stops when every size still drawn is used up.
 */
public final class RandomStrategy implements Strategy {
    /** Sizes with at most this many sets are enumerated in a shuffled order rather than sampled. */
    public static final int ENUMERATE = 1 << 16;

    @Override
    public String name() {
        return "random";
    }

    @Override
    public String settings() {
        return "sizes=all, then below the best critical size";
    }

    @Override
    public void run(SearchContext ctx) {
        int n = ctx.regions();
        SplittableRandom rng = ctx.random("random-sets");
        List<List<RegionSet>> shuffled = new ArrayList<>();
        int[] next = new int[n + 1];
        for (int k = 0; k <= n; k++) {
            shuffled.add(null);
        }
        int maxSize = n;
        while (true) {
            List<RegionSet> batch = new ArrayList<>();
            for (int k = 1; k <= maxSize; k++) {
                if (binomial(n, k) <= ENUMERATE) {
                    if (shuffled.get(k) == null) {
                        shuffled.set(k, allOfSize(n, k, rng));
                    }
                    if (next[k] < shuffled.get(k).size()) {
                        batch.add(shuffled.get(k).get(next[k]++));
                    }
                } else {
                    batch.add(randomSet(n, k, rng));
                }
            }
            if (batch.isEmpty()) {
                return;
            }
            for (LesionScorer.Scored s : ctx.score(batch)) {
                if (ctx.critical(s.score())) {
                    maxSize = Math.min(maxSize, s.set().size() - 1);
                }
            }
        }
    }

    private static double binomial(int n, int k) {
        double c = 1;
        for (int i = 0; i < k; i++) {
            c = c * (n - i) / (i + 1);
            if (c > ENUMERATE) {
                return c;
            }
        }
        return c;
    }

    private static List<RegionSet> allOfSize(int n, int k, SplittableRandom rng) {
        List<RegionSet> all = new ArrayList<>();
        int[] idx = new int[k];
        for (int i = 0; i < k; i++) {
            idx[i] = i;
        }
        do {
            all.add(RegionSet.of(n, idx.clone()));
        } while (ExhaustiveStrategy.nextCombination(idx, n));
        for (int i = all.size() - 1; i > 0; i--) {
            java.util.Collections.swap(all, i, rng.nextInt(i + 1));
        }
        return all;
    }

    /** A uniform random k-subset (Floyd's algorithm). */
    private static RegionSet randomSet(int n, int k, SplittableRandom rng) {
        RegionSet s = RegionSet.empty(n);
        for (int j = n - k; j < n; j++) {
            int t = rng.nextInt(j + 1);
            s = s.contains(t) ? s.with(j) : s.with(t);
        }
        return s;
    }
}
