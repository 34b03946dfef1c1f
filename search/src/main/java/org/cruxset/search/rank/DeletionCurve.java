package org.cruxset.search.rank;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;

/**
 * Deletion and insertion curves of a ranking: the score with its top k units lesioned (deletion), and with every
 * unit but its top k lesioned (insertion), at grid points k, with a null band from random orders of the same units
 * (seeded) and the ranking's smallest critical prefix ({@link CriticalPrefix}). Every set is scored through the
 * search context, so the budget bounds the whole curve and every score is kept in the store.
 */
public final class DeletionCurve {
    /** Lower and upper quantiles of the null band. */
    public static final double BAND_LOW = 0.05;
    public static final double BAND_HIGH = 0.95;

    /**
     * One grid point: k, the deletion score and whether it is critical, the insertion score (null when not asked),
     * and the null band's 5%, 50% and 95% accuracy (NaN without random orders).
     */
    public record Point(int k, SetScore deletion, boolean deletionCritical, SetScore insertion, double nullLow,
                        double nullMedian, double nullHigh) {
    }

    /**
     * The curve: its points, the smallest critical prefix (found on the scored prefixes), the number of random
     * orders behind the band, and the area between the band's median and the deletion curve (trapezoid rule over k,
     * in accuracy × units; positive when the ranking's curve lies below the median) and that area over the k range.
     */
    public record Result(List<Point> points, CriticalPrefix.Result prefix, int nullOrders, double area, double meanGap) {
        public Result {
            points = List.copyOf(points);
        }
    }

    private DeletionCurve() {
    }

    /**
     * Parses a grid: {@code all} (1..units), {@code A:B} (every k from A to B) or {@code A:B:S} (step S), or a
     * comma-separated list of k; values above {@code units} are dropped.
     */
    public static int[] grid(String spec, int units) {
        String s = spec.trim();
        List<Integer> out = new ArrayList<>();
        try {
            if (s.equals("all")) {
                for (int k = 1; k <= units; k++) {
                    out.add(k);
                }
            } else if (s.contains(":")) {
                String[] p = s.split(":");
                if (p.length < 2 || p.length > 3) {
                    throw new NumberFormatException();
                }
                int a = Integer.parseInt(p[0].trim());
                int b = Integer.parseInt(p[1].trim());
                int step = p.length == 3 ? Integer.parseInt(p[2].trim()) : 1;
                if (a < 1 || b < a || step < 1) {
                    throw new IllegalArgumentException("grid '" + spec + "': expected 1 <= A <= B and a step of at least 1");
                }
                for (int k = a; k <= Math.min(b, units); k += step) {
                    out.add(k);
                }
            } else {
                for (String v : s.split(",")) {
                    int k = Integer.parseInt(v.trim());
                    if (k < 1) {
                        throw new IllegalArgumentException("grid '" + spec + "': k must be at least 1, found " + k);
                    }
                    if (k <= units) {
                        out.add(k);
                    }
                }
            }
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("grid '" + spec + "': expected all, A:B, A:B:STEP or a list like 1,2,5");
        }
        int[] g = out.stream().mapToInt(Integer::intValue).distinct().sorted().toArray();
        if (g.length == 0) {
            throw new IllegalArgumentException("grid '" + spec + "' has no k between 1 and the ranking's " + units + " units");
        }
        return g;
    }

    /**
     * Scores the curve of {@code ranking} on {@code grid}, its insertion curve when {@code insertion}, and
     * {@code nullOrders} random orders of its units drawn from {@code seed}.
     */
    public static Result run(SearchContext ctx, Ranking ranking, Atlas atlas, int[] grid, boolean insertion,
                             int nullOrders, long seed) {
        List<RegionSet> prefixes = inputPrefixes(ctx, ranking.units(), atlas);
        RegionSet all = RegionSet.all(ctx.regions());
        List<RegionSet> batch = new ArrayList<>();
        for (int k : grid) {
            batch.add(prefixes.get(k - 1));
        }
        List<LesionScorer.Scored> deletion = ctx.score(batch);
        List<LesionScorer.Scored> inserted = null;
        if (insertion) {
            List<RegionSet> ins = new ArrayList<>();
            for (int k : grid) {
                ins.add(all.minus(prefixes.get(k - 1)));
            }
            inserted = ctx.score(ins);
        }
        double[][] nullAcc = new double[grid.length][nullOrders];
        SplittableRandom rng = new SplittableRandom(seed);
        for (int r = 0; r < nullOrders; r++) {
            List<String> shuffled = new ArrayList<>(ranking.units());
            for (int i = shuffled.size() - 1; i > 0; i--) {
                int j = rng.nextInt(i + 1);
                String t = shuffled.get(i);
                shuffled.set(i, shuffled.get(j));
                shuffled.set(j, t);
            }
            List<RegionSet> p = inputPrefixes(ctx, shuffled, atlas);
            List<RegionSet> b = new ArrayList<>();
            for (int k : grid) {
                b.add(p.get(k - 1));
            }
            List<LesionScorer.Scored> s = ctx.score(b);
            for (int g = 0; g < grid.length; g++) {
                nullAcc[g][r] = s.get(g).score().accuracy();
            }
        }
        CriticalPrefix.Result prefix = CriticalPrefix.find(ctx, prefixes);
        List<Point> points = new ArrayList<>();
        double area = 0;
        for (int g = 0; g < grid.length; g++) {
            SetScore d = deletion.get(g).score();
            double lo = Double.NaN;
            double med = Double.NaN;
            double hi = Double.NaN;
            if (nullOrders > 0) {
                double[] v = nullAcc[g].clone();
                Arrays.sort(v);
                lo = org.cruxset.scoring.stats.ClusteredStats.quantile(v, BAND_LOW);
                med = org.cruxset.scoring.stats.ClusteredStats.quantile(v, 0.5);
                hi = org.cruxset.scoring.stats.ClusteredStats.quantile(v, BAND_HIGH);
            }
            points.add(new Point(grid[g], d, ctx.critical(d), inserted == null ? null : inserted.get(g).score(), lo,
                    med, hi));
            if (g > 0 && nullOrders > 0) {
                Point a = points.get(g - 1);
                Point b = points.get(g);
                area += (b.k() - a.k()) * ((a.nullMedian() - a.deletion().accuracy())
                        + (b.nullMedian() - b.deletion().accuracy())) / 2;
            }
        }
        if (nullOrders > 0 && grid.length == 1) {
            area = points.get(0).nullMedian() - points.get(0).deletion().accuracy();
        }
        double range = grid.length == 1 ? 1 : grid[grid.length - 1] - grid[0];
        return new Result(points, prefix, nullOrders, nullOrders > 0 ? area : Double.NaN,
                nullOrders > 0 ? area / range : Double.NaN);
    }

    /**
     * At most the sets scored: the curve's own and {@code nullOrders} random orders on a grid of {@code gridPoints},
     * plus the prefixes off the grid that the smallest-critical-prefix search may score (twice log2 of the units).
     */
    public static long cost(int gridPoints, boolean insertion, int nullOrders, int units) {
        int search = 2 * (32 - Integer.numberOfLeadingZeros(Math.max(1, units)));
        return (long) gridPoints * (1 + (insertion ? 1 : 0) + nullOrders) + (gridPoints == units ? 0 : search);
    }

    private static List<RegionSet> inputPrefixes(SearchContext ctx, List<String> units, Atlas atlas) {
        List<RegionSet> out = new ArrayList<>();
        for (RegionSet atlasSet : Ranking.prefixes(units, atlas)) {
            out.add(ctx.session().toInputs(atlasSet));
        }
        return out;
    }
}
