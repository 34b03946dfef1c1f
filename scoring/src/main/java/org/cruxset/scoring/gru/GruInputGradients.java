package org.cruxset.scoring.gru;

import java.util.List;

/**
 * The float fast path of input gradients: for a block of samples at a time, the forward pass and backpropagation
 * through time of a {@link GruNetwork} (either gate form per layer, stacked layers, the affine readout of each
 * sample's last valid step), every per-step product done for the whole block by the engine's {@link
 * NativeRecurrentDecoder#gemm} kernel. Gives the gradient of each sample's target class score (pre-softmax) or its
 * log-probability with respect to every input value. Checked against the double-precision path
 * ({@code train.GruGradients}). Immutable weights; {@link #gradients} may be called from several threads.
 */
public final class GruInputGradients {
    private final GruNetwork net;
    private final int layers;
    private final int classes;
    private final int[] in;
    private final int[] hid;
    private final boolean[] lbr;
    private final float[][][] wT;    // [l][input j][3H]: forward input projection rows
    private final float[][][] wRows; // [l][gate g][input]: backward to the inputs
    private final float[][][] rTzr;  // [l][hidden j][2H]
    private final float[][][] rTh;   // [l][hidden j][H]
    private final float[][][] rRows; // [l][gate g][H]: backward to the state (all three gates)
    private final float[][] wb;
    private final float[][] rb;
    private final float[] readout;
    private final float[] bias;

    /** Prepares the weight layouts of {@code network}. */
    public GruInputGradients(GruNetwork network) {
        this.net = network;
        List<GruLayer> ls = network.layers();
        layers = ls.size();
        classes = network.classes();
        in = new int[layers];
        hid = new int[layers];
        lbr = new boolean[layers];
        wT = new float[layers][][];
        wRows = new float[layers][][];
        rTzr = new float[layers][][];
        rTh = new float[layers][][];
        rRows = new float[layers][][];
        wb = new float[layers][];
        rb = new float[layers][];
        for (int l = 0; l < layers; l++) {
            GruLayer g = ls.get(l);
            int n = g.input();
            int h = g.hidden();
            in[l] = n;
            hid[l] = h;
            lbr[l] = g.linearBeforeReset();
            float[] w = g.w();
            float[] r = g.r();
            wT[l] = new float[n][3 * h];
            wRows[l] = new float[3 * h][n];
            for (int q = 0; q < 3 * h; q++) {
                for (int j = 0; j < n; j++) {
                    wT[l][j][q] = w[q * n + j];
                    wRows[l][q][j] = w[q * n + j];
                }
            }
            rTzr[l] = new float[h][2 * h];
            rTh[l] = new float[h][h];
            rRows[l] = new float[3 * h][h];
            for (int q = 0; q < 3 * h; q++) {
                for (int j = 0; j < h; j++) {
                    float v = r[q * h + j];
                    if (q < 2 * h) {
                        rTzr[l][j][q] = v;
                    } else {
                        rTh[l][j][q - 2 * h] = v;
                    }
                    rRows[l][q][j] = v;
                }
            }
            wb[l] = g.wb();
            rb[l] = g.rb();
        }
        readout = network.readout();
        bias = network.bias();
    }

    /** The network. */
    public GruNetwork network() {
        return net;
    }

