package org.cruxset.scoring.kernel;

import jdk.incubator.vector.FloatVector;
import jdk.incubator.vector.VectorSpecies;

/**
 * {@link EngineKernels} on the JDK Vector API (incubator module {@code jdk.incubator.vector}): the output is cut into
 * tiles of R rows × 3 vectors whose accumulators stay in registers over the whole k loop, each step loading three
 * weight vectors and broadcasting R inputs (R = 8 with 512-bit vectors and their 32 registers, else 4); then tiles of
 * one vector, and the last columns (fewer than a vector) in scalar code. Each output element sums its products in
 * order of j with fused multiply-adds, exactly as {@link ScalarKernels} does, so the two give identical floats.
 *
 * <p>Generated code: the tile kernels are unrolled by hand because the JIT keeps vectors in registers only as locals.
 * Only loaded when the module is present ({@link Kernels}).
 */
final class VectorKernels implements EngineKernels {
    private static final VectorSpecies<Float> S = FloatVector.SPECIES_PREFERRED;
    private static final int L = S.length();
    private static final boolean WIDE = S.vectorBitSize() >= 512;
    static final VectorKernels INSTANCE = new VectorKernels();

    private VectorKernels() {
    }

    @Override
    public String name() {
        return "vector-" + S.vectorBitSize();
    }

    @Override
    public PackedMatrix pack(float[][] w, int m) {
        return new PackedMatrix(w, m, 3 * L);
    }

    @Override
    public void gemm(float[][] in, int off, PackedMatrix w, float[][] out, int rows) {
        if (w.width != 3 * L) {
            throw new IllegalArgumentException("matrix packed for panels of " + w.width + " columns, these kernels use "
                    + 3 * L);
        }
        int k = w.k;
        int m = w.m;
        float[] wp = w.panels;
        int c = 0;
        for (int base = 0; c + 3 * L <= m; c += 3 * L, base += 3 * L * k) {
            int i = 0;
            if (WIDE) {
                for (; i + 8 <= rows; i += 8) {
                    p8x3(in, off, wp, base, out, i, k, c);
                }
            }
            for (; i + 4 <= rows; i += 4) {
                p4x3(in, off, wp, base, out, i, k, c);
            }
            for (; i < rows; i++) {
                p1x3(in, off, wp, base, out, i, k, c);
            }
        }
        rest(in, off, w.rows, out, rows, k, m, c);
    }

    @Override
    public void gemm(float[][] in, int off, float[][] w, float[][] out, int rows, int k, int m) {
        int c = 0;
        for (; c + 3 * L <= m; c += 3 * L) {
            int i = 0;
            if (WIDE) {
                for (; i + 8 <= rows; i += 8) {
                    k8x3(in, off, w, out, i, k, c);
                }
            }
            for (; i + 4 <= rows; i += 4) {
                k4x3(in, off, w, out, i, k, c);
            }
            for (; i < rows; i++) {
                k1x3(in, off, w, out, i, k, c);
            }
        }
        rest(in, off, w, out, rows, k, m, c);
    }

    /** Columns {@code [c, m)}, fewer than a tile: one vector at a time, then {@link #tail}. */
    private static void rest(float[][] in, int off, float[][] w, float[][] out, int rows, int k, int m, int c) {
        for (; c + L <= m; c += L) {
            int i = 0;
            for (; i + 4 <= rows; i += 4) {
                k4x1(in, off, w, out, i, k, c);
            }
            for (; i < rows; i++) {
                k1x1(in, off, w, out, i, k, c);
            }
        }
        if (c < m) {
            tail(in, off, w, out, rows, k, m, c);
        }
    }

