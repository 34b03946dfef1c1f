package org.cruxset.scoring.train;

/**
 * Double-precision forward pass and backpropagation through time of a {@link GruParameters} classifier for one
 * sample at a time, in either gate form per layer ({@code linear_before_reset} 0 or 1), to the parameters (training)
 * and to the inputs (saliency). An instance owns its scratch buffers and is not thread-safe: use one per thread.
 */
public final class GruGradients {
    private final GruParameters p;
    private final int layers;
    private final int maxLength;
    // per layer caches, [t * H + j]
    private final double[][] hs;   // states h_t, row t = state after step t; row index shifted by one (row 0 = h_0 = 0)
    private final double[][] zs;
    private final double[][] rs;
    private final double[][] cs;
    private final double[][] us;   // linear_before_reset = 1: the candidate's recurrent term R_h h + Rb_h
    private final double[][] dy;   // gradient w.r.t. this layer's outputs h_1..h_T
    private final double[] logits;
    private final double[] prob;
    private final double[][] wt;   // transposed W per layer: [i * 3H + g]
    private final double[][] rtT;  // transposed R per layer: [j * 3H + g]

    /** Scratch for sequences up to {@code maxLength} steps. */
    public GruGradients(GruParameters params, int maxLength) {
        this.p = params;
        this.layers = params.layers();
        this.maxLength = maxLength;
        hs = new double[layers][];
        zs = new double[layers][];
        rs = new double[layers][];
        cs = new double[layers][];
        us = new double[layers][];
        dy = new double[layers][];
        wt = new double[layers][];
        rtT = new double[layers][];
        for (int l = 0; l < layers; l++) {
            int h = params.hiddens[l];
            hs[l] = new double[(maxLength + 1) * h];
            zs[l] = new double[maxLength * h];
            rs[l] = new double[maxLength * h];
            cs[l] = new double[maxLength * h];
            us[l] = params.linearBeforeReset[l] ? new double[maxLength * h] : null;
            dy[l] = new double[maxLength * h];
            wt[l] = new double[params.inputs[l] * 3 * h];
            rtT[l] = new double[h * 3 * h];
        }
        logits = new double[params.classes];
        prob = new double[params.classes];
    }

    /** Refreshes the transposed weight copies; call after the parameters change and before {@link #forward}. */
    public void refresh() {
        double[] v = p.values;
        for (int l = 0; l < layers; l++) {
            int h = p.hiddens[l];
            int in = p.inputs[l];
            int g3 = 3 * h;
            double[] w = wt[l];
            for (int g = 0; g < g3; g++) {
                int base = p.offW[l] + g * in;
                for (int i = 0; i < in; i++) {
                    w[i * g3 + g] = v[base + i];
                }
            }
            double[] r = rtT[l];
            for (int g = 0; g < g3; g++) {
                int base = p.offR[l] + g * h;
                for (int j = 0; j < h; j++) {
                    r[j * g3 + g] = v[base + j];
                }
            }
        }
    }

