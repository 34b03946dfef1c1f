package org.cruxset.scoring.kernel;

/**
 * A weight matrix {@code w[k][m]} laid out once for repeated products ({@link EngineKernels#gemm(float[][], int,
 * PackedMatrix, float[][], int)}): the rows as given, and, for the vector kernels, the columns cut into panels of the
 * tile width stored k-major in one array, so that the k loop of a tile reads consecutive memory. Immutable once
 * built; the rows are not copied and must not change.
 */
public final class PackedMatrix {
    final float[][] rows;
    final int k;
    final int m;
    /** Panel width in columns (0: no panels). */
    final int width;
    /** Panels of {@code width} columns, k rows each, one after another; columns past the last full panel are absent. */
    final float[] panels;

    PackedMatrix(float[][] rows, int m, int width) {
        this.rows = rows;
        this.k = rows.length;
        this.m = m;
        this.width = width;
        int full = width == 0 ? 0 : m / width;
        panels = new float[full * width * k];
        int p = 0;
        for (int t = 0; t < full; t++) {
            for (int j = 0; j < k; j++) {
                System.arraycopy(rows[j], t * width, panels, p, width);
                p += width;
            }
        }
    }

    /** Rows (inputs) of the matrix. */
    public int inputs() {
        return k;
    }

    /** Columns (outputs) of the matrix. */
    public int outputs() {
        return m;
    }
}