    /**
     * Columns {@code [c, m)}, fewer than a vector: when {@code m ≥ L}, one full vector ending at m is accumulated from
     * the current outputs and only its last {@code m − c} lanes are kept (the others, already done, are recomputed and
     * dropped), so every element still sums in order of j; otherwise scalar. Masked vector loads and stores would be
     * simpler but are not compiled to vector instructions on Java 17 (measured several times slower).
     */
    private static void tail(float[][] in, int off, float[][] w, float[][] out, int rows, int k, int m, int c) {
        if (m < L) {
            for (int i = 0; i < rows; i++) {
                float[] x = in[i];
                float[] y = out[i];
                for (int col = c; col < m; col++) {
                    float acc = y[col];
                    for (int j = 0; j < k; j++) {
                        acc = Math.fma(w[j][col], x[off + j], acc);
                    }
                    y[col] = acc;
                }
            }
            return;
        }
        int start = m - L;
        float[] lanes = new float[L];
        for (int i = 0; i < rows; i++) {
            float[] x = in[i];
            float[] y = out[i];
            FloatVector a = FloatVector.fromArray(S, y, start);
            for (int j = 0; j < k; j++) {
                a = FloatVector.fromArray(S, w[j], start).fma(FloatVector.broadcast(S, x[off + j]), a);
            }
            a.intoArray(lanes, 0);
            System.arraycopy(lanes, c - start, y, c, m - c);
        }
    }

    // ---------------------------------------------------------------- cell updates

    /** {@link Activations#tanh} lane-wise, the same operations in the same order. */
    static FloatVector tanh(FloatVector v) {
        FloatVector x = v.min(9f).max(-9f);
        FloatVector x2 = x.mul(x);
        FloatVector p = FloatVector.broadcast(S, Activations.TANH_A13)
                .fma(x2, FloatVector.broadcast(S, Activations.TANH_A11));
        p = p.fma(x2, FloatVector.broadcast(S, Activations.TANH_A9));
        p = p.fma(x2, FloatVector.broadcast(S, Activations.TANH_A7));
        p = p.fma(x2, FloatVector.broadcast(S, Activations.TANH_A5));
        p = p.fma(x2, FloatVector.broadcast(S, Activations.TANH_A3));
        p = p.fma(x2, FloatVector.broadcast(S, Activations.TANH_A1)).mul(x);
        FloatVector q = FloatVector.broadcast(S, Activations.TANH_B6)
                .fma(x2, FloatVector.broadcast(S, Activations.TANH_B4));
        q = q.fma(x2, FloatVector.broadcast(S, Activations.TANH_B2));
        q = q.fma(x2, FloatVector.broadcast(S, Activations.TANH_B0));
        return p.div(q);
    }

    /** {@link Activations#sigmoid} lane-wise. */
    static FloatVector sigmoid(FloatVector v) {
        return tanh(v.mul(0.5f)).fma(0.5f, 0.5f);
    }

    /*
     * Each loop below inlines a single tanh: with more, the method outgrows the JIT's inlining budget, the vector
     * operations stay calls on boxed vectors and run several times slower (measured).
     */

    /** {@code s[j] = σ(x[j] + g[j])} for {@code j < n}. */
    private static void sigmoidOfSum(float[] x, float[] g, float[] s, int n) {
        int j = 0;
        for (; j + L <= n; j += L) {
            sigmoid(FloatVector.fromArray(S, x, j).add(FloatVector.fromArray(S, g, j))).intoArray(s, j);
        }
        for (; j < n; j++) {
            s[j] = Activations.sigmoid(x[j] + g[j]);
        }
    }

    @Override
    public void gruLinearBeforeReset(float[] x, float[] g, float[] rbh3, float[] h, float[] s, float[] c, int hid) {
        int h2 = 2 * hid;
        sigmoidOfSum(x, g, s, h2);
        int j = 0;
        for (; j + L <= hid; j += L) {
            FloatVector r = FloatVector.fromArray(S, s, hid + j);
            FloatVector gh = FloatVector.fromArray(S, g, h2 + j).add(FloatVector.fromArray(S, rbh3, h2 + j));
            FloatVector n = tanh(FloatVector.fromArray(S, x, h2 + j).add(r.mul(gh)));
            FloatVector z = FloatVector.fromArray(S, s, j);
            n.add(z.mul(FloatVector.fromArray(S, h, j).sub(n))).intoArray(h, j);
        }
        for (; j < hid; j++) {
            float n = Activations.tanh(x[h2 + j] + s[hid + j] * (g[h2 + j] + rbh3[h2 + j]));
            h[j] = n + s[j] * (h[j] - n);
        }
    }

    @Override
    public void gruResetGates(float[] x, float[] g, float[] h, float[] z, float[] rh, float[] s, float[] c, int hid) {
        sigmoidOfSum(x, g, s, 2 * hid);
        System.arraycopy(s, 0, z, 0, hid);
        int j = 0;
        for (; j + L <= hid; j += L) {
            FloatVector.fromArray(S, s, hid + j).mul(FloatVector.fromArray(S, h, j)).intoArray(rh, j);
        }
        for (; j < hid; j++) {
            rh[j] = s[hid + j] * h[j];
        }
    }

