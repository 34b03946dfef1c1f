package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.rank.CriticalPrefix;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.SingleLesion;

/**
 * The input positions of a ranking in order (most important first), and its <em>pool</em>: the first {@code size}
 * of them. Strategies draw the regions they add to a set from the pool with probability {@code focus} and from all
 * intact regions otherwise, so that additions go mostly where single lesions (or a given ranking) say the decoder
 * looks, while every region stays reachable.
 */
public final class RankedPool {
    private final List<Integer> order;
    private final boolean[] inPool;
    private final int[] pool;
    private final double focus;

    private RankedPool(List<Integer> order, int regions, int size, double focus) {
        if (!(focus >= 0 && focus <= 1)) {
            throw new IllegalArgumentException("focus must be within [0, 1], found " + focus);
        }
        if (size < 0) {
            throw new IllegalArgumentException("pool must be at least 0, found " + size);
        }
        this.order = List.copyOf(order);
        this.inPool = new boolean[regions];
        this.pool = new int[Math.min(size, order.size())];
        for (int i = 0; i < pool.length; i++) {
            pool[i] = order.get(i);
            inPool[pool[i]] = true;
        }
        this.focus = pool.length == 0 ? 0 : focus;
    }

    /**
     * The pool of {@code given} (single lesions on the search part when null) in input positions, its first
     * {@code size} positions drawn from with probability {@code focus}.
     */
    public static RankedPool of(SearchContext ctx, Ranking given, int size, double focus) {
        Ranking r = given == null ? SingleLesion.rank(ctx) : given;
        List<Integer> out = new ArrayList<>();
        RegionSet seen = ctx.empty();
        for (RegionSet atlasPrefix : r.prefixes(ctx.session().cohort().atlas())) {
            RegionSet in = ctx.session().toInputs(atlasPrefix);
            for (int p : in.positions()) {
                if (!seen.contains(p)) {
                    out.add(p);
                    seen = seen.with(p);
                }
            }
        }
        return new RankedPool(out, ctx.regions(), size, focus);
    }

    /** The ranked input positions, most important first. */
    public List<Integer> order() {
        return order;
    }

    /**
     * The first {@code factor} × k ranked positions, where k is the length of the ranking's smallest critical prefix
     * ({@link CriticalPrefix}, scored through {@code ctx}): a critical set with room to spare, from which a search can
     * remove regions in other orders than the ranking's. Null when no prefix is critical.
     */
    public RegionSet criticalSuperset(SearchContext ctx, double factor) {
        if (!(factor >= 1)) {
            throw new IllegalArgumentException("the superset factor must be at least 1, found " + factor);
        }
        List<RegionSet> prefixes = new ArrayList<>(order.size());
        RegionSet acc = ctx.empty();
        for (int p : order) {
            acc = acc.with(p);
            prefixes.add(acc);
        }
        CriticalPrefix.Result r = CriticalPrefix.find(ctx, prefixes);
        return r.length() < 0 ? null : prefixes.get((int) Math.min(prefixes.size(), Math.ceil(r.length() * factor)) - 1);
    }

    /** Whether input position {@code p} is in the pool. */
    public boolean inPool(int p) {
        return inPool[p];
    }

    /** The share of additions drawn from the pool. */
    public double focus() {
        return focus;
    }

    /**
     * An intact region of {@code set} (none: −1): with probability {@code focus} one of the pool's intact regions
     * (when it has any), otherwise one of all intact regions, uniformly.
     */
    public int draw(RegionSet set, SplittableRandom rng) {
        int n = set.universe();
        int intact = n - set.size();
        if (intact == 0) {
            return -1;
        }
        if (rng.nextDouble() < focus) {
            int free = 0;
            for (int p : pool) {
                free += set.contains(p) ? 0 : 1;
            }
            if (free > 0) {
                int k = rng.nextInt(free);
                for (int p : pool) {
                    if (!set.contains(p) && k-- == 0) {
                        return p;
                    }
                }
            }
        }
        int k = rng.nextInt(intact);
        for (int p = 0; p < n; p++) {
            if (!set.contains(p) && k-- == 0) {
                return p;
            }
        }
        throw new IllegalStateException("unreachable");
    }
}
