package org.cruxset.scoring.gru;

import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.internal.Parallel;

/** Cruxset's own engine for {@link GruNetwork}s: single precision, the ONNX GRU operator's semantics. */
public final class NativeGruDecoder implements Decoder {
    private final GruNetwork network;
    private final ModelCard card;
    private final Kernel[] kernels;

    /** An engine for {@code network}, described by {@code card} (whose region and class counts must match). */
    public NativeGruDecoder(GruNetwork network, ModelCard card) {
        this.network = Objects.requireNonNull(network, "network");
        this.card = Objects.requireNonNull(card, "card");
        if (card.regions() != network.inputs()) {
            throw new IllegalArgumentException("model card has " + card.regions() + " regions, network takes " + network.inputs());
        }
        if (card.classes() != network.classes()) {
            throw new IllegalArgumentException("model card has " + card.classes() + " classes, network gives " + network.classes());
        }
        kernels = new Kernel[network.layers().size()];
        for (int i = 0; i < kernels.length; i++) {
            kernels[i] = new Kernel(network.layers().get(i));
        }
    }

    public GruNetwork network() {
        return network;
    }

    @Override
    public ModelCard card() {
        return card;
    }

    @Override
    public Bound bind(InputBatch batch) {
        if (batch.regions() != network.inputs()) {
            throw new IllegalArgumentException("batch has " + batch.regions() + " regions, the model takes " + network.inputs());
        }
        return (masks, threads) -> {
            int m = masks.size();
            int n = batch.size();
            float[][][] out = new float[m][n][];
            Parallel.forRange(m * n, threads, job -> {
                int mi = job / n;
                int s = job % n;
                InputMask mask = masks.get(mi);
                float[] x = new float[batch.series(s).length];
                mask.apply(batch, s, x);
                out[mi][s] = probabilities(x, batch.length(s));
            });
            return out;
        };
    }

    /** Class probabilities of one time-major input of {@code length} steps. */
    public float[] probabilities(float[] input, int length) {
        float[] seq = input;
        float[] h = null;
        for (int li = 0; li < kernels.length; li++) {
            Kernel k = kernels[li];
            boolean last = li == kernels.length - 1;
            float[] ys = last ? null : new float[length * k.hidden];
            h = k.run(seq, length, ys);
            seq = ys;
        }
        return softmax(scores(h));
    }

    private float[] scores(float[] h) {
        int kc = network.classes();
        int hid = network.lastHidden();
        float[] ro = network.readout();
        float[] b = network.bias();
        float[] out = new float[kc];
        for (int c = 0; c < kc; c++) {
            double acc = b[c];
            for (int j = 0; j < hid; j++) {
                acc += ro[c * hid + j] * h[j];
            }
            out[c] = (float) acc;
        }
        return out;
    }

    /** Softmax in place, returning its argument. */
    static float[] softmax(float[] z) {
        float max = Float.NEGATIVE_INFINITY;
        for (float v : z) {
            max = Math.max(max, v);
        }
        double sum = 0;
        for (int i = 0; i < z.length; i++) {
            double e = Math.exp(z[i] - max);
            z[i] = (float) e;
            sum += e;
        }
        for (int i = 0; i < z.length; i++) {
            z[i] = (float) (z[i] / sum);
        }
        return z;
    }

    static float sigmoid(float x) {
        return (float) (1.0 / (1.0 + Math.exp(-x)));
    }

    static float tanh(float x) {
        if (x > 15f) {
            return 1f;
        }
        if (x < -15f) {
            return -1f;
        }
        double e = Math.exp(2.0 * x);
        return (float) ((e - 1.0) / (e + 1.0));
    }

    /** One layer's weights rearranged into per-input rows of gate values, the loop shape the JIT vectorises. */
    private static final class Kernel {
        final int input;
        final int hidden;
        final float[][] wt;  // [input][3H]
        final float[][] rt;  // [H][3H]
        final float[] bias;  // Wb + Rb for z, r; Wb for h (Rb_h kept apart)
        final float[] rbh;
        final boolean lbr;

        Kernel(GruLayer layer) {
            input = layer.input();
            hidden = layer.hidden();
            lbr = layer.linearBeforeReset();
            int g3 = 3 * hidden;
            float[] w = layer.w();
            float[] r = layer.r();
            float[] wb = layer.wb();
            float[] rb = layer.rb();
            wt = new float[input][g3];
            for (int g = 0; g < g3; g++) {
                for (int i = 0; i < input; i++) {
                    wt[i][g] = w[g * input + i];
                }
            }
            rt = new float[hidden][g3];
            for (int g = 0; g < g3; g++) {
                for (int j = 0; j < hidden; j++) {
                    rt[j][g] = r[g * hidden + j];
                }
            }
            bias = new float[g3];
            for (int g = 0; g < g3; g++) {
                bias[g] = g < 2 * hidden ? wb[g] + rb[g] : wb[g];
            }
            rbh = new float[hidden];
            System.arraycopy(rb, 2 * hidden, rbh, 0, hidden);
        }

        /** Runs the layer; writes every step's output into {@code ys} when not null; returns the last state. */
        float[] run(float[] x, int length, float[] ys) {
            int g3 = 3 * hidden;
            int hh = hidden;
            float[] h = new float[hh];
            float[] xp = new float[g3];
            float[] hp = new float[g3];
            float[] rh = new float[hh];
            for (int t = 0; t < length; t++) {
                System.arraycopy(bias, 0, xp, 0, g3);
                int off = t * input;
                for (int i = 0; i < input; i++) {
                    float a = x[off + i];
                    if (a != 0f) {
                        float[] row = wt[i];
                        for (int g = 0; g < g3; g++) {
                            xp[g] += row[g] * a;
                        }
                    }
                }
                java.util.Arrays.fill(hp, 0f);
                int upto = lbr ? g3 : 2 * hh;
                for (int j = 0; j < hh; j++) {
                    float a = h[j];
                    float[] row = rt[j];
                    for (int g = 0; g < upto; g++) {
                        hp[g] += row[g] * a;
                    }
                }
                if (!lbr) {
                    for (int j = 0; j < hh; j++) {
                        rh[j] = sigmoid(xp[hh + j] + hp[hh + j]) * h[j];
                    }
                    for (int j = 0; j < hh; j++) {
                        float a = rh[j];
                        float[] row = rt[j];
                        for (int g = 2 * hh; g < g3; g++) {
                            hp[g] += row[g] * a;
                        }
                    }
                }
                for (int j = 0; j < hh; j++) {
                    float z = sigmoid(xp[j] + hp[j]);
                    float c;
                    if (lbr) {
                        float r = sigmoid(xp[hh + j] + hp[hh + j]);
                        c = tanh(xp[2 * hh + j] + r * (hp[2 * hh + j] + rbh[j]));
                    } else {
                        c = tanh(xp[2 * hh + j] + hp[2 * hh + j] + rbh[j]);
                    }
                    h[j] = (1f - z) * c + z * h[j];
                }
                if (ys != null) {
                    System.arraycopy(h, 0, ys, t * hh, hh);
                }
            }
            return h;
        }
    }
}