    /** Class probabilities of one time-major input (length × inputs). Leaves caches for {@link #backward}. */
    public double[] forward(float[] x, int length) {
        if (length > maxLength) {
            throw new IllegalArgumentException("sequence length " + length + " exceeds scratch capacity " + maxLength);
        }
        double[] v = p.values;
        for (int l = 0; l < layers; l++) {
            int h = p.hiddens[l];
            int in = p.inputs[l];
            int g3 = 3 * h;
            double[] hl = hs[l];
            java.util.Arrays.fill(hl, 0, h, 0.0);
            double[] a = new double[g3];
            double[] b = new double[g3];
            double[] q = new double[h];
            double[] w = wt[l];
            double[] rT = rtT[l];
            double[] below = l == 0 ? null : hs[l - 1];
            for (int t = 0; t < length; t++) {
                for (int g = 0; g < g3; g++) {
                    a[g] = v[p.offWb[l] + g];
                    b[g] = v[p.offRb[l] + g];
                }
                for (int i = 0; i < in; i++) {
                    double xi = l == 0 ? x[t * in + i] : below[(t + 1) * in + i];
                    if (xi != 0) {
                        int base = i * g3;
                        for (int g = 0; g < g3; g++) {
                            a[g] += w[base + g] * xi;
                        }
                    }
                }
                int hp = t * h;
                for (int j = 0; j < h; j++) {
                    double hj = hl[hp + j];
                    int base = j * g3;
                    for (int g = 0; g < 2 * h; g++) {
                        b[g] += rT[base + g] * hj;
                    }
                }
                boolean lbr = p.linearBeforeReset[l];
                if (lbr) {
                    for (int j = 0; j < h; j++) {
                        double hj = hl[hp + j];
                        int base = j * g3;
                        for (int g = 2 * h; g < g3; g++) {
                            b[g] += rT[base + g] * hj;
                        }
                    }
                }
                for (int j = 0; j < h; j++) {
                    double z = sigmoid(a[j] + b[j]);
                    double r = sigmoid(a[h + j] + b[h + j]);
                    zs[l][t * h + j] = z;
                    rs[l][t * h + j] = r;
                    q[j] = r * hl[hp + j];
                }
                if (lbr) {
                    for (int j = 0; j < h; j++) {
                        us[l][t * h + j] = b[2 * h + j];
                        b[2 * h + j] *= rs[l][t * h + j];
                    }
                } else {
                    for (int j = 0; j < h; j++) {
                        double qj = q[j];
                        int base = j * g3;
                        for (int g = 2 * h; g < g3; g++) {
                            b[g] += rT[base + g] * qj;
                        }
                    }
                }
                int hn = (t + 1) * h;
                for (int j = 0; j < h; j++) {
                    double c = Math.tanh(a[2 * h + j] + b[2 * h + j]);
                    cs[l][t * h + j] = c;
                    double z = zs[l][t * h + j];
                    hl[hn + j] = (1 - z) * c + z * hl[hp + j];
                }
            }
        }
        int top = layers - 1;
        int h = p.hiddens[top];
        int last = length * h;
        double max = Double.NEGATIVE_INFINITY;
        for (int k = 0; k < p.classes; k++) {
            double s = v[p.offBias + k];
            int base = p.offOut + k * h;
            for (int j = 0; j < h; j++) {
                s += v[base + j] * hs[top][last + j];
            }
            logits[k] = s;
            max = Math.max(max, s);
        }
        double sum = 0;
        for (int k = 0; k < p.classes; k++) {
            prob[k] = Math.exp(logits[k] - max);
            sum += prob[k];
        }
        for (int k = 0; k < p.classes; k++) {
            prob[k] /= sum;
        }
        return prob.clone();
    }

    /**
     * Adds the gradient of the cross-entropy loss {@code -log p[label]} of the last {@link #forward} call to
     * {@code grad} (laid out like the parameters) and returns the loss.
     */
    public double backward(float[] x, int length, int label, double[] grad) {
        double[] dLogits = new double[p.classes];
        for (int k = 0; k < p.classes; k++) {
            dLogits[k] = prob[k] - (k == label ? 1 : 0);
        }
        backprop(x, length, dLogits, grad, null);
        return -Math.log(Math.max(prob[label], 1e-300));
    }

    /** The class scores (pre-softmax) of the last {@link #forward} call. */
    public double[] logits() {
        return logits.clone();
    }

    /**
     * The gradient of class {@code target}'s score of the last {@link #forward} call with respect to every input
     * value, written into {@code dx} (time-major, {@code length × inputs}; overwritten): the pre-softmax score, or
     * with {@code logProbability} its log-probability. Returns that score.
     */
    public double inputGradient(float[] x, int length, int target, boolean logProbability, double[] dx) {
        double[] dLogits = new double[p.classes];
        for (int k = 0; k < p.classes; k++) {
            dLogits[k] = (k == target ? 1 : 0) - (logProbability ? prob[k] : 0);
        }
        java.util.Arrays.fill(dx, 0, length * p.inputs[0], 0.0);
        backprop(x, length, dLogits, null, dx);
        return logProbability ? Math.log(Math.max(prob[target], 1e-300)) : logits[target];
    }

