package org.cruxset.search;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.function.ToDoubleFunction;
import org.cruxset.scoring.eval.SetScore;

/**
 * The hypervolume of a two-objective front, both objectives minimised: the area dominated by the points and bounded by
 * a reference point (Zitzler &amp; Thiele 1998). For a front of lesion sets the objectives are (set size / N, score),
 * with the reference point (1, intact score) stated beside every value. Points outside the reference box add nothing;
 * dominated points add nothing.
 */
public final class Hypervolume {
    private Hypervolume() {
    }

    /** The area dominated by {@code points} ({@code [i][0]}, {@code [i][1]}) within the box up to {@code (r0, r1)}. */
    public static double of(double[][] points, double r0, double r1) {
        List<double[]> in = new ArrayList<>();
        for (double[] p : points) {
            if (p[0] < r0 && p[1] < r1) {
                in.add(p);
            }
        }
        in.sort(Comparator.<double[]>comparingDouble(p -> p[0]).thenComparingDouble(p -> p[1]));
        List<double[]> front = new ArrayList<>();
        double bestY = Double.POSITIVE_INFINITY;
        for (double[] p : in) {
            if (p[1] < bestY) {
                front.add(p);
                bestY = p[1];
            }
        }
        double area = 0;
        for (int i = 0; i < front.size(); i++) {
            double nextX = i + 1 < front.size() ? front.get(i + 1)[0] : r0;
            area += (nextX - front.get(i)[0]) * (r1 - front.get(i)[1]);
        }
        return area;
    }

    /** The hypervolume of a lesion-set front: points (size / regions, score), reference (1, {@code referenceScore}). */
    public static double ofFront(List<Front.Entry> front, int regions, double referenceScore,
                                 ToDoubleFunction<SetScore> score) {
        double[][] pts = new double[front.size()][];
        for (int i = 0; i < pts.length; i++) {
            Front.Entry e = front.get(i);
            pts[i] = new double[] {(double) e.size() / regions, score.applyAsDouble(e.score())};
        }
        return of(pts, 1.0, referenceScore);
    }
}
