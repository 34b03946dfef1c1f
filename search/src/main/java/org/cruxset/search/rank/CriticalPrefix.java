package org.cruxset.search.rank;

import java.util.ArrayList;
import java.util.List;
import java.util.TreeMap;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;

/**
 * The smallest critical prefix of a ranking: the smallest k whose first k units, lesioned together, are critical.
 * Accuracy along a ranking need not fall monotonically (lesioning one more region can raise it), so the answer is
 * found by an exponential search (prefixes 1, 2, 4, ... and the whole ranking, one batch) then a binary search
 * between the last non-critical and the first critical length, and verified: prefix k was scored critical and
 * prefix k − 1 non-critical. Every non-monotone step seen among the scored prefixes is reported; where there is one,
 * a shorter critical prefix than k cannot be ruled out.
 */
public final class CriticalPrefix {
    private CriticalPrefix() {
    }

    /** A scored prefix length. */
    public record Point(int length, SetScore score, boolean critical) {
    }

    /**
     * What was found: {@code length} (−1 when even the whole ranking is not critical), its set (null then), every
     * prefix scored, and notes where the curve was seen to be non-monotone.
     */
    public record Result(int length, RegionSet set, List<Point> scored, List<String> nonMonotone) {
        public Result {
            scored = List.copyOf(scored);
            nonMonotone = List.copyOf(nonMonotone);
        }

        /** Whether the prefix curve was seen to be non-monotone. */
        public boolean monotoneAsSeen() {
            return nonMonotone.isEmpty();
        }
    }

    /**
     * Finds the smallest critical prefix among {@code prefixes} (model-input sets, nested, prefix k at index k − 1).
     */
    public static Result find(SearchContext ctx, List<RegionSet> prefixes) {
        int m = prefixes.size();
        if (m == 0) {
            throw new IllegalArgumentException("an empty ranking has no critical prefix");
        }
        TreeMap<Integer, Point> seen = new TreeMap<>();
        List<Integer> lengths = new ArrayList<>();
        for (int k = 1; k < m; k *= 2) {
            lengths.add(k);
        }
        lengths.add(m);
        List<RegionSet> batch = new ArrayList<>();
        for (int k : lengths) {
            batch.add(prefixes.get(k - 1));
        }
        List<LesionScorer.Scored> scored = ctx.score(batch);
        for (int i = 0; i < lengths.size(); i++) {
            SetScore s = scored.get(i).score();
            seen.put(lengths.get(i), new Point(lengths.get(i), s, ctx.critical(s)));
        }
        int hi = -1;
        int lo = 0;
        for (int k : lengths) {
            if (seen.get(k).critical()) {
                hi = k;
                break;
            }
            lo = k;
        }
        if (hi < 0) {
            return new Result(-1, null, List.copyOf(seen.values()), notes(seen));
        }
        while (hi - lo > 1) {
            int mid = (lo + hi) >>> 1;
            SetScore s = ctx.score(prefixes.get(mid - 1)).score();
            boolean critical = ctx.critical(s);
            seen.put(mid, new Point(mid, s, critical));
            if (critical) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        return new Result(hi, prefixes.get(hi - 1), List.copyOf(seen.values()), notes(seen));
    }

    private static List<String> notes(TreeMap<Integer, Point> seen) {
        List<String> out = new ArrayList<>();
        Point prev = null;
        Point lastCritical = null;
        for (Point p : seen.values()) {
            if (prev != null && p.score().accuracy() > prev.score().accuracy()) {
                out.add(String.format("accuracy rose from %.3f at prefix %d to %.3f at prefix %d", prev.score().accuracy(),
                        prev.length(), p.score().accuracy(), p.length()));
            }
            if (lastCritical != null && !p.critical()) {
                out.add("prefix " + lastCritical.length() + " is critical but the longer prefix " + p.length() + " is not");
            }
            if (p.critical()) {
                lastCritical = p;
            }
            prev = p;
        }
        return out;
    }
}
