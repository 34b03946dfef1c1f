package org.cruxset.scoring.saliency;

import java.util.Locale;
import java.util.Objects;

/**
 * Attributions of held-out samples: one value per input value ({@code maps[s][t * regions + i]}, time-major like
 * the model's inputs) when they come from gradients, or one value per region ({@code maps[s][i]}, with
 * {@code perTimePoint} false) when they come from finite differences of whole series; what they attribute (the
 * class score or its log-probability, for each sample's true class); and for integrated gradients each sample's
 * change {@code f(x) − f(baseline)} and its completeness gap {@code |Σ attributions − (f(x) − f(baseline))|} (NaN
 * otherwise).
 */
public record Attributions(String method, String target, int regions, int[] lengths, float[][] maps,
                           boolean perTimePoint, double[] change, double[] completenessGap) {
    public Attributions {
        Objects.requireNonNull(method, "method");
        Objects.requireNonNull(target, "target");
        if (maps.length != lengths.length || completenessGap.length != lengths.length
                || change.length != lengths.length) {
            throw new IllegalArgumentException("one map, length, change and gap per sample");
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

    /**
     * The completeness gap over all samples, Σ|gap| / Σ|f(x) − f(baseline)| (NaN unless integrated gradients): a
     * per-sample ratio is unstable where the baseline barely changes the output.
     */
    public double relativeCompletenessGap() {
        double gap = 0;
        double change = 0;
        for (int s = 0; s < completenessGap.length; s++) {
            if (Double.isNaN(completenessGap[s])) {
                return Double.NaN;
            }
            gap += completenessGap[s];
            change += Math.abs(this.change[s]);
        }
        return gap / Math.max(change, 1e-300);
    }

    /** The largest per-sample gap relative to that sample's change (NaN unless integrated gradients). */
    public double maxSampleGap() {
        double max = Double.NaN;
        for (int s = 0; s < completenessGap.length; s++) {
            double g = completenessGap[s] / Math.max(Math.abs(change[s]), 1e-12);
            if (!Double.isNaN(g)) {
                max = Double.isNaN(max) ? g : Math.max(max, g);
            }
        }
        return max;
    }

    @Override
    public String toString() {
        return String.format(Locale.ROOT, "%s of the %s, %d samples, %d regions", method, target, maps.length, regions);
    }
}
