package org.cruxset.scoring.decoder;

import java.util.Locale;
import org.cruxset.scoring.cohort.Sample;

/**
 * How raw samples are mapped to the model's input space; recorded with the model so evaluation applies it
 * exactly as training did. Lesions act after preprocessing.
 */
public enum Preprocessing {
    /** Values are used as they are. */
    NONE,
    /** Each region of each sample is centred and scaled to unit variance over its own time points (common practice). */
    ZSCORE;

    /** The metadata spelling: {@code none} or {@code zscore}. */
    public String label() {
        return name().toLowerCase(Locale.ROOT);
    }

    /** Parses a metadata or option value. */
    public static Preprocessing parse(String text) {
        String t = text.trim().toLowerCase(Locale.ROOT);
        return switch (t) {
            case "none" -> NONE;
            case "zscore", "z-score" -> ZSCORE;
            default -> throw new IllegalArgumentException("preprocessing must be 'none' or 'zscore', found '" + text + "'");
        };
    }

    /** The sample in model input space (a new sample; the input is not changed). */
    public Sample apply(Sample s) {
        if (this == NONE) {
            return s;
        }
        int n = s.regions();
        int len = s.length();
        float[] x = s.values();
        float[] y = new float[x.length];
        for (int r = 0; r < n; r++) {
            double sum = 0;
            for (int t = 0; t < len; t++) {
                sum += x[t * n + r];
            }
            double mean = sum / len;
            double ss = 0;
            for (int t = 0; t < len; t++) {
                double d = x[t * n + r] - mean;
                ss += d * d;
            }
            double sd = Math.sqrt(ss / len);
            double inv = sd > 1e-12 ? 1.0 / sd : 0.0;
            for (int t = 0; t < len; t++) {
                y[t * n + r] = (float) ((x[t * n + r] - mean) * inv);
            }
        }
        return s.withValues(y);
    }
}
