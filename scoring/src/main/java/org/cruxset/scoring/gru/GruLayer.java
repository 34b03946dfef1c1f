package org.cruxset.scoring.gru;

import java.util.Objects;

/**
 * Weights of one forward GRU layer in the ONNX operator's layout and gate order (z, r, h):
 * {@code w} is [3·hidden × input] row-major, {@code r} is [3·hidden × hidden], {@code wb} and {@code rb} are
 * [3·hidden]. With {@code linearBeforeReset} the reset gate multiplies {@code R_h·h + Rb_h} instead of {@code h}.
 * Arrays are copied in and out.
 */
public record GruLayer(int input, int hidden, float[] w, float[] r, float[] wb, float[] rb, boolean linearBeforeReset) {
    public GruLayer {
        if (input < 1 || hidden < 1) {
            throw new IllegalArgumentException("GRU layer sizes must be positive, found input " + input + ", hidden " + hidden);
        }
        Objects.requireNonNull(w, "w");
        Objects.requireNonNull(r, "r");
        Objects.requireNonNull(wb, "wb");
        Objects.requireNonNull(rb, "rb");
        check("W", w.length, 3 * hidden * input);
        check("R", r.length, 3 * hidden * hidden);
        check("Wb", wb.length, 3 * hidden);
        check("Rb", rb.length, 3 * hidden);
        w = w.clone();
        r = r.clone();
        wb = wb.clone();
        rb = rb.clone();
    }

    private static void check(String name, int actual, int expected) {
        if (actual != expected) {
            throw new IllegalArgumentException("GRU " + name + " must hold " + expected + " values, found " + actual);
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
