package org.cruxset.scoring.decoder;

import java.util.Objects;
import org.cruxset.scoring.lesion.RegionSet;

/** A virtual lesion as the decoder sees it: which input regions are replaced, and with what. */
public record InputMask(RegionSet regions, LesionFill fill) {
    public InputMask {
        Objects.requireNonNull(regions, "regions");
        Objects.requireNonNull(fill, "fill");
    }

    /** The intact input (no region lesioned). */
    public static InputMask none(int universe) {
        return new InputMask(RegionSet.empty(universe), LesionFill.ZERO);
    }

    /** Zero-fill lesion of {@code regions}. */
    public static InputMask zero(RegionSet regions) {
        return new InputMask(regions, LesionFill.ZERO);
    }

    /** Writes the masked input of one sample into {@code out} (length × regions, time-major). */
    public void apply(InputBatch batch, int sample, float[] out) {
        float[] x = batch.series(sample);
        System.arraycopy(x, 0, out, 0, x.length);
        if (regions.isEmpty()) {
            return;
        }
        int n = batch.regions();
        int len = batch.length(sample);
        float[] buf = new float[len];
        for (int r : regions.positions()) {
            fill.fill(batch, sample, r, buf);
            for (int t = 0; t < len; t++) {
                out[t * n + r] = buf[t];
            }
        }
    }
}
