package org.cruxset.scoring.lesion;

import java.util.Locale;

/** What a lesioned region's time series is replaced with; the mode and its seed are part of every score's identity. */
public enum LesionMode {
    /** Zeros (the default; common practice). */
    ZERO,
    /** The region's mean over the reference data. */
    MEAN,
    /** Seeded Gaussian noise with the region's reference mean and variance. */
    NOISE,
    /** The region's series from another sample of the scored data (seeded; never the same sample). */
    SWAP,
    /** A phase-randomised surrogate of the region's own series: same power spectrum, seeded phases (common practice). */
    PHASE;

    /** The option spelling. */
    public String label() {
        return name().toLowerCase(Locale.ROOT);
    }

    /** True when the mode uses reference means and variances (from training data or a reference cohort). */
    public boolean needsReference() {
        return this == MEAN || this == NOISE;
    }

    /** True when the mode draws random numbers (and so has a seed in its identity). */
    public boolean isRandom() {
        return this == NOISE || this == SWAP || this == PHASE;
    }

    /** Parses an option value, naming the valid values when it is not one. */
    public static LesionMode parse(String text) {
        for (LesionMode m : values()) {
            if (m.label().equals(text.trim().toLowerCase(Locale.ROOT))) {
                return m;
            }
        }
        throw new IllegalArgumentException("lesion mode must be one of zero, mean, noise, swap, phase; found '" + text + "'");
    }
}
