package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.ArrayRealVector;
import org.apache.commons.math3.linear.DecompositionSolver;
import org.apache.commons.math3.linear.LUDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.linear.RealVector;
import org.apache.commons.math3.linear.SingularMatrixException;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Shapley values as the solution of a weighted least-squares problem (Lundberg &amp; Lee 2017): coalitions are drawn
 * from the Shapley kernel (size s in 1..n−1 with probability ∝ 1 / (s (n − s)), then a uniform subset), each with its
 * complement (paired sampling, Covert &amp; Lee 2021), and the additive fit to v(S) − v(∅) is solved under the constraint
 * that the values sum to v(all) − v(∅). Standard errors from a seeded bootstrap of the sampled pairs (no further
 * coalitions asked for). All coalitions are asked for as one batch.
 */
public final class RegressionShapley {
    /** Bootstrap resamples behind the standard errors. */
    public static final int BOOTSTRAP = 200;

    private RegressionShapley() {
    }

    /** The coalitions asked for: each pair is two, plus the empty and the full coalition. */
    public static long cost(int pairs) {
        return 2L * pairs + 2;
    }

    /** Estimates from {@code pairs} sampled coalitions and their complements. */
    public static Estimate values(Game game, int pairs, long seed) {
        int n = game.players();
        if (n < 2 || pairs < n) {
            throw new IllegalArgumentException("the regression needs at least 2 players and as many pairs as players ("
                    + n + "), found " + pairs + " pairs");
        }
        SplittableRandom rng = new SplittableRandom(seed);
        double[] sizeWeight = new double[n];
        double total = 0;
        for (int s = 1; s < n; s++) {
            sizeWeight[s] = 1.0 / (s * (double) (n - s));
            total += sizeWeight[s];
        }
        List<RegionSet> batch = new ArrayList<>(2 * pairs + 2);
        batch.add(RegionSet.empty(n));
        batch.add(RegionSet.all(n));
        boolean[][] z = new boolean[2 * pairs][];
        for (int p = 0; p < pairs; p++) {
            double u = rng.nextDouble() * total;
            int size = 1;
            while (size < n - 1 && u > sizeWeight[size]) {
                u -= sizeWeight[size];
                size++;
            }
            int[] order = PermutationShapley.shuffled(n, rng);
            boolean[] in = new boolean[n];
            RegionSet s = RegionSet.empty(n);
            for (int a = 0; a < size; a++) {
                in[order[a]] = true;
                s = s.with(order[a]);
            }
            boolean[] out = new boolean[n];
            RegionSet c = RegionSet.empty(n);
            for (int i = 0; i < n; i++) {
                out[i] = !in[i];
                if (out[i]) {
                    c = c.with(i);
                }
            }
            z[2 * p] = in;
            z[2 * p + 1] = out;
            batch.add(s);
            batch.add(c);
        }
        double[] w = game.worth(batch);
        double v0 = w[0];
        double vAll = w[1];
        double[] y = new double[2 * pairs];
        for (int k = 0; k < y.length; k++) {
            y[k] = w[k + 2] - v0;
        }
        int[] all = new int[pairs];
        for (int p = 0; p < pairs; p++) {
            all[p] = p;
        }
        double[] phi = solve(z, y, all, n, vAll - v0);
        SplittableRandom boot = new SplittableRandom(seed ^ 0x5DEECE66DL);
        double[] mean = new double[n];
        double[] m2 = new double[n];
        int done = 0;
        for (int b = 0; b < BOOTSTRAP; b++) {
            int[] pick = new int[pairs];
            for (int p = 0; p < pairs; p++) {
                pick[p] = boot.nextInt(pairs);
            }
            double[] x;
            try {
                x = solve(z, y, pick, n, vAll - v0);
            } catch (SingularMatrixException e) {
                continue;
            }
            done++;
            for (int i = 0; i < n; i++) {
                double d = x[i] - mean[i];
                mean[i] += d / done;
                m2[i] += d * (x[i] - mean[i]);
            }
        }
        double[] se = new double[n];
        for (int i = 0; i < n; i++) {
            se[i] = done < 2 ? Double.POSITIVE_INFINITY : Math.sqrt(m2[i] / (done - 1));
        }
        return new Estimate("regression (paired)", phi, se, batch.size());
    }

    /** The constrained least-squares fit on the pairs {@code pick} (each pair contributes both rows). */
    private static double[] solve(boolean[][] z, double[] y, int[] pick, int n, double totalGain) {
        double[][] a = new double[n][n];
        double[] b = new double[n];
        for (int p : pick) {
            for (int r = 2 * p; r <= 2 * p + 1; r++) {
                boolean[] row = z[r];
                for (int i = 0; i < n; i++) {
                    if (!row[i]) {
                        continue;
                    }
                    b[i] += y[r];
                    for (int j = 0; j < n; j++) {
                        if (row[j]) {
                            a[i][j] += 1;
                        }
                    }
                }
            }
        }
        RealMatrix am = new Array2DRowRealMatrix(a, false);
        DecompositionSolver solver = new LUDecomposition(am).getSolver();
        RealVector ones = new ArrayRealVector(n, 1.0);
        RealVector ainvB = solver.solve(new ArrayRealVector(b, false));
        RealVector ainv1 = solver.solve(ones);
        double lambda = (ones.dotProduct(ainvB) - totalGain) / ones.dotProduct(ainv1);
        return ainvB.subtract(ainv1.mapMultiply(lambda)).toArray();
    }
}
