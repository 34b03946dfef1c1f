package org.cruxset.scoring.kernel;

/**
 * {@link EngineKernels} in plain Java: four rows and two inputs at a time, so that each loaded weight vector serves
 * four samples; the inner loops are the shape the JIT auto-vectorises. The fallback when the Vector API module is
 * absent, and the reference the vector kernels are tested against.
 */
public final class ScalarKernels implements EngineKernels {
    static final ScalarKernels INSTANCE = new ScalarKernels();

    private ScalarKernels() {
    }

    @Override
    public String name() {
        return "scalar";
    }

    @Override
    public PackedMatrix pack(float[][] w, int m) {
        return new PackedMatrix(w, m, 0);
    }

    @Override
    public void gemm(float[][] in, int off, PackedMatrix w, float[][] out, int rows) {
        gemm(in, off, w.rows, out, rows, w.k, w.m);
    }

    @Override
    public void gemm(float[][] in, int off, float[][] w, float[][] out, int rows, int k, int m) {
        int i = 0;
        for (; i + 4 <= rows; i += 4) {
            float[] x0 = in[i];
            float[] x1 = in[i + 1];
            float[] x2 = in[i + 2];
            float[] x3 = in[i + 3];
            float[] y0 = out[i];
            float[] y1 = out[i + 1];
            float[] y2 = out[i + 2];
            float[] y3 = out[i + 3];
            int j = 0;
            for (; j + 2 <= k; j += 2) {
                int o = off + j;
                axpy4x2(w[j], w[j + 1], x0[o], x0[o + 1], x1[o], x1[o + 1], x2[o], x2[o + 1], x3[o], x3[o + 1],
                        y0, y1, y2, y3, m);
            }
            if (j < k) {
                int o = off + j;
                axpy4x1(w[j], x0[o], x1[o], x2[o], x3[o], y0, y1, y2, y3, m);
            }
        }
        for (; i < rows; i++) {
            float[] x0 = in[i];
            float[] y0 = out[i];
            int j = 0;
            for (; j + 2 <= k; j += 2) {
                axpy1x2(w[j], w[j + 1], x0[off + j], x0[off + j + 1], y0, m);
            }
            if (j < k) {
                axpy1x1(w[j], x0[off + j], y0, m);
            }
        }
    }

    private static void axpy4x2(float[] w0, float[] w1, float a0, float a1, float b0, float b1, float c0, float c1,
                                float d0, float d1, float[] y0, float[] y1, float[] y2, float[] y3, int m) {
        for (int g = 0; g < m; g++) {
            float u = w0[g];
            float v = w1[g];
            y0[g] = Math.fma(v, a1, Math.fma(u, a0, y0[g]));
            y1[g] = Math.fma(v, b1, Math.fma(u, b0, y1[g]));
            y2[g] = Math.fma(v, c1, Math.fma(u, c0, y2[g]));
            y3[g] = Math.fma(v, d1, Math.fma(u, d0, y3[g]));
        }
    }

    private static void axpy4x1(float[] w0, float a0, float b0, float c0, float d0,
                                float[] y0, float[] y1, float[] y2, float[] y3, int m) {
        for (int g = 0; g < m; g++) {
            float u = w0[g];
            y0[g] = Math.fma(u, a0, y0[g]);
            y1[g] = Math.fma(u, b0, y1[g]);
            y2[g] = Math.fma(u, c0, y2[g]);
            y3[g] = Math.fma(u, d0, y3[g]);
        }
    }

    private static void axpy1x2(float[] w0, float[] w1, float a0, float a1, float[] y0, int m) {
        for (int g = 0; g < m; g++) {
            y0[g] = Math.fma(w1[g], a1, Math.fma(w0[g], a0, y0[g]));
        }
    }

    private static void axpy1x1(float[] w0, float a0, float[] y0, int m) {
        for (int g = 0; g < m; g++) {
            y0[g] = Math.fma(w0[g], a0, y0[g]);
        }
    }

    /*
     * The gate loops below index every array they touch with the same expression: a loop that reads one array at
     * j and another at hid + j is not vectorised by the JIT (measured 4x slower), so parts of rows are moved with
     * System.arraycopy instead.
     */

    @Override
    public void gruLinearBeforeReset(float[] x, float[] g, float[] rbh3, float[] h, float[] s, float[] c, int hid) {
        int h2 = 2 * hid;
        int h3 = 3 * hid;
        for (int j = 0; j < h2; j++) {
            s[j] = Activations.sigmoid(x[j] + g[j]);
        }
        System.arraycopy(s, hid, s, h2, hid);
        for (int j = h2; j < h3; j++) {
            s[j] = Activations.tanh(x[j] + s[j] * (g[j] + rbh3[j]));
        }
        System.arraycopy(s, h2, c, 0, hid);
        for (int j = 0; j < hid; j++) {
            float v = c[j];
            h[j] = v + s[j] * (h[j] - v);
        }
    }

    @Override
    public void gruResetGates(float[] x, float[] g, float[] h, float[] z, float[] rh, float[] s, float[] c, int hid) {
        int h2 = 2 * hid;
        for (int j = 0; j < h2; j++) {
            s[j] = Activations.sigmoid(x[j] + g[j]);
        }
        System.arraycopy(s, 0, z, 0, hid);
        System.arraycopy(s, hid, c, 0, hid);
        for (int j = 0; j < hid; j++) {
            rh[j] = c[j] * h[j];
        }
    }

    @Override
    public void gruCandidate(float[] x, float[] g, float[] rbh, float[] z, float[] h, float[] c, int hid) {
        System.arraycopy(x, 2 * hid, c, 0, hid);
        for (int j = 0; j < hid; j++) {
            c[j] = Activations.tanh(c[j] + g[j] + rbh[j]);
        }
        for (int j = 0; j < hid; j++) {
            float v = c[j];
            h[j] = v + z[j] * (h[j] - v);
        }
    }

    @Override
    public void lstmCell(float[] x, float[] h, float[] c, float[] s, int hid) {
        int h3 = 3 * hid;
        for (int j = 0; j < h3; j++) {
            s[j] = Activations.sigmoid(x[j]);
        }
        for (int j = 0; j < hid; j++) {
            c[j] = s[2 * hid + j] * c[j] + s[j] * Activations.tanh(x[h3 + j]);
        }
        for (int j = 0; j < hid; j++) {
            h[j] = s[hid + j] * Activations.tanh(c[j]);
        }
    }
}
