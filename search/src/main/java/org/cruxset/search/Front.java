package org.cruxset.search;

import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * What a search has found so far: the best set at every size (lowest accuracy, then lowest mean true-class
 * probability; the first seen wins ties) and every distinct critical set of the smallest critical size (up to
 * {@link #MAX_KEPT}; later ones are counted). Memory is O(regions + kept sets), whatever the number of sets offered.
 */
public final class Front {
    /** Most critical sets of the best size kept. */
    public static final int MAX_KEPT = 1000;

    /** The best set at one size. */
    public record Entry(int size, RegionSet set, SetScore score, boolean critical) {
    }

    private final Entry[] best;
    private int bestCriticalSize = Integer.MAX_VALUE;
    private final Set<RegionSet> bestCritical = new LinkedHashSet<>();
    private int notKept;

    /** A front over sets of {@code regions} regions. */
    public Front(int regions) {
        best = new Entry[regions + 1];
    }

    /** Offers a scored set; returns true when it became the best at its size. */
    public boolean offer(RegionSet set, SetScore score, boolean critical) {
        int k = set.size();
        if (critical && k > 0) {
            if (k < bestCriticalSize) {
                bestCriticalSize = k;
                bestCritical.clear();
                notKept = 0;
            }
            if (k == bestCriticalSize && !bestCritical.contains(set)) {
                if (bestCritical.size() < MAX_KEPT) {
                    bestCritical.add(set);
                } else {
                    notKept++;
                }
            }
        }
        Entry e = best[k];
        if (e == null || Objective.BETTER.compare(score, e.score()) < 0) {
            best[k] = new Entry(k, set, score, critical);
            return true;
        }
        return false;
    }

    /** The best entry at {@code size}, or null when no set of that size was scored. */
    public Entry at(int size) {
        return best[size];
    }

    /** The smallest critical size found, or -1. */
    public int bestCriticalSize() {
        return bestCriticalSize == Integer.MAX_VALUE ? -1 : bestCriticalSize;
    }

    /** Every distinct critical set of the best size, in the order found (at most {@link #MAX_KEPT}). */
    public List<RegionSet> bestCriticalSets() {
        return List.copyOf(bestCritical);
    }

    /** Critical sets of the best size found beyond {@link #MAX_KEPT}. */
    public int notKept() {
        return notKept;
    }

    /** The best entry of every size scored, by size. */
    public List<Entry> entries() {
        List<Entry> out = new ArrayList<>();
        for (Entry e : best) {
            if (e != null) {
                out.add(e);
            }
        }
        return out;
    }
}
