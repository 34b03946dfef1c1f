package org.cruxset.scoring.decoder;

import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.cohort.Sample;

/**
 * Samples in the model's input space (after preprocessing), ready to decode. Sample {@code s} has
 * {@code lengths[s]} time points, stored time-major in {@code series[s]} ({@code series[s][t * regions + r]}).
 * Arrays are shared, not copied: treat them as read-only.
 */
public final class InputBatch {
    private final int regions;
    private final float[][] series;
    private final int[] lengths;
    private final int maxLength;

    private InputBatch(int regions, float[][] series, int[] lengths) {
        this.regions = regions;
        this.series = series;
        this.lengths = lengths;
        int m = 0;
        for (int s = 0; s < series.length; s++) {
            if (lengths[s] < 1 || series[s].length != lengths[s] * regions) {
                throw new IllegalArgumentException("sample " + s + ": series must hold lengths[s]*regions = "
                        + (long) lengths[s] * regions + " floats, found " + series[s].length);
            }
            m = Math.max(m, lengths[s]);
        }
        this.maxLength = m;
    }

    /** A batch over the given arrays (not copied). */
    public static InputBatch of(int regions, float[][] series, int[] lengths) {
        Objects.requireNonNull(series, "series");
        if (series.length != lengths.length) {
            throw new IllegalArgumentException("series and lengths differ in count: " + series.length + " vs " + lengths.length);
        }
        return new InputBatch(regions, series, lengths);
    }

    /** A batch of samples as they are (their values must already be in the model's input space). */
    public static InputBatch ofSamples(List<Sample> samples, int regions) {
        float[][] series = new float[samples.size()][];
        int[] lengths = new int[samples.size()];
        for (int s = 0; s < series.length; s++) {
            Sample x = samples.get(s);
            if (x.regions() != regions) {
                throw new IllegalArgumentException("sample " + x.id() + " has " + x.regions() + " regions, expected " + regions);
            }
            series[s] = x.values();
            lengths[s] = x.length();
        }
        return new InputBatch(regions, series, lengths);
    }

    public int size() {
        return series.length;
    }

    public int regions() {
        return regions;
    }

    public int length(int s) {
        return lengths[s];
    }

    public int maxLength() {
        return maxLength;
    }

    /** The time-major series of sample {@code s} (shared, read-only). */
    public float[] series(int s) {
        return series[s];
    }
}
