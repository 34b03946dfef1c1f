package org.cruxset.scoring.onnx.reader;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import com.google.protobuf.ByteString;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/** Access to the ONNX protobuf messages: node attributes, and initializer tensors decoded to float or integer arrays. */
final class Protos {
    private Protos() {
    }

    // ------------------------------------------------------------------------------------------ attributes

    static AttributeProto attr(NodeProto n, String name) {
        for (AttributeProto a : n.getAttributeList()) {
            if (a.getName().equals(name)) {
                return a;
            }
        }
        return null;
    }

    static long intAttr(NodeProto n, String name, long dflt) {
        AttributeProto a = attr(n, name);
        return a == null ? dflt : a.getI();
    }

    static float floatAttr(NodeProto n, String name, float dflt) {
        AttributeProto a = attr(n, name);
        return a == null ? dflt : a.getF();
    }

    static long[] intsAttr(NodeProto n, String name) {
        AttributeProto a = attr(n, name);
        if (a == null) {
            return null;
        }
        long[] v = new long[a.getIntsCount()];
        for (int i = 0; i < v.length; i++) {
            v[i] = a.getInts(i);
        }
        return v;
    }

    static String stringAttr(NodeProto n, String name) {
        AttributeProto a = attr(n, name);
        return a == null ? null : a.getS().toStringUtf8();
    }

    // ------------------------------------------------------------------------------------------ tensors

    /** A constant tensor: float data for float types, integer data for integer types. */
    record Tensor(long[] dims, float[] f, long[] i) {
        boolean isFloat() {
            return f != null;
        }

        int size() {
            return f != null ? f.length : i.length;
        }

        boolean allZero() {
            if (f != null) {
                for (float v : f) {
                    if (v != 0f) {
                        return false;
                    }
                }
            } else {
                for (long v : i) {
                    if (v != 0) {
                        return false;
                    }
                }
            }
            return true;
        }

        double get(int k) {
            return f != null ? f[k] : i[k];
        }

        Tensor withDims(long[] d) {
            return new Tensor(d, f, i);
        }

        String shape() {
            return Arrays.toString(dims);
        }
    }

    static long product(long[] d) {
        long p = 1;
        for (long x : d) {
            p *= x;
        }
        return p;
    }

