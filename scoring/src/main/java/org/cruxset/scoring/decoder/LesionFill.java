package org.cruxset.scoring.decoder;

/** What a lesioned region's time series is replaced with. */
public interface LesionFill {
    /** Replaces lesioned values with zeros (the default). */
    LesionFill ZERO = new LesionFill() {
        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            java.util.Arrays.fill(out, 0, batch.length(sample), 0f);
        }

        @Override
        public boolean isZero() {
            return true;
        }

        @Override
        public String toString() {
            return "zero";
        }
    };

    /**
     * Writes the replacement series of {@code region} for sample {@code sample} into {@code out[0..length)}.
     * Must be deterministic and thread-safe: the same call always writes the same values.
     */
    void fill(InputBatch batch, int sample, int region, float[] out);

    /** True when every replacement value is 0, which engines may exploit. */
    default boolean isZero() {
        return false;
    }
}
