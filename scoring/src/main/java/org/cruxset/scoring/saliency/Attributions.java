package org.cruxset.scoring.saliency;

import java.util.Locale;
import java.util.Objects;

/**
 * Attributions of held-out samples: one value per input value ({@code maps[s][t * regions + i]}, time-major like
 * the model's inputs) when they come from gradients, or one value per region ({@code maps[s][i]}, with
 * {@code perTimePoint} false) when they come from finite differences of whole series; what they attribute (the
 * class score or its log-probability, for each sample's true class); and for integrated gradients the completeness
 * gap of each sample, |Σ attributions − (f(x) − f(baseline))| / |f(x) − f(baseline)| (NaN otherwise).
 */
public record Attributions(String method, String target, int regions, int[] lengths, float[][] maps,
                           boolean perTimePoint, double[] completenessGap) {
    public Attributions {
        Objects.requireNonNull(method, "method");
        Objects.requireNonNull(target, "target");
        if (maps.length != lengths.length || completenessGap.length != lengths.length) {
            throw new IllegalArgumentException("one map, length and gap per sample");
        }
    }

    /** Number of samples. */
    public int samples() {
        return maps.length;
    }

    /** Sample {@code s}'s attribution summed over time for each region (signed). */
    public double[] regionSums(int s) {
        double[] out = new double[regions];
        float[] m = maps[s];
        if (!perTimePoint) {
            for (int i = 0; i < regions; i++) {
                out[i] = m[i];
            }
            return out;
        }
        for (int t = 0; t < lengths[s]; t++) {
            for (int i = 0; i < regions; i++) {
                out[i] += m[t * regions + i];
            }
        }
        return out;
    }

    /**
     * Per region over the samples {@code which} (null: all): the mean absolute attribution over time points and
     * samples ({@code absolute}), or the mean over samples of the signed sum over time.
     */
    public double[] perRegion(boolean[] which, boolean absolute) {
        double[] out = new double[regions];
        long count = 0;
        int used = 0;
        for (int s = 0; s < maps.length; s++) {
            if (which != null && !which[s]) {
                continue;
            }
            used++;
            float[] m = maps[s];
            int steps = perTimePoint ? lengths[s] : 1;
            for (int t = 0; t < steps; t++) {
                for (int i = 0; i < regions; i++) {
                    double v = m[t * regions + i];
                    out[i] += absolute ? Math.abs(v) : v;
                }
            }
            count += steps;
        }
        double denom = absolute ? Math.max(1, count) : Math.max(1, used);
        for (int i = 0; i < regions; i++) {
            out[i] /= denom;
        }
        return out;
    }

    /** The largest completeness gap (NaN unless integrated gradients). */
    public double maxCompletenessGap() {
        double max = Double.NaN;
        for (double g : completenessGap) {
            if (!Double.isNaN(g)) {
                max = Double.isNaN(max) ? g : Math.max(max, g);
            }
        }
        return max;
    }

    /** The mean completeness gap (NaN unless integrated gradients). */
    public double meanCompletenessGap() {
        double sum = 0;
        int n = 0;
        for (double g : completenessGap) {
            if (!Double.isNaN(g)) {
                sum += g;
                n++;
            }
        }
        return n == 0 ? Double.NaN : sum / n;
    }

    @Override
    public String toString() {
        return String.format(Locale.ROOT, "%s of the %s, %d samples, %d regions", method, target, maps.length, regions);
    }
}