    /**
     * Backpropagates {@code dLogits} (the gradient of some scalar with respect to the class scores) through the last
     * {@link #forward} call, adding parameter gradients to {@code grad} and input gradients to {@code dx} (either may
     * be null).
     */
    private void backprop(float[] x, int length, double[] dLogits, double[] grad, double[] dx) {
        double[] v = p.values;
        int top = layers - 1;
        int hTop = p.hiddens[top];
        for (int l = 0; l < layers; l++) {
            java.util.Arrays.fill(dy[l], 0, length * p.hiddens[l], 0.0);
        }
        int last = length * hTop;
        for (int k = 0; k < p.classes; k++) {
            double d = dLogits[k];
            int base = p.offOut + k * hTop;
            if (grad != null) {
                grad[p.offBias + k] += d;
            }
            for (int j = 0; j < hTop; j++) {
                if (grad != null) {
                    grad[base + j] += d * hs[top][last + j];
                }
                dy[top][(length - 1) * hTop + j] += d * v[base + j];
            }
        }
        for (int l = top; l >= 0; l--) {
            int h = p.hiddens[l];
            int in = p.inputs[l];
            int g3 = 3 * h;
            boolean lbr = p.linearBeforeReset[l];
            double[] hl = hs[l];
            double[] dh = new double[h];
            double[] da = new double[g3];   // gradient at the input pre-activations W x + Wb of each gate
            double[] dbh = new double[h];   // gradient at the candidate's recurrent pre-activation
            double[] dq = new double[h];
            double[] q = new double[h];
            double[] below = l == 0 ? null : hs[l - 1];
            double[] dBelow = l == 0 ? null : dy[l - 1];
            int oW = p.offW[l];
            int oR = p.offR[l];
            for (int t = length - 1; t >= 0; t--) {
                int hp = t * h;
                for (int j = 0; j < h; j++) {
                    dh[j] += dy[l][t * h + j];
                }
                // dh is dL/dh_{t+1}
                for (int j = 0; j < h; j++) {
                    double z = zs[l][hp + j];
                    double c = cs[l][hp + j];
                    double hprev = hl[hp + j];
                    double dc = dh[j] * (1 - z);
                    double dz = dh[j] * (hprev - c);
                    da[2 * h + j] = dc * (1 - c * c);
                    da[j] = dz * z * (1 - z);
                    dh[j] = dh[j] * z; // direct path to h_t
                    q[j] = rs[l][hp + j] * hprev;
                }
                java.util.Arrays.fill(dq, 0.0);
                if (lbr) {
                    // c = tanh(a_h + r * u), u = R_h h + Rb_h: du = dc' r, dr = dc' u; dh += R_h^T du
                    for (int j = 0; j < h; j++) {
                        double r = rs[l][hp + j];
                        dbh[j] = da[2 * h + j] * r;
                        double dr = da[2 * h + j] * us[l][hp + j];
                        da[h + j] = dr * r * (1 - r);
                    }
                    for (int g = 2 * h; g < g3; g++) {
                        double dg = dbh[g - 2 * h];
                        if (dg == 0) {
                            continue;
                        }
                        int base = oR + g * h;
                        for (int j = 0; j < h; j++) {
                            dh[j] += v[base + j] * dg;
                            if (grad != null) {
                                grad[base + j] += dg * hl[hp + j];
                            }
                        }
                    }
                } else {
                    // c = tanh(a_h + R_h (r * h) + Rb_h): dq = R_h^T dc'; dR_h += dc' q^T
                    for (int g = 2 * h; g < g3; g++) {
                        double dg = da[g];
                        dbh[g - 2 * h] = dg;
                        if (dg == 0) {
                            continue;
                        }
                        int base = oR + g * h;
                        for (int j = 0; j < h; j++) {
                            dq[j] += v[base + j] * dg;
                            if (grad != null) {
                                grad[base + j] += dg * q[j];
                            }
                        }
                    }
                    for (int j = 0; j < h; j++) {
                        double r = rs[l][hp + j];
                        double hprev = hl[hp + j];
                        double dr = dq[j] * hprev;
                        dh[j] += dq[j] * r;
                        da[h + j] = dr * r * (1 - r);
                    }
                }
                // z and r: dh += R^T da ; dR += da h^T
                for (int g = 0; g < 2 * h; g++) {
                    double dg = da[g];
                    if (dg == 0) {
                        continue;
                    }
                    int base = oR + g * h;
                    for (int j = 0; j < h; j++) {
                        dh[j] += v[base + j] * dg;
                        if (grad != null) {
                            grad[base + j] += dg * hl[hp + j];
                        }
                    }
                }
                if (grad != null) {
                    for (int g = 0; g < g3; g++) {
                        grad[p.offWb[l] + g] += da[g];
                        grad[p.offRb[l] + g] += g < 2 * h ? da[g] : dbh[g - 2 * h];
                    }
                }
                // input weights, the gradient into the layer below, or into the inputs
                for (int g = 0; g < g3; g++) {
                    double dg = da[g];
                    if (dg == 0) {
                        continue;
                    }
                    int base = oW + g * in;
                    if (l == 0) {
                        int xo = t * in;
                        if (grad != null) {
                            for (int i = 0; i < in; i++) {
                                grad[base + i] += dg * x[xo + i];
                            }
                        }
                        if (dx != null) {
                            for (int i = 0; i < in; i++) {
                                dx[xo + i] += v[base + i] * dg;
                            }
                        }
                    } else {
                        int xo = (t + 1) * in;
                        int dOff = t * in;
                        for (int i = 0; i < in; i++) {
                            if (grad != null) {
                                grad[base + i] += dg * below[xo + i];
                            }
                            dBelow[dOff + i] += v[base + i] * dg;
                        }
                    }
                }
            }
        }
    }

    private static double sigmoid(double x) {
        return 1.0 / (1.0 + Math.exp(-x));
    }
}