    /** The tensor's values, or a reason it cannot be read. */
    static Object tensor(TensorProto t) {
        if (t.getDataLocation() == TensorProto.DataLocation.EXTERNAL) {
            return "tensor '" + t.getName() + "' is stored as external data";
        }
        long[] dims = new long[t.getDimsCount()];
        for (int k = 0; k < dims.length; k++) {
            dims[k] = t.getDims(k);
        }
        long count = product(dims);
        if (count > Integer.MAX_VALUE) {
            return "tensor '" + t.getName() + "' is too large";
        }
        int n = (int) count;
        int type = t.getDataType();
        ByteString raw = t.getRawData();
        boolean hasRaw = t.hasRawData();
        switch (type) {
            case TensorProto.DataType.FLOAT_VALUE -> {
                float[] f = new float[n];
                if (hasRaw) {
                    if (raw.size() != 4L * n) {
                        return "tensor '" + t.getName() + "' holds " + raw.size() + " bytes for " + n + " floats";
                    }
                    raw.asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN).asFloatBuffer().get(f);
                } else {
                    if (t.getFloatDataCount() != n) {
                        return "tensor '" + t.getName() + "' holds " + t.getFloatDataCount() + " floats for shape " + Arrays.toString(dims);
                    }
                    for (int k = 0; k < n; k++) {
                        f[k] = t.getFloatData(k);
                    }
                }
                return new Tensor(dims, f, null);
            }
            case TensorProto.DataType.DOUBLE_VALUE -> {
                float[] f = new float[n];
                if (hasRaw) {
                    if (raw.size() != 8L * n) {
                        return "tensor '" + t.getName() + "' holds " + raw.size() + " bytes for " + n + " doubles";
                    }
                    ByteBuffer b = raw.asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN);
                    for (int k = 0; k < n; k++) {
                        f[k] = (float) b.getDouble();
                    }
                } else {
                    if (t.getDoubleDataCount() != n) {
                        return "tensor '" + t.getName() + "' holds " + t.getDoubleDataCount() + " doubles for shape " + Arrays.toString(dims);
                    }
                    for (int k = 0; k < n; k++) {
                        f[k] = (float) t.getDoubleData(k);
                    }
                }
                return new Tensor(dims, f, null);
            }
            case TensorProto.DataType.INT64_VALUE -> {
                long[] v = new long[n];
                if (hasRaw) {
                    if (raw.size() != 8L * n) {
                        return "tensor '" + t.getName() + "' holds " + raw.size() + " bytes for " + n + " int64 values";
                    }
                    raw.asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN).asLongBuffer().get(v);
                } else {
                    if (t.getInt64DataCount() != n) {
                        return "tensor '" + t.getName() + "' holds " + t.getInt64DataCount() + " int64 values for shape " + Arrays.toString(dims);
                    }
                    for (int k = 0; k < n; k++) {
                        v[k] = t.getInt64Data(k);
                    }
                }
                return new Tensor(dims, null, v);
            }
            case TensorProto.DataType.INT32_VALUE -> {
                long[] v = new long[n];
                if (hasRaw) {
                    if (raw.size() != 4L * n) {
                        return "tensor '" + t.getName() + "' holds " + raw.size() + " bytes for " + n + " int32 values";
                    }
                    java.nio.IntBuffer b = raw.asReadOnlyByteBuffer().order(ByteOrder.LITTLE_ENDIAN).asIntBuffer();
                    for (int k = 0; k < n; k++) {
                        v[k] = b.get(k);
                    }
                } else {
                    if (t.getInt32DataCount() != n) {
                        return "tensor '" + t.getName() + "' holds " + t.getInt32DataCount() + " int32 values for shape " + Arrays.toString(dims);
                    }
                    for (int k = 0; k < n; k++) {
                        v[k] = t.getInt32Data(k);
                    }
                }
                return new Tensor(dims, null, v);
            }
            default -> {
                return "tensor '" + t.getName() + "' has data type " + typeName(type);
            }
        }
    }

    // ------------------------------------------------------------------------------------------ tensor helpers

    static Tensor transpose(Tensor t, long[] perm) {
        long[] d = t.dims();
        int r = d.length;
        if (perm == null) {
            perm = new long[r];
            for (int k = 0; k < r; k++) {
                perm[k] = r - 1 - k;
            }
        }
        long[] nd = new long[r];
        for (int k = 0; k < r; k++) {
            nd[k] = d[(int) perm[k]];
        }
        long[] stride = new long[r];
        long s = 1;
        for (int k = r - 1; k >= 0; k--) {
            stride[k] = s;
            s *= d[k];
        }
        int n = t.size();
        float[] f = t.isFloat() ? new float[n] : null;
        long[] iv = t.isFloat() ? null : new long[n];
        int[] idx = new int[r];
        for (int o = 0; o < n; o++) {
            long src = 0;
            for (int k = 0; k < r; k++) {
                src += idx[k] * stride[(int) perm[k]];
            }
            if (f != null) {
                f[o] = t.f()[(int) src];
            } else {
                iv[o] = t.i()[(int) src];
            }
            for (int k = r - 1; k >= 0; k--) {
                if (++idx[k] < nd[k]) {
                    break;
                }
                idx[k] = 0;
            }
        }
        return new Tensor(nd, f, iv);
    }

    /** The constants {@code ts} joined along {@code axis}, or null when their ranks or types differ. */
    static Tensor concat(List<Tensor> ts, long axis) {
        Tensor first = ts.get(0);
        int r = first.dims().length;
        int k = (int) (axis < 0 ? axis + r : axis);
        long outer = 1;
        for (int i = 0; i < k; i++) {
            outer *= first.dims()[i];
        }
        long inner = 1;
        for (int i = k + 1; i < r; i++) {
            inner *= first.dims()[i];
        }
        long total = 0;
        for (Tensor t : ts) {
            if (t.dims().length != r || t.isFloat() != first.isFloat()) {
                return null;
            }
            total += t.dims()[k];
        }
        long[] nd = first.dims().clone();
        nd[k] = total;
        int n = (int) product(nd);
        float[] f = first.isFloat() ? new float[n] : null;
        long[] iv = first.isFloat() ? null : new long[n];
        int o = 0;
        for (long a = 0; a < outer; a++) {
            for (Tensor t : ts) {
                int len = (int) (t.dims()[k] * inner);
                int from = (int) (a * len);
                if (f != null) {
                    System.arraycopy(t.f(), from, f, o, len);
                } else {
                    System.arraycopy(t.i(), from, iv, o, len);
                }
                o += len;
            }
        }
        return new Tensor(nd, f, iv);
    }

    /** The name of an ONNX tensor data type: "float", "int64", ... */
    static String typeName(int type) {
        TensorProto.DataType t = TensorProto.DataType.forNumber(type);
        return t == null ? "type " + type : t.name().toLowerCase(Locale.ROOT);
    }
}
