package org.cruxset.scoring.cohort;

import java.util.Objects;

/**
 * One labelled time series: {@code length} time points by {@code regions} regions, stored time-major in
 * {@code values} (value of region {@code r} at time {@code t} is {@code values[t * regions + r]}).
 * The array is not copied on access; treat it as read-only.
 */
public record Sample(String id, String subject, String label, Split split, int length, int regions, float[] values) {
    public Sample {
        Objects.requireNonNull(id, "id");
        Objects.requireNonNull(subject, "subject");
        Objects.requireNonNull(label, "label");
        Objects.requireNonNull(split, "split");
        Objects.requireNonNull(values, "values");
        if (length < 1) {
            throw new IllegalArgumentException("sample " + id + ": length must be at least 1, found " + length);
        }
        if (values.length != length * regions) {
            throw new IllegalArgumentException("sample " + id + ": values must hold length*regions = "
                    + (long) length * regions + " floats, found " + values.length);
        }
    }

    /** Value of region {@code r} at time {@code t}. */
    public float at(int t, int r) {
        return values[t * regions + r];
    }

    /** The same sample placed in another split. */
    public Sample withSplit(Split s) {
        return new Sample(id, subject, label, s, length, regions, values);
    }

    /** The same sample with other values (same shape). */
    public Sample withValues(float[] v) {
        return new Sample(id, subject, label, split, length, regions, v);
    }
}
