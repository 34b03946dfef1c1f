package org.cruxset.scoring.lstm;

import java.util.List;
import java.util.Objects;

/**
 * A stack of forward LSTM layers read out from the last valid time step's hidden state by an affine map to class
 * scores: {@code scores = readout · h_last + bias}, {@code readout} being [classes × hidden] row-major.
 */
public record LstmNetwork(List<LstmLayer> layers, int classes, float[] readout, float[] bias) {
    public LstmNetwork {
        layers = List.copyOf(layers);
        if (layers.isEmpty()) {
            throw new IllegalArgumentException("an LSTM network needs at least one layer");
        }
        for (int i = 1; i < layers.size(); i++) {
            if (layers.get(i).input() != layers.get(i - 1).hidden()) {
                throw new IllegalArgumentException("layer " + i + " input size " + layers.get(i).input()
                        + " does not match layer " + (i - 1) + " hidden size " + layers.get(i - 1).hidden());
            }
        }
        Objects.requireNonNull(readout, "readout");
        Objects.requireNonNull(bias, "bias");
        int h = layers.get(layers.size() - 1).hidden();
        if (readout.length != classes * h) {
            throw new IllegalArgumentException("readout must hold classes*hidden = " + classes * h + " values, found "
                    + readout.length);
        }
        if (bias.length != classes) {
            throw new IllegalArgumentException("bias must hold " + classes + " values, found " + bias.length);
        }
        readout = readout.clone();
        bias = bias.clone();
    }

    /** Number of input regions. */
    public int inputs() {
        return layers.get(0).input();
    }

    @Override
    public float[] readout() {
        return readout.clone();
    }

    @Override
    public float[] bias() {
        return bias.clone();
    }
}