    /**
     * Input gradients of a block: {@code x[b]} time-major ({@code lengths[b] × inputs}), {@code targets[b]} the class;
     * writes the gradient of the class score (or with {@code logProbability} its log-probability) into
     * {@code out[b]} (at least {@code lengths[b] × inputs} long) and returns those values.
     */
    public double[] gradients(float[][] x, int[] lengths, int[] targets, boolean logProbability, float[][] out) {
        int bn = x.length;
        int tMax = 0;
        for (int len : lengths) {
            tMax = Math.max(tMax, len);
        }
        // Forward, keeping every layer's states and gates.
        float[][][] hs = new float[layers][bn][];
        float[][][] zs = new float[layers][bn][];
        float[][][] rs = new float[layers][bn][];
        float[][][] cs = new float[layers][bn][];
        float[][][] us = new float[layers][bn][];
        float[][] input = new float[bn][];
        for (int b = 0; b < bn; b++) {
            float[] padded = new float[tMax * in[0]];
            System.arraycopy(x[b], 0, padded, 0, lengths[b] * in[0]);
            input[b] = padded;
        }
        for (int l = 0; l < layers; l++) {
            int h = hid[l];
            int g3 = 3 * h;
            float[][] pre = new float[bn][g3];
            float[][] rec = new float[bn][2 * h];
            float[][] recH = new float[bn][h];
            float[][] q = new float[bn][h];
            for (int b = 0; b < bn; b++) {
                hs[l][b] = new float[(tMax + 1) * h];
                zs[l][b] = new float[tMax * h];
                rs[l][b] = new float[tMax * h];
                cs[l][b] = new float[tMax * h];
                us[l][b] = lbr[l] ? new float[tMax * h] : null;
            }
            for (int t = 0; t < tMax; t++) {
                for (int b = 0; b < bn; b++) {
                    System.arraycopy(wb[l], 0, pre[b], 0, g3);
                    System.arraycopy(rb[l], 0, rec[b], 0, 2 * h);
                    System.arraycopy(rb[l], 2 * h, recH[b], 0, h);
                }
                int stride = l == 0 ? in[0] : hid[l - 1];
                // layer 0 reads the inputs at step t; a higher layer reads the states h_{t+1} of the one below
                NativeRecurrentDecoder.gemm(input, (l == 0 ? t : t + 1) * stride, wT[l], pre, bn, in[l], g3);
                NativeRecurrentDecoder.gemm(hs[l], t * h, rTzr[l], rec, bn, h, 2 * h);
                if (lbr[l]) {
                    NativeRecurrentDecoder.gemm(hs[l], t * h, rTh[l], recH, bn, h, h);
                }
                for (int b = 0; b < bn; b++) {
                    float[] hp = hs[l][b];
                    int o = t * h;
                    for (int j = 0; j < h; j++) {
                        float z = org.cruxset.scoring.kernel.Activations.sigmoid(pre[b][j] + rec[b][j]);
                        float r = org.cruxset.scoring.kernel.Activations.sigmoid(pre[b][h + j] + rec[b][h + j]);
                        zs[l][b][o + j] = z;
                        rs[l][b][o + j] = r;
                        q[b][j] = r * hp[o + j];
                    }
                }
                if (!lbr[l]) {
                    NativeRecurrentDecoder.gemm(q, 0, rTh[l], recH, bn, h, h);
                }
                for (int b = 0; b < bn; b++) {
                    float[] hp = hs[l][b];
                    int o = t * h;
                    for (int j = 0; j < h; j++) {
                        float r = rs[l][b][o + j];
                        float c;
                        if (lbr[l]) {
                            us[l][b][o + j] = recH[b][j];
                            c = org.cruxset.scoring.kernel.Activations.tanh(pre[b][2 * h + j] + r * recH[b][j]);
                        } else {
                            c = org.cruxset.scoring.kernel.Activations.tanh(pre[b][2 * h + j] + recH[b][j]);
                        }
                        cs[l][b][o + j] = c;
                        float z = zs[l][b][o + j];
                        hp[o + h + j] = c + z * (hp[o + j] - c);
                    }
                }
            }
            input = hs[l];
        }
        // Readout at each sample's last valid step, and the gradient at the class scores.
        int top = layers - 1;
        int hTop = hid[top];
        double[] values = new double[bn];
        float[][] dyTop = new float[bn][];
        for (int b = 0; b < bn; b++) {
            int last = lengths[b] * hTop;
            double[] s = new double[classes];
            double max = Double.NEGATIVE_INFINITY;
            for (int k = 0; k < classes; k++) {
                double v = bias[k];
                for (int j = 0; j < hTop; j++) {
                    v += readout[k * hTop + j] * hs[top][b][last + j];
                }
                s[k] = v;
                max = Math.max(max, v);
            }
            double sum = 0;
            for (int k = 0; k < classes; k++) {
                sum += Math.exp(s[k] - max);
            }
            int y = targets[b];
            values[b] = logProbability ? s[y] - max - Math.log(sum) : s[y];
            float[] dy = new float[tMax * hTop];
            int o = (lengths[b] - 1) * hTop;
            for (int k = 0; k < classes; k++) {
                double d = (k == y ? 1 : 0) - (logProbability ? Math.exp(s[k] - max) / sum : 0);
                if (d != 0) {
                    for (int j = 0; j < hTop; j++) {
                        dy[o + j] += (float) (d * readout[k * hTop + j]);
                    }
                }
            }
            dyTop[b] = dy;
        }
        // Backward through the layers.
        float[][] dy = dyTop;
        for (int l = top; l >= 0; l--) {
            int h = hid[l];
            int g3 = 3 * h;
            int n = in[l];
            float[][] dh = new float[bn][h];
            float[][] dNew = new float[bn][h];
            float[][] da = new float[bn][g3];     // at the input pre-activations (z, r, candidate)
            float[][] dRec = new float[bn][g3];   // at the recurrent pre-activations (z, r, candidate)
            float[][] dq = new float[bn][h];
            float[][] dcp = new float[bn][h];
            float[][] dX = new float[bn][n];
            float[][] below = new float[bn][];
            for (int b = 0; b < bn; b++) {
                below[b] = new float[tMax * n];
            }
            for (int t = tMax - 1; t >= 0; t--) {
                int o = t * h;
                for (int b = 0; b < bn; b++) {
                    float[] d = dh[b];
                    float[] inj = dy[b];
                    float[] hp = hs[l][b];
                    for (int j = 0; j < h; j++) {
                        d[j] += inj[o + j];
                        float z = zs[l][b][o + j];
                        float c = cs[l][b][o + j];
                        float hprev = hp[o + j];
                        float dc = d[j] * (1 - z);
                        float dz = d[j] * (hprev - c);
                        float p = dc * (1 - c * c);
                        dcp[b][j] = p;
                        da[b][2 * h + j] = p;
                        da[b][j] = dz * z * (1 - z);
                        dRec[b][j] = da[b][j];
                        d[j] = d[j] * z;
                    }
                }
                if (lbr[l]) {
                    for (int b = 0; b < bn; b++) {
                        for (int j = 0; j < h; j++) {
                            float r = rs[l][b][o + j];
                            float p = dcp[b][j];
                            dRec[b][2 * h + j] = p * r;
                            float dr = p * us[l][b][o + j];
                            da[b][h + j] = dr * r * (1 - r);
                            dRec[b][h + j] = da[b][h + j];
                        }
                        java.util.Arrays.fill(dNew[b], 0f);
                    }
                    NativeRecurrentDecoder.gemm(dRec, 0, rRows[l], dNew, bn, g3, h);
                } else {
                    for (int b = 0; b < bn; b++) {
                        java.util.Arrays.fill(dq[b], 0f);
                        java.util.Arrays.fill(dNew[b], 0f);
                    }
                    // dq = R_h^T dc': rows of R for the candidate gate
                    gemmRows(dcp, rRows[l], 2 * h, dq, bn, h, h);
                    for (int b = 0; b < bn; b++) {
                        float[] hp = hs[l][b];
                        for (int j = 0; j < h; j++) {
                            float r = rs[l][b][o + j];
                            float dr = dq[b][j] * hp[o + j];
                            dh[b][j] += dq[b][j] * r;
                            da[b][h + j] = dr * r * (1 - r);
                            dRec[b][h + j] = da[b][h + j];
                            dRec[b][2 * h + j] = 0f;
                        }
                    }
                    NativeRecurrentDecoder.gemm(dRec, 0, rRows[l], dNew, bn, 2 * h, h);
                }
                for (int b = 0; b < bn; b++) {
                    float[] d = dh[b];
                    float[] e = dNew[b];
                    for (int j = 0; j < h; j++) {
                        d[j] += e[j];
                    }
                    java.util.Arrays.fill(dX[b], 0f);
                }
                NativeRecurrentDecoder.gemm(da, 0, wRows[l], dX, bn, g3, n);
                for (int b = 0; b < bn; b++) {
                    if (t < lengths[b]) {
                        System.arraycopy(dX[b], 0, below[b], t * n, n);
                    }
                }
            }
            dy = below;
        }
        for (int b = 0; b < bn; b++) {
            System.arraycopy(dy[b], 0, out[b], 0, lengths[b] * in[0]);
        }
        return values;
    }

    /** {@code out[i][0..m) += Σ_{j<k} in[i][j] · w[first + j][0..m)}: {@link NativeRecurrentDecoder#gemm} on a slice of rows. */
    private static void gemmRows(float[][] in, float[][] w, int first, float[][] out, int rows, int k, int m) {
        float[][] slice = new float[k][];
        System.arraycopy(w, first, slice, 0, k);
        NativeRecurrentDecoder.gemm(in, 0, slice, out, rows, k, m);
    }
}
