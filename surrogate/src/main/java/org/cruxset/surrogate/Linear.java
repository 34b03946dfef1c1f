package org.cruxset.surrogate;

/** Small dense linear algebra for the surrogate fits: Cholesky factors and triangular solves, in place where said. */
final class Linear {
    private Linear() {
    }

    /** The lower Cholesky factor of the symmetric positive definite {@code a} (p × p); fails when it is not. */
    static double[][] cholesky(double[][] a) {
        int p = a.length;
        double[][] l = new double[p][p];
        for (int i = 0; i < p; i++) {
            for (int j = 0; j <= i; j++) {
                double s = a[i][j];
                for (int k = 0; k < j; k++) {
                    s -= l[i][k] * l[j][k];
                }
                if (i == j) {
                    if (!(s > 0)) {
                        throw new IllegalStateException("the matrix is not positive definite (pivot " + s + " at " + i
                                + ")");
                    }
                    l[i][i] = Math.sqrt(s);
                } else {
                    l[i][j] = s / l[j][j];
                }
            }
        }
        return l;
    }

    /** Solves L·x = b for lower-triangular L. */
    static double[] forward(double[][] l, double[] b) {
        int p = b.length;
        double[] x = new double[p];
        for (int i = 0; i < p; i++) {
            double s = b[i];
            for (int k = 0; k < i; k++) {
                s -= l[i][k] * x[k];
            }
            x[i] = s / l[i][i];
        }
        return x;
    }

    /** Solves Lᵀ·x = b for lower-triangular L. */
    static double[] backward(double[][] l, double[] b) {
        int p = b.length;
        double[] x = new double[p];
        for (int i = p - 1; i >= 0; i--) {
            double s = b[i];
            for (int k = i + 1; k < p; k++) {
                s -= l[k][i] * x[k];
            }
            x[i] = s / l[i][i];
        }
        return x;
    }

    /** XᵀX of the rows {@code x}. */
    static double[][] gram(double[][] x) {
        int p = x[0].length;
        double[][] g = new double[p][p];
        for (double[] row : x) {
            for (int i = 0; i < p; i++) {
                double v = row[i];
                if (v == 0) {
                    continue;
                }
                for (int j = 0; j <= i; j++) {
                    g[i][j] += v * row[j];
                }
            }
        }
        for (int i = 0; i < p; i++) {
            for (int j = 0; j < i; j++) {
                g[j][i] = g[i][j];
            }
        }
        return g;
    }

    /** Xᵀy. */
    static double[] xty(double[][] x, double[] y) {
        double[] out = new double[x[0].length];
        for (int r = 0; r < x.length; r++) {
            for (int i = 0; i < out.length; i++) {
                out[i] += x[r][i] * y[r];
            }
        }
        return out;
    }

    static double dot(double[] a, double[] b) {
        double s = 0;
        for (int i = 0; i < a.length; i++) {
            s += a[i] * b[i];
        }
        return s;
    }
}