    @Override
    public void gruCandidate(float[] x, float[] g, float[] rbh, float[] z, float[] h, float[] c, int hid) {
        int h2 = 2 * hid;
        int j = 0;
        for (; j + L <= hid; j += L) {
            FloatVector n = tanh(FloatVector.fromArray(S, x, h2 + j).add(FloatVector.fromArray(S, g, j))
                    .add(FloatVector.fromArray(S, rbh, j)));
            n.add(FloatVector.fromArray(S, z, j).mul(FloatVector.fromArray(S, h, j).sub(n))).intoArray(h, j);
        }
        for (; j < hid; j++) {
            float n = Activations.tanh(x[h2 + j] + g[j] + rbh[j]);
            h[j] = n + z[j] * (h[j] - n);
        }
    }

    @Override
    public void lstmCell(float[] x, float[] h, float[] c, float[] s, int hid) {
        int h3 = 3 * hid;
        int j = 0;
        for (; j + L <= h3; j += L) {
            sigmoid(FloatVector.fromArray(S, x, j)).intoArray(s, j);
        }
        for (; j < h3; j++) {
            s[j] = Activations.sigmoid(x[j]);
        }
        for (j = 0; j + L <= hid; j += L) {
            FloatVector f = FloatVector.fromArray(S, s, 2 * hid + j);
            FloatVector i = FloatVector.fromArray(S, s, j);
            f.mul(FloatVector.fromArray(S, c, j)).add(i.mul(tanh(FloatVector.fromArray(S, x, h3 + j)))).intoArray(c, j);
        }
        for (; j < hid; j++) {
            c[j] = s[2 * hid + j] * c[j] + s[j] * Activations.tanh(x[h3 + j]);
        }
        for (j = 0; j + L <= hid; j += L) {
            FloatVector.fromArray(S, s, hid + j).mul(tanh(FloatVector.fromArray(S, c, j))).intoArray(h, j);
        }
        for (; j < hid; j++) {
            h[j] = s[hid + j] * Activations.tanh(c[j]);
        }
    }

    // ---------------------------------------------------------------- generated tile kernels

