package org.cruxset.scoring.train;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;

/**
 * The trainable parameters of a GRU classifier in double precision, all in one flat array so that optimisers and
 * gradient buffers are plain {@code double[]}. Layout per layer (ONNX order, gates z, r, h): W [3H×I], R [3H×H],
 * Wb [3H], Rb [3H]; then readout [K×H] and bias [K]. Each layer has its gate form ({@code linear_before_reset}):
 * training uses 0; {@link #of(GruNetwork)} keeps whatever a loaded network has, for its gradients.
 */
public final class GruParameters {
    final int[] inputs;
    final int[] hiddens;
    final int classes;
    final int[] offW;
    final int[] offR;
    final int[] offWb;
    final int[] offRb;
    final int offOut;
    final int offBias;
    final double[] values;
    final boolean[] linearBeforeReset;

    /** A zeroed parameter vector for the given layer sizes, every layer with {@code linear_before_reset = 0}. */
    public GruParameters(int inputs, int[] hiddens, int classes) {
        this(inputs, hiddens, classes, new boolean[hiddens.length]);
    }

    private GruParameters(int inputs, int[] hiddens, int classes, boolean[] linearBeforeReset) {
        int layers = hiddens.length;
        if (linearBeforeReset.length != layers) {
            throw new IllegalArgumentException("one gate form per layer: " + layers + " layers, "
                    + linearBeforeReset.length + " forms");
        }
        this.linearBeforeReset = linearBeforeReset.clone();
        if (layers < 1) {
            throw new IllegalArgumentException("at least one GRU layer is needed");
        }
        this.inputs = new int[layers];
        this.hiddens = hiddens.clone();
        this.classes = classes;
        offW = new int[layers];
        offR = new int[layers];
        offWb = new int[layers];
        offRb = new int[layers];
        int off = 0;
        int in = inputs;
        for (int l = 0; l < layers; l++) {
            int h = hiddens[l];
            this.inputs[l] = in;
            offW[l] = off;
            off += 3 * h * in;
            offR[l] = off;
            off += 3 * h * h;
            offWb[l] = off;
            off += 3 * h;
            offRb[l] = off;
            off += 3 * h;
            in = h;
        }
        offOut = off;
        off += classes * in;
        offBias = off;
        off += classes;
        values = new double[off];
    }

    /** The parameters of {@code network} in double precision, each layer keeping its gate form. */
    public static GruParameters of(GruNetwork network) {
        List<GruLayer> ls = network.layers();
        int[] hiddens = new int[ls.size()];
        boolean[] lbr = new boolean[ls.size()];
        for (int l = 0; l < hiddens.length; l++) {
            hiddens[l] = ls.get(l).hidden();
            lbr[l] = ls.get(l).linearBeforeReset();
        }
        GruParameters p = new GruParameters(network.inputs(), hiddens, network.classes(), lbr);
        for (int l = 0; l < hiddens.length; l++) {
            GruLayer g = ls.get(l);
            copy(g.w(), p.values, p.offW[l]);
            copy(g.r(), p.values, p.offR[l]);
            copy(g.wb(), p.values, p.offWb[l]);
            copy(g.rb(), p.values, p.offRb[l]);
        }
        copy(network.readout(), p.values, p.offOut);
        copy(network.bias(), p.values, p.offBias);
        return p;
    }

    private static void copy(float[] from, double[] to, int off) {
        for (int i = 0; i < from.length; i++) {
            to[off + i] = from[i];
        }
    }

    /** Whether layer {@code l} applies the reset gate after the recurrent product ({@code linear_before_reset = 1}). */
    public boolean linearBeforeReset(int l) {
        return linearBeforeReset[l];
    }

    /** Number of model inputs. */
    public int inputs() {
        return inputs[0];
    }

    /** A copy with the same shape, gate forms and values. */
    public GruParameters copy() {
        GruParameters p = new GruParameters(inputs[0], hiddens, classes, linearBeforeReset);
        System.arraycopy(values, 0, p.values, 0, values.length);
        return p;
    }

    /** Number of scalar parameters. */
    public int count() {
        return values.length;
    }

    /** The flat values (live, not a copy). */
    public double[] values() {
        return values;
    }

    public int layers() {
        return hiddens.length;
    }

    public int classes() {
        return classes;
    }

    /**
     * Uniform initialisation in ±1/√H for GRU weights and biases (common practice), Glorot-uniform readout, zero
     * readout bias; consumes {@code rng} in parameter order.
     */
    public void initialise(SplittableRandom rng) {
        for (int l = 0; l < layers(); l++) {
            double a = 1.0 / Math.sqrt(hiddens[l]);
            for (int i = offW[l]; i < offRb[l] + 3 * hiddens[l]; i++) {
                values[i] = (rng.nextDouble() * 2 - 1) * a;
            }
        }
        int h = hiddens[layers() - 1];
        double g = Math.sqrt(6.0 / (h + classes));
        for (int i = offOut; i < offBias; i++) {
            values[i] = (rng.nextDouble() * 2 - 1) * g;
        }
        for (int i = offBias; i < values.length; i++) {
            values[i] = 0;
        }
    }

    /** The parameters as a single-precision network for inference. */
    public GruNetwork toNetwork() {
        List<GruLayer> layers = new ArrayList<>();
        for (int l = 0; l < layers(); l++) {
            int h = hiddens[l];
            int in = inputs[l];
            layers.add(new GruLayer(in, h, toFloat(offW[l], 3 * h * in), toFloat(offR[l], 3 * h * h),
                    toFloat(offWb[l], 3 * h), toFloat(offRb[l], 3 * h), linearBeforeReset[l]));
        }
        int h = hiddens[layers() - 1];
        return new GruNetwork(layers, classes, toFloat(offOut, classes * h), toFloat(offBias, classes));
    }

    private float[] toFloat(int off, int n) {
        float[] out = new float[n];
        for (int i = 0; i < n; i++) {
            out[i] = (float) values[off + i];
        }
        return out;
    }
}
