package org.cruxset.scoring;

/** Argument checks shared by every module; messages name the parameter, the valid range and the value found. */
public final class Checks {
    private Checks() {
    }

    /** Requires {@code value} to be at least {@code min}. */
    public static int atLeast(String name, int value, int min) {
        if (value < min) {
            throw new IllegalArgumentException(name + " must be at least " + min + ", found " + value);
        }
        return value;
    }

    /** Requires {@code value} within [min, max]. */
    public static int within(String name, int value, int min, int max) {
        if (value < min || value > max) {
            throw new IllegalArgumentException(name + " must be in [" + min + ", " + max + "], found " + value);
        }
        return value;
    }

    /** Requires {@code value} within [min, max] and finite. */
    public static double within(String name, double value, double min, double max) {
        if (!(value >= min && value <= max)) {
            throw new IllegalArgumentException(name + " must be in [" + min + ", " + max + "], found " + value);
        }
        return value;
    }

    /** Requires {@code value} to be strictly positive and finite. */
    public static double positive(String name, double value) {
        if (!(value > 0) || Double.isInfinite(value)) {
            throw new IllegalArgumentException(name + " must be positive and finite, found " + value);
        }
        return value;
    }

    /** Requires an array length. */
    public static void length(String name, int actual, int expected) {
        if (actual != expected) {
            throw new IllegalArgumentException(name + " must have length " + expected + ", found " + actual);
        }
    }
}
