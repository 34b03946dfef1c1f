package org.cruxset.scoring.lesion;

import java.util.Arrays;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Objects;
import org.cruxset.scoring.decoder.InputBatch;

/**
 * Per-region mean and variance of reference data in the model's input space (after preprocessing), indexed by model
 * input position; the arrays are copied on the way in and out.
 */
public record ReferenceStats(float[] mean, float[] variance) {
    /** Metadata key of the comma-separated reference means. */
    public static final String MEAN_KEY = "cruxset.reference.mean";
    /** Metadata key of the comma-separated reference variances. */
    public static final String VARIANCE_KEY = "cruxset.reference.variance";

    public ReferenceStats {
        Objects.requireNonNull(mean, "mean");
        Objects.requireNonNull(variance, "variance");
        if (mean.length < 1) {
            throw new IllegalArgumentException("reference statistics need at least 1 region, found 0");
        }
        if (variance.length != mean.length) {
            throw new IllegalArgumentException("reference has " + mean.length + " means but " + variance.length
                    + " variances");
        }
        mean = mean.clone();
        variance = variance.clone();
        for (int r = 0; r < mean.length; r++) {
            if (!Float.isFinite(mean[r])) {
                throw new IllegalArgumentException("reference mean of region " + r + " must be finite, found " + mean[r]);
            }
            if (!(variance[r] >= 0) || Float.isInfinite(variance[r])) {
                throw new IllegalArgumentException("reference variance of region " + r
                        + " must be finite and non-negative, found " + variance[r]);
            }
        }
    }

    /** Each region's mean and (population) variance pooled over every sample and time point of {@code batch}. */
    public static ReferenceStats of(InputBatch batch) {
        Objects.requireNonNull(batch, "batch");
        if (batch.size() == 0) {
            throw new IllegalArgumentException("reference statistics need at least 1 sample, the batch is empty");
        }
        int n = batch.regions();
        double[] sum = new double[n];
        long count = 0;
        for (int s = 0; s < batch.size(); s++) {
            float[] x = batch.series(s);
            int len = batch.length(s);
            for (int t = 0; t < len; t++) {
                int o = t * n;
                for (int r = 0; r < n; r++) {
                    sum[r] += x[o + r];
                }
            }
            count += len;
        }
        double[] mu = new double[n];
        for (int r = 0; r < n; r++) {
            mu[r] = sum[r] / count;
        }
        double[] ss = new double[n];
        for (int s = 0; s < batch.size(); s++) {
            float[] x = batch.series(s);
            int len = batch.length(s);
            for (int t = 0; t < len; t++) {
                int o = t * n;
                for (int r = 0; r < n; r++) {
                    double d = x[o + r] - mu[r];
                    ss[r] += d * d;
                }
            }
        }
        float[] m = new float[n];
        float[] v = new float[n];
        for (int r = 0; r < n; r++) {
            m[r] = (float) mu[r];
            v[r] = (float) (ss[r] / count);
        }
        return new ReferenceStats(m, v);
    }

    /** Number of regions. */
    public int regions() {
        return mean.length;
    }

    /** A copy of the means. */
    @Override
    public float[] mean() {
        return mean.clone();
    }

    /** A copy of the variances. */
    @Override
    public float[] variance() {
        return variance.clone();
    }

    /** Mean of region {@code r}. */
    public float mean(int r) {
        return mean[r];
    }

    /** Variance of region {@code r}. */
    public float variance(int r) {
        return variance[r];
    }

    /** The statistics as metadata entries ({@link #MEAN_KEY}, {@link #VARIANCE_KEY}) that round-trip exactly. */
    public Map<String, String> toMetadata() {
        Map<String, String> m = new LinkedHashMap<>();
        m.put(MEAN_KEY, join(mean));
        m.put(VARIANCE_KEY, join(variance));
        return Collections.unmodifiableMap(m);
    }

    /** Reads the statistics from metadata written by {@link #toMetadata()}, naming the key when one is missing or malformed. */
    public static ReferenceStats fromMetadata(Map<String, String> metadata) {
        Objects.requireNonNull(metadata, "metadata");
        float[] m = parse(metadata, MEAN_KEY);
        float[] v = parse(metadata, VARIANCE_KEY);
        if (v.length != m.length) {
            throw new IllegalArgumentException("metadata key " + VARIANCE_KEY + " holds " + v.length
                    + " values but " + MEAN_KEY + " holds " + m.length);
        }
        for (int r = 0; r < m.length; r++) {
            if (!Float.isFinite(m[r])) {
                throw new IllegalArgumentException("metadata key " + MEAN_KEY + ": value " + (r + 1)
                        + " must be finite, found " + m[r]);
            }
            if (!(v[r] >= 0) || Float.isInfinite(v[r])) {
                throw new IllegalArgumentException("metadata key " + VARIANCE_KEY + ": value " + (r + 1)
                        + " must be finite and non-negative, found " + v[r]);
            }
        }
        return new ReferenceStats(m, v);
    }

    /** Reads the statistics from metadata and requires them to cover {@code regions} model inputs. */
    public static ReferenceStats fromMetadata(Map<String, String> metadata, int regions) {
        ReferenceStats r = fromMetadata(metadata);
        if (r.regions() != regions) {
            throw new IllegalArgumentException("metadata key " + MEAN_KEY + " holds " + r.regions()
                    + " values but the model takes " + regions + " regions");
        }
        return r;
    }

    private static String join(float[] a) {
        StringBuilder sb = new StringBuilder(a.length * 12);
        for (int i = 0; i < a.length; i++) {
            if (i > 0) {
                sb.append(',');
            }
            sb.append(Float.toString(a[i]));
        }
        return sb.toString();
    }

    private static float[] parse(Map<String, String> metadata, String key) {
        String text = metadata.get(key);
        if (text == null) {
            throw new IllegalArgumentException("metadata key " + key + " is missing (reference means and variances "
                    + "are stored under " + MEAN_KEY + " and " + VARIANCE_KEY + ")");
        }
        if (text.isBlank()) {
            throw new IllegalArgumentException("metadata key " + key + " is empty; expected comma-separated numbers");
        }
        String[] parts = text.split(",", -1);
        float[] out = new float[parts.length];
        for (int i = 0; i < parts.length; i++) {
            String p = parts[i].trim();
            try {
                out[i] = Float.parseFloat(p);
            } catch (NumberFormatException e) {
                throw new IllegalArgumentException("metadata key " + key + ": value " + (i + 1) + " ('" + p
                        + "') is not a number", e);
            }
        }
        return out;
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof ReferenceStats r && Arrays.equals(r.mean, mean) && Arrays.equals(r.variance, variance);
    }

    @Override
    public int hashCode() {
        return 31 * Arrays.hashCode(mean) + Arrays.hashCode(variance);
    }

    @Override
    public String toString() {
        return "ReferenceStats[regions=" + mean.length + ", mean=" + Arrays.toString(mean) + ", variance="
                + Arrays.toString(variance) + "]";
    }
}
