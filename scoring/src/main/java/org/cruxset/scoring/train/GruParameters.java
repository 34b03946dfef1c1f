package org.cruxset.scoring.train;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;

/**
 * The trainable parameters of a GRU classifier in double precision, all in one flat array so that optimisers and
 * gradient buffers are plain {@code double[]}. Layout per layer (ONNX order, gates z, r, h): W [3H×I], R [3H×H],
 * Wb [3H], Rb [3H]; then readout [K×H] and bias [K]. Uses {@code linear_before_reset = 0}.
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

    /** A zeroed parameter vector for the given layer sizes. */
    public GruParameters(int inputs, int[] hiddens, int classes) {
        int layers = hiddens.length;
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

    /** A copy with the same shape and values. */
    public GruParameters copy() {
        GruParameters p = new GruParameters(inputs[0], hiddens, classes);
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
                    toFloat(offWb[l], 3 * h), toFloat(offRb[l], 3 * h), false));
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