    private static void k8x3(float[][] in, int off, float[][] w, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        float[] y1 = out[i + 1];
        float[] x1 = in[i + 1];
        float[] y2 = out[i + 2];
        float[] x2 = in[i + 2];
        float[] y3 = out[i + 3];
        float[] x3 = in[i + 3];
        float[] y4 = out[i + 4];
        float[] x4 = in[i + 4];
        float[] y5 = out[i + 5];
        float[] x5 = in[i + 5];
        float[] y6 = out[i + 6];
        float[] x6 = in[i + 6];
        float[] y7 = out[i + 7];
        float[] x7 = in[i + 7];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a01 = FloatVector.fromArray(S, y0, c + L);
        FloatVector a02 = FloatVector.fromArray(S, y0, c + 2 * L);
        FloatVector a10 = FloatVector.fromArray(S, y1, c);
        FloatVector a11 = FloatVector.fromArray(S, y1, c + L);
        FloatVector a12 = FloatVector.fromArray(S, y1, c + 2 * L);
        FloatVector a20 = FloatVector.fromArray(S, y2, c);
        FloatVector a21 = FloatVector.fromArray(S, y2, c + L);
        FloatVector a22 = FloatVector.fromArray(S, y2, c + 2 * L);
        FloatVector a30 = FloatVector.fromArray(S, y3, c);
        FloatVector a31 = FloatVector.fromArray(S, y3, c + L);
        FloatVector a32 = FloatVector.fromArray(S, y3, c + 2 * L);
        FloatVector a40 = FloatVector.fromArray(S, y4, c);
        FloatVector a41 = FloatVector.fromArray(S, y4, c + L);
        FloatVector a42 = FloatVector.fromArray(S, y4, c + 2 * L);
        FloatVector a50 = FloatVector.fromArray(S, y5, c);
        FloatVector a51 = FloatVector.fromArray(S, y5, c + L);
        FloatVector a52 = FloatVector.fromArray(S, y5, c + 2 * L);
        FloatVector a60 = FloatVector.fromArray(S, y6, c);
        FloatVector a61 = FloatVector.fromArray(S, y6, c + L);
        FloatVector a62 = FloatVector.fromArray(S, y6, c + 2 * L);
        FloatVector a70 = FloatVector.fromArray(S, y7, c);
        FloatVector a71 = FloatVector.fromArray(S, y7, c + L);
        FloatVector a72 = FloatVector.fromArray(S, y7, c + 2 * L);
        for (int j = 0; j < k; j++) {
            float[] wj = w[j];
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wj, c);
            FloatVector w1 = FloatVector.fromArray(S, wj, c + L);
            FloatVector w2 = FloatVector.fromArray(S, wj, c + 2 * L);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            a01 = w1.fma(b0, a01);
            a02 = w2.fma(b0, a02);
            FloatVector b1 = FloatVector.broadcast(S, x1[o]);
            a10 = w0.fma(b1, a10);
            a11 = w1.fma(b1, a11);
            a12 = w2.fma(b1, a12);
            FloatVector b2 = FloatVector.broadcast(S, x2[o]);
            a20 = w0.fma(b2, a20);
            a21 = w1.fma(b2, a21);
            a22 = w2.fma(b2, a22);
            FloatVector b3 = FloatVector.broadcast(S, x3[o]);
            a30 = w0.fma(b3, a30);
            a31 = w1.fma(b3, a31);
            a32 = w2.fma(b3, a32);
            FloatVector b4 = FloatVector.broadcast(S, x4[o]);
            a40 = w0.fma(b4, a40);
            a41 = w1.fma(b4, a41);
            a42 = w2.fma(b4, a42);
            FloatVector b5 = FloatVector.broadcast(S, x5[o]);
            a50 = w0.fma(b5, a50);
            a51 = w1.fma(b5, a51);
            a52 = w2.fma(b5, a52);
            FloatVector b6 = FloatVector.broadcast(S, x6[o]);
            a60 = w0.fma(b6, a60);
            a61 = w1.fma(b6, a61);
            a62 = w2.fma(b6, a62);
            FloatVector b7 = FloatVector.broadcast(S, x7[o]);
            a70 = w0.fma(b7, a70);
            a71 = w1.fma(b7, a71);
            a72 = w2.fma(b7, a72);
        }
        a00.intoArray(y0, c);
        a01.intoArray(y0, c + L);
        a02.intoArray(y0, c + 2 * L);
        a10.intoArray(y1, c);
        a11.intoArray(y1, c + L);
        a12.intoArray(y1, c + 2 * L);
        a20.intoArray(y2, c);
        a21.intoArray(y2, c + L);
        a22.intoArray(y2, c + 2 * L);
        a30.intoArray(y3, c);
        a31.intoArray(y3, c + L);
        a32.intoArray(y3, c + 2 * L);
        a40.intoArray(y4, c);
        a41.intoArray(y4, c + L);
        a42.intoArray(y4, c + 2 * L);
        a50.intoArray(y5, c);
        a51.intoArray(y5, c + L);
        a52.intoArray(y5, c + 2 * L);
        a60.intoArray(y6, c);
        a61.intoArray(y6, c + L);
        a62.intoArray(y6, c + 2 * L);
        a70.intoArray(y7, c);
        a71.intoArray(y7, c + L);
        a72.intoArray(y7, c + 2 * L);
    }

    private static void k4x3(float[][] in, int off, float[][] w, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        float[] y1 = out[i + 1];
        float[] x1 = in[i + 1];
        float[] y2 = out[i + 2];
        float[] x2 = in[i + 2];
        float[] y3 = out[i + 3];
        float[] x3 = in[i + 3];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a01 = FloatVector.fromArray(S, y0, c + L);
        FloatVector a02 = FloatVector.fromArray(S, y0, c + 2 * L);
        FloatVector a10 = FloatVector.fromArray(S, y1, c);
        FloatVector a11 = FloatVector.fromArray(S, y1, c + L);
        FloatVector a12 = FloatVector.fromArray(S, y1, c + 2 * L);
        FloatVector a20 = FloatVector.fromArray(S, y2, c);
        FloatVector a21 = FloatVector.fromArray(S, y2, c + L);
        FloatVector a22 = FloatVector.fromArray(S, y2, c + 2 * L);
        FloatVector a30 = FloatVector.fromArray(S, y3, c);
        FloatVector a31 = FloatVector.fromArray(S, y3, c + L);
        FloatVector a32 = FloatVector.fromArray(S, y3, c + 2 * L);
        for (int j = 0; j < k; j++) {
            float[] wj = w[j];
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wj, c);
            FloatVector w1 = FloatVector.fromArray(S, wj, c + L);
            FloatVector w2 = FloatVector.fromArray(S, wj, c + 2 * L);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            a01 = w1.fma(b0, a01);
            a02 = w2.fma(b0, a02);
            FloatVector b1 = FloatVector.broadcast(S, x1[o]);
            a10 = w0.fma(b1, a10);
            a11 = w1.fma(b1, a11);
            a12 = w2.fma(b1, a12);
            FloatVector b2 = FloatVector.broadcast(S, x2[o]);
            a20 = w0.fma(b2, a20);
            a21 = w1.fma(b2, a21);
            a22 = w2.fma(b2, a22);
            FloatVector b3 = FloatVector.broadcast(S, x3[o]);
            a30 = w0.fma(b3, a30);
            a31 = w1.fma(b3, a31);
            a32 = w2.fma(b3, a32);
        }
        a00.intoArray(y0, c);
        a01.intoArray(y0, c + L);
        a02.intoArray(y0, c + 2 * L);
        a10.intoArray(y1, c);
        a11.intoArray(y1, c + L);
        a12.intoArray(y1, c + 2 * L);
        a20.intoArray(y2, c);
        a21.intoArray(y2, c + L);
        a22.intoArray(y2, c + 2 * L);
        a30.intoArray(y3, c);
        a31.intoArray(y3, c + L);
        a32.intoArray(y3, c + 2 * L);
    }

    private static void k1x3(float[][] in, int off, float[][] w, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a01 = FloatVector.fromArray(S, y0, c + L);
        FloatVector a02 = FloatVector.fromArray(S, y0, c + 2 * L);
        for (int j = 0; j < k; j++) {
            float[] wj = w[j];
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wj, c);
            FloatVector w1 = FloatVector.fromArray(S, wj, c + L);
            FloatVector w2 = FloatVector.fromArray(S, wj, c + 2 * L);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            a01 = w1.fma(b0, a01);
            a02 = w2.fma(b0, a02);
        }
        a00.intoArray(y0, c);
        a01.intoArray(y0, c + L);
        a02.intoArray(y0, c + 2 * L);
    }

    private static void k4x1(float[][] in, int off, float[][] w, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        float[] y1 = out[i + 1];
        float[] x1 = in[i + 1];
        float[] y2 = out[i + 2];
        float[] x2 = in[i + 2];
        float[] y3 = out[i + 3];
        float[] x3 = in[i + 3];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a10 = FloatVector.fromArray(S, y1, c);
        FloatVector a20 = FloatVector.fromArray(S, y2, c);
        FloatVector a30 = FloatVector.fromArray(S, y3, c);
        for (int j = 0; j < k; j++) {
            float[] wj = w[j];
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wj, c);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            FloatVector b1 = FloatVector.broadcast(S, x1[o]);
            a10 = w0.fma(b1, a10);
            FloatVector b2 = FloatVector.broadcast(S, x2[o]);
            a20 = w0.fma(b2, a20);
            FloatVector b3 = FloatVector.broadcast(S, x3[o]);
            a30 = w0.fma(b3, a30);
        }
        a00.intoArray(y0, c);
        a10.intoArray(y1, c);
        a20.intoArray(y2, c);
        a30.intoArray(y3, c);
    }

    private static void k1x1(float[][] in, int off, float[][] w, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        for (int j = 0; j < k; j++) {
            float[] wj = w[j];
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wj, c);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
        }
        a00.intoArray(y0, c);
    }

    private static void p8x3(float[][] in, int off, float[] wp, int base, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        float[] y1 = out[i + 1];
        float[] x1 = in[i + 1];
        float[] y2 = out[i + 2];
        float[] x2 = in[i + 2];
        float[] y3 = out[i + 3];
        float[] x3 = in[i + 3];
        float[] y4 = out[i + 4];
        float[] x4 = in[i + 4];
        float[] y5 = out[i + 5];
        float[] x5 = in[i + 5];
        float[] y6 = out[i + 6];
        float[] x6 = in[i + 6];
        float[] y7 = out[i + 7];
        float[] x7 = in[i + 7];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a01 = FloatVector.fromArray(S, y0, c + L);
        FloatVector a02 = FloatVector.fromArray(S, y0, c + 2 * L);
        FloatVector a10 = FloatVector.fromArray(S, y1, c);
        FloatVector a11 = FloatVector.fromArray(S, y1, c + L);
        FloatVector a12 = FloatVector.fromArray(S, y1, c + 2 * L);
        FloatVector a20 = FloatVector.fromArray(S, y2, c);
        FloatVector a21 = FloatVector.fromArray(S, y2, c + L);
        FloatVector a22 = FloatVector.fromArray(S, y2, c + 2 * L);
        FloatVector a30 = FloatVector.fromArray(S, y3, c);
        FloatVector a31 = FloatVector.fromArray(S, y3, c + L);
        FloatVector a32 = FloatVector.fromArray(S, y3, c + 2 * L);
        FloatVector a40 = FloatVector.fromArray(S, y4, c);
        FloatVector a41 = FloatVector.fromArray(S, y4, c + L);
        FloatVector a42 = FloatVector.fromArray(S, y4, c + 2 * L);
        FloatVector a50 = FloatVector.fromArray(S, y5, c);
        FloatVector a51 = FloatVector.fromArray(S, y5, c + L);
        FloatVector a52 = FloatVector.fromArray(S, y5, c + 2 * L);
        FloatVector a60 = FloatVector.fromArray(S, y6, c);
        FloatVector a61 = FloatVector.fromArray(S, y6, c + L);
        FloatVector a62 = FloatVector.fromArray(S, y6, c + 2 * L);
        FloatVector a70 = FloatVector.fromArray(S, y7, c);
        FloatVector a71 = FloatVector.fromArray(S, y7, c + L);
        FloatVector a72 = FloatVector.fromArray(S, y7, c + 2 * L);
        for (int j = 0, p = base; j < k; j++, p += 3 * L) {
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wp, p);
            FloatVector w1 = FloatVector.fromArray(S, wp, p + L);
            FloatVector w2 = FloatVector.fromArray(S, wp, p + 2 * L);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            a01 = w1.fma(b0, a01);
            a02 = w2.fma(b0, a02);
            FloatVector b1 = FloatVector.broadcast(S, x1[o]);
            a10 = w0.fma(b1, a10);
            a11 = w1.fma(b1, a11);
            a12 = w2.fma(b1, a12);
            FloatVector b2 = FloatVector.broadcast(S, x2[o]);
            a20 = w0.fma(b2, a20);
            a21 = w1.fma(b2, a21);
            a22 = w2.fma(b2, a22);
            FloatVector b3 = FloatVector.broadcast(S, x3[o]);
            a30 = w0.fma(b3, a30);
            a31 = w1.fma(b3, a31);
            a32 = w2.fma(b3, a32);
            FloatVector b4 = FloatVector.broadcast(S, x4[o]);
            a40 = w0.fma(b4, a40);
            a41 = w1.fma(b4, a41);
            a42 = w2.fma(b4, a42);
            FloatVector b5 = FloatVector.broadcast(S, x5[o]);
            a50 = w0.fma(b5, a50);
            a51 = w1.fma(b5, a51);
            a52 = w2.fma(b5, a52);
            FloatVector b6 = FloatVector.broadcast(S, x6[o]);
            a60 = w0.fma(b6, a60);
            a61 = w1.fma(b6, a61);
            a62 = w2.fma(b6, a62);
            FloatVector b7 = FloatVector.broadcast(S, x7[o]);
            a70 = w0.fma(b7, a70);
            a71 = w1.fma(b7, a71);
            a72 = w2.fma(b7, a72);
        }
        a00.intoArray(y0, c);
        a01.intoArray(y0, c + L);
        a02.intoArray(y0, c + 2 * L);
        a10.intoArray(y1, c);
        a11.intoArray(y1, c + L);
        a12.intoArray(y1, c + 2 * L);
        a20.intoArray(y2, c);
        a21.intoArray(y2, c + L);
        a22.intoArray(y2, c + 2 * L);
        a30.intoArray(y3, c);
        a31.intoArray(y3, c + L);
        a32.intoArray(y3, c + 2 * L);
        a40.intoArray(y4, c);
        a41.intoArray(y4, c + L);
        a42.intoArray(y4, c + 2 * L);
        a50.intoArray(y5, c);
        a51.intoArray(y5, c + L);
        a52.intoArray(y5, c + 2 * L);
        a60.intoArray(y6, c);
        a61.intoArray(y6, c + L);
        a62.intoArray(y6, c + 2 * L);
        a70.intoArray(y7, c);
        a71.intoArray(y7, c + L);
        a72.intoArray(y7, c + 2 * L);
    }

    private static void p4x3(float[][] in, int off, float[] wp, int base, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        float[] y1 = out[i + 1];
        float[] x1 = in[i + 1];
        float[] y2 = out[i + 2];
        float[] x2 = in[i + 2];
        float[] y3 = out[i + 3];
        float[] x3 = in[i + 3];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a01 = FloatVector.fromArray(S, y0, c + L);
        FloatVector a02 = FloatVector.fromArray(S, y0, c + 2 * L);
        FloatVector a10 = FloatVector.fromArray(S, y1, c);
        FloatVector a11 = FloatVector.fromArray(S, y1, c + L);
        FloatVector a12 = FloatVector.fromArray(S, y1, c + 2 * L);
        FloatVector a20 = FloatVector.fromArray(S, y2, c);
        FloatVector a21 = FloatVector.fromArray(S, y2, c + L);
        FloatVector a22 = FloatVector.fromArray(S, y2, c + 2 * L);
        FloatVector a30 = FloatVector.fromArray(S, y3, c);
        FloatVector a31 = FloatVector.fromArray(S, y3, c + L);
        FloatVector a32 = FloatVector.fromArray(S, y3, c + 2 * L);
        for (int j = 0, p = base; j < k; j++, p += 3 * L) {
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wp, p);
            FloatVector w1 = FloatVector.fromArray(S, wp, p + L);
            FloatVector w2 = FloatVector.fromArray(S, wp, p + 2 * L);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            a01 = w1.fma(b0, a01);
            a02 = w2.fma(b0, a02);
            FloatVector b1 = FloatVector.broadcast(S, x1[o]);
            a10 = w0.fma(b1, a10);
            a11 = w1.fma(b1, a11);
            a12 = w2.fma(b1, a12);
            FloatVector b2 = FloatVector.broadcast(S, x2[o]);
            a20 = w0.fma(b2, a20);
            a21 = w1.fma(b2, a21);
            a22 = w2.fma(b2, a22);
            FloatVector b3 = FloatVector.broadcast(S, x3[o]);
            a30 = w0.fma(b3, a30);
            a31 = w1.fma(b3, a31);
            a32 = w2.fma(b3, a32);
        }
        a00.intoArray(y0, c);
        a01.intoArray(y0, c + L);
        a02.intoArray(y0, c + 2 * L);
        a10.intoArray(y1, c);
        a11.intoArray(y1, c + L);
        a12.intoArray(y1, c + 2 * L);
        a20.intoArray(y2, c);
        a21.intoArray(y2, c + L);
        a22.intoArray(y2, c + 2 * L);
        a30.intoArray(y3, c);
        a31.intoArray(y3, c + L);
        a32.intoArray(y3, c + 2 * L);
    }

    private static void p1x3(float[][] in, int off, float[] wp, int base, float[][] out, int i, int k, int c) {
        float[] y0 = out[i];
        float[] x0 = in[i];
        FloatVector a00 = FloatVector.fromArray(S, y0, c);
        FloatVector a01 = FloatVector.fromArray(S, y0, c + L);
        FloatVector a02 = FloatVector.fromArray(S, y0, c + 2 * L);
        for (int j = 0, p = base; j < k; j++, p += 3 * L) {
            int o = off + j;
            FloatVector w0 = FloatVector.fromArray(S, wp, p);
            FloatVector w1 = FloatVector.fromArray(S, wp, p + L);
            FloatVector w2 = FloatVector.fromArray(S, wp, p + 2 * L);
            FloatVector b0 = FloatVector.broadcast(S, x0[o]);
            a00 = w0.fma(b0, a00);
            a01 = w1.fma(b0, a01);
            a02 = w2.fma(b0, a02);
        }
        a00.intoArray(y0, c);
        a01.intoArray(y0, c + L);
        a02.intoArray(y0, c + 2 * L);
    }
}
