package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.Strategy;

/**
 * Every subset of a candidate pool, by increasing size (combinations in lexicographic order, in batches), until the
 * first size that has a critical set has been completed. After each completed size j without a critical set it
 * certifies "no critical set of size at most j within the pool". The pool is a network, the top m of a ranking, or all
 * regions; the budget bounds how far it gets.
 */
public final class ExhaustiveStrategy implements Strategy {
    private static final int BATCH = 512;

    private final RegionSet pool;
    private final String poolLabel;
    private int completed = -1;

    /** Searches every subset of {@code pool} (model input positions); {@code poolLabel} says what the pool is. */
    public ExhaustiveStrategy(RegionSet pool, String poolLabel) {
        this.pool = pool;
        this.poolLabel = poolLabel;
    }

    @Override
    public String name() {
        return "exhaustive";
    }

    @Override
    public String settings() {
        return "pool=" + poolLabel + " (" + pool.size() + " regions)";
    }

    /** The largest size j for which every subset of the pool of size at most j was scored and none is critical. */
    public int certifiedUpTo() {
        return completed;
    }

    @Override
    public void run(SearchContext ctx) {
        int[] members = pool.positions();
        int m = members.length;
        for (int k = 1; k <= m; k++) {
            boolean found = false;
            int[] idx = new int[k];
            for (int i = 0; i < k; i++) {
                idx[i] = i;
            }
            List<RegionSet> batch = new ArrayList<>(BATCH);
            boolean more = true;
            while (more) {
                int[] pos = new int[k];
                for (int i = 0; i < k; i++) {
                    pos[i] = members[idx[i]];
                }
                batch.add(RegionSet.of(ctx.regions(), pos));
                more = nextCombination(idx, m);
                if (batch.size() == BATCH || !more) {
                    for (LesionScorer.Scored s : ctx.score(batch)) {
                        found |= ctx.critical(s.score());
                    }
                    batch.clear();
                }
            }
            if (found) {
                return;
            }
            completed = k;
            ctx.certifyExhaustive(pool, k);
        }
    }

    /** Advances {@code idx} (a k-combination of 0..m-1 in increasing order) lexicographically; false at the end. */
    static boolean nextCombination(int[] idx, int m) {
        int k = idx.length;
        int i = k - 1;
        while (i >= 0 && idx[i] == m - k + i) {
            i--;
        }
        if (i < 0) {
            return false;
        }
        idx[i]++;
        for (int j = i + 1; j < k; j++) {
            idx[j] = idx[j - 1] + 1;
        }
        return true;
    }
}
