package org.cruxset.scoring.lstm;

import java.util.Objects;

/**
 * Weights of one forward LSTM layer in the ONNX operator's layout and gate order (i, o, f, c): {@code w} is
 * [4·hidden × input] row-major, {@code r} is [4·hidden × hidden], {@code wb} and {@code rb} are [4·hidden]. Default
 * activations (sigmoid, tanh, tanh), no peepholes, no clip, input and forget gates not coupled:
 * {@code i = σ(Wi·x + Ri·h + Wbi + Rbi)}, likewise o and f, {@code c̃ = tanh(Wc·x + Rc·h + Wbc + Rbc)},
 * {@code c = f ⊙ c + i ⊙ c̃}, {@code h = o ⊙ tanh(c)}. Arrays are copied in and out.
 */
public record LstmLayer(int input, int hidden, float[] w, float[] r, float[] wb, float[] rb) {
    public LstmLayer {
        if (input < 1 || hidden < 1) {
            throw new IllegalArgumentException("LSTM layer sizes must be positive, found input " + input + ", hidden "
                    + hidden);
        }
        Objects.requireNonNull(w, "w");
        Objects.requireNonNull(r, "r");
        Objects.requireNonNull(wb, "wb");
        Objects.requireNonNull(rb, "rb");
        check("W", w.length, 4 * hidden * input);
        check("R", r.length, 4 * hidden * hidden);
        check("Wb", wb.length, 4 * hidden);
        check("Rb", rb.length, 4 * hidden);
        w = w.clone();
        r = r.clone();
        wb = wb.clone();
        rb = rb.clone();
    }

    private static void check(String name, int actual, int expected) {
        if (actual != expected) {
            throw new IllegalArgumentException("LSTM " + name + " must hold " + expected + " values, found " + actual);
        }
    }

    @Override
    public float[] w() {
        return w.clone();
    }

    @Override
    public float[] r() {
        return r.clone();
    }

    @Override
    public float[] wb() {
        return wb.clone();
    }

    @Override
    public float[] rb() {
        return rb.clone();
    }
}
