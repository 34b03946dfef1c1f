package org.cruxset.surrogate;

import java.util.Arrays;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * The features of a lesion set for a surrogate of its score: one indicator per region (first order) and, for every
 * pair of regions within a candidate pool, the product of their indicators (second order). With N regions the pool
 * keeps the pair terms few (all pairs of N = 300 regions would be 44,850 features).
 */
public final class QuadraticFeatures {
    private final int regions;
    private final int[] pool;
    /** Position of each region in the pool, −1 when not in it. */
    private final int[] inPool;

    /** Features over {@code regions} regions with pair terms among {@code pool} (model input positions, distinct). */
    public QuadraticFeatures(int regions, int[] pool) {
        if (regions < 1) {
            throw new IllegalArgumentException("regions must be at least 1, found " + regions);
        }
        this.regions = regions;
        this.pool = pool.clone();
        this.inPool = new int[regions];
        Arrays.fill(inPool, -1);
        for (int i = 0; i < pool.length; i++) {
            if (pool[i] < 0 || pool[i] >= regions || inPool[pool[i]] >= 0) {
                throw new IllegalArgumentException("pool positions must be distinct and within 0.." + (regions - 1)
                        + ", found " + Arrays.toString(pool));
            }
            inPool[pool[i]] = i;
        }
    }

    /** First-order features only. */
    public static QuadraticFeatures firstOrder(int regions) {
        return new QuadraticFeatures(regions, new int[0]);
    }

    /** All first- and second-order features of {@code regions} regions. */
    public static QuadraticFeatures full(int regions) {
        int[] all = new int[regions];
        for (int i = 0; i < regions; i++) {
            all[i] = i;
        }
        return new QuadraticFeatures(regions, all);
    }

    public int regions() {
        return regions;
    }

    /** The pool of the pair terms. */
    public int[] pool() {
        return pool.clone();
    }

    /** Number of features: regions plus pairs of the pool. */
    public int size() {
        return regions + pool.length * (pool.length - 1) / 2;
    }

    /** A readable name of feature {@code f}: a region position, or two joined by "×". */
    public String name(int f) {
        if (f < regions) {
            return Integer.toString(f);
        }
        int k = f - regions;
        for (int a = 0; a < pool.length; a++) {
            int row = pool.length - 1 - a;
            if (k < row) {
                return pool[a] + "×" + pool[a + 1 + k];
            }
            k -= row;
        }
        throw new IllegalArgumentException("no feature " + f);
    }

    /** The feature vector of {@code set} (over {@link #regions()} regions). */
    public double[] of(RegionSet set) {
        if (set.universe() != regions) {
            throw new IllegalArgumentException("set over " + set.universe() + " regions, features over " + regions);
        }
        double[] x = new double[size()];
        int[] pos = set.positions();
        for (int p : pos) {
            x[p] = 1;
        }
        int m = pool.length;
        for (int i = 0; i < pos.length; i++) {
            int a = inPool[pos[i]];
            if (a < 0) {
                continue;
            }
            for (int j = i + 1; j < pos.length; j++) {
                int b = inPool[pos[j]];
                if (b < 0) {
                    continue;
                }
                int lo = Math.min(a, b);
                int hi = Math.max(a, b);
                // Pairs (lo, hi) in row-major order of the upper triangle.
                int index = lo * m - lo * (lo + 1) / 2 + (hi - lo - 1);
                x[regions + index] = 1;
            }
        }
        return x;
    }
}
