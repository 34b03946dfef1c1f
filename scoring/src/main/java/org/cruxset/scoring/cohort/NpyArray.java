package org.cruxset.scoring.cohort;

import java.util.Arrays;

/** A float array of any rank read from or written to a .npy file, with its values in C (row-major) order. */
public record NpyArray(int[] shape, float[] data) {
    /** Copies both arrays and checks that {@code data} holds exactly the number of elements the shape implies. */
    public NpyArray {
        if (shape == null) {
            throw new IllegalArgumentException("shape must not be null");
        }
        if (data == null) {
            throw new IllegalArgumentException("data must not be null");
        }
        shape = shape.clone();
        long n = elementCount(shape);
        if (n != data.length) {
            throw new IllegalArgumentException("data must hold " + n + " floats for shape " + shapeText(shape)
                    + ", found " + data.length);
        }
        data = data.clone();
    }

    /** A copy of the shape. */
    @Override
    public int[] shape() {
        return shape.clone();
    }

    /** A copy of the values in C order. */
    @Override
    public float[] data() {
        return data.clone();
    }

    /** Number of dimensions. */
    public int rank() {
        return shape.length;
    }

    /** Length of dimension {@code axis}. */
    public int dim(int axis) {
        return shape[axis];
    }

    /** Number of elements. */
    public int size() {
        return data.length;
    }

    /** Value at a C-order flat index. */
    public float flat(int index) {
        return data[index];
    }

    /** Value at a multi-dimensional index, one entry per axis. */
    public float get(int... index) {
        if (index.length != shape.length) {
            throw new IllegalArgumentException("index must have " + shape.length + " entries, found " + index.length);
        }
        int flat = 0;
        for (int a = 0; a < shape.length; a++) {
            if (index[a] < 0 || index[a] >= shape[a]) {
                throw new IndexOutOfBoundsException("index " + index[a] + " out of range [0, " + shape[a]
                        + ") on axis " + a);
            }
            flat = flat * shape[a] + index[a];
        }
        return data[flat];
    }

    /** Copies {@code length} values starting at flat index {@code from} into {@code dest} at {@code destPos}. */
    public void copyTo(int from, float[] dest, int destPos, int length) {
        System.arraycopy(data, from, dest, destPos, length);
    }

    /** Product of the dimensions (1 for a 0-d shape, {@code Long.MAX_VALUE} past {@code Integer.MAX_VALUE}). */
    static long elementCount(int[] shape) {
        for (int d : shape) {
            if (d < 0) {
                throw new IllegalArgumentException("shape dimensions must be at least 0, found " + shapeText(shape));
            }
        }
        for (int d : shape) {
            if (d == 0) {
                return 0;
            }
        }
        long n = 1;
        for (int d : shape) {
            n *= d;
            if (n > Integer.MAX_VALUE) {
                return Long.MAX_VALUE;
            }
        }
        return n;
    }

    /** The shape spelled like Python, e.g. {@code (2, 3)} or {@code (5,)}. */
    static String shapeText(int[] shape) {
        StringBuilder sb = new StringBuilder("(");
        for (int i = 0; i < shape.length; i++) {
            if (i > 0) {
                sb.append(", ");
            }
            sb.append(shape[i]);
        }
        if (shape.length == 1) {
            sb.append(',');
        }
        return sb.append(')').toString();
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof NpyArray a && Arrays.equals(a.shape, shape) && Arrays.equals(a.data, data);
    }

    @Override
    public int hashCode() {
        return 31 * Arrays.hashCode(shape) + Arrays.hashCode(data);
    }

    @Override
    public String toString() {
        return "NpyArray[shape=" + shapeText(shape) + ", " + data.length + " floats]";
    }
}
