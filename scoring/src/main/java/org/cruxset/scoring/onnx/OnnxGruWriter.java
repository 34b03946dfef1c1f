package org.cruxset.scoring.onnx;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.OperatorSetIdProto;
import ai.onnx.proto.OnnxMl.StringStringEntryProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import ai.onnx.proto.OnnxMl.TensorShapeProto;
import ai.onnx.proto.OnnxMl.TypeProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import com.google.protobuf.ByteString;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.lstm.LstmLayer;
import org.cruxset.scoring.lstm.LstmNetwork;

/** Writes a {@link GruNetwork} as a standard ONNX model (IR 8, opset 13) that any ONNX runtime can run. */
public final class OnnxGruWriter {
    /** Metadata key of the class labels in output order, joined by newlines. */
    public static final String CLASSES_KEY = "cruxset.classes";
    /** Metadata key of the region names in input order, joined by newlines. */
    public static final String REGIONS_KEY = "cruxset.regions";
    /** Metadata key of the preprocessing label ({@link Preprocessing#label()}). */
    public static final String PREPROCESSING_KEY = "cruxset.preprocessing";
    /** Metadata key of the Cruxset model format. */
    public static final String FORMAT_KEY = "cruxset.format";
    /** The format this writer produces. */
    public static final String FORMAT = "gru/1";
    /** Value of {@link #FORMAT_KEY} in LSTM models this writer produced. */
    public static final String LSTM_FORMAT = "lstm/1";

    static final long IR_VERSION = 8;
    static final long OPSET = 13;
    private static final Set<String> RESERVED = Set.of(CLASSES_KEY, REGIONS_KEY, PREPROCESSING_KEY, FORMAT_KEY);

    private OnnxGruWriter() {
    }

    /**
     * The serialized model: inputs {@code input} float [batch, time, regions] and {@code lengths} int32 [batch],
     * outputs {@code scores} and {@code probabilities} float [batch, classes]; {@code regionNames} may be empty.
     */
    public static byte[] write(GruNetwork net, List<String> regionNames, List<String> classLabels, Preprocessing pre,
                               Map<String, String> extraMetadata) {
        return model(net, regionNames, classLabels, pre, extraMetadata).toByteArray();
    }

    /** The model as a protobuf message (see {@link #write}). */
    public static ModelProto model(GruNetwork net, List<String> regionNames, List<String> classLabels, Preprocessing pre,
                                   Map<String, String> extraMetadata) {
        Objects.requireNonNull(net, "net");
        List<Layer> layers = new java.util.ArrayList<>();
        for (GruLayer l : net.layers()) {
            float[] b = new float[6 * l.hidden()];
            System.arraycopy(l.wb(), 0, b, 0, 3 * l.hidden());
            System.arraycopy(l.rb(), 0, b, 3 * l.hidden(), 3 * l.hidden());
            layers.add(new Layer("GRU", 3, l.input(), l.hidden(), l.w(), l.r(), b, l.linearBeforeReset()));
        }
        return model(layers, net.classes(), net.readout(), net.bias(), FORMAT, regionNames, classLabels, pre,
                extraMetadata);
    }

    /** An LSTM classifier in the same form as {@link #write(GruNetwork, List, List, Preprocessing, Map)}: LSTM nodes. */
    public static byte[] write(LstmNetwork net, List<String> regionNames, List<String> classLabels, Preprocessing pre,
                               Map<String, String> extraMetadata) {
        Objects.requireNonNull(net, "net");
        List<Layer> layers = new java.util.ArrayList<>();
        for (LstmLayer l : net.layers()) {
            float[] b = new float[8 * l.hidden()];
            System.arraycopy(l.wb(), 0, b, 0, 4 * l.hidden());
            System.arraycopy(l.rb(), 0, b, 4 * l.hidden(), 4 * l.hidden());
            layers.add(new Layer("LSTM", 4, l.input(), l.hidden(), l.w(), l.r(), b, false));
        }
        return model(layers, net.classes(), net.readout(), net.bias(), LSTM_FORMAT, regionNames, classLabels, pre,
                extraMetadata).toByteArray();
    }

    /** One recurrent layer as written: operator, gates, sizes, W, R and B in the operator's layout. */
    private record Layer(String op, int gates, int input, int hidden, float[] w, float[] r, float[] b,
                         boolean linearBeforeReset) {
    }

    private static ModelProto model(List<Layer> layers, int classes, float[] readout, float[] readoutBias, String format,
                                    List<String> regionNames, List<String> classLabels, Preprocessing pre,
                                    Map<String, String> extraMetadata) {
        Objects.requireNonNull(pre, "pre");
        Objects.requireNonNull(extraMetadata, "extraMetadata");
        int inputs = layers.get(0).input();
        if (classLabels.size() != classes) {
            throw new IllegalArgumentException(classLabels.size() + " class labels given for a network of "
                    + classes + " classes");
        }
        if (!regionNames.isEmpty() && regionNames.size() != inputs) {
            throw new IllegalArgumentException(regionNames.size() + " region names given for a network of "
                    + inputs + " inputs");
        }
        requireSingleLines("class label", classLabels);
        requireSingleLines("region name", regionNames);

        int n = inputs;
        int k = classes;
        GraphProto.Builder g = GraphProto.newBuilder().setName(format.equals(FORMAT) ? "cruxset_gru" : "cruxset_lstm");
        g.addInput(valueInfo("input", TensorProto.DataType.FLOAT, "batch", "time", n));
        g.addInput(valueInfo("lengths", TensorProto.DataType.INT32, "batch"));
        g.addOutput(valueInfo("scores", TensorProto.DataType.FLOAT, "batch", k));
        g.addOutput(valueInfo("probabilities", TensorProto.DataType.FLOAT, "batch", k));
        g.addInitializer(int64Tensor("axes_0", 0));
        if (layers.size() > 1) {
            g.addInitializer(int64Tensor("axes_1", 1));
        }

        g.addNode(node("Transpose", "to_time_major", List.of("input"), List.of("input_tm"))
                .addAttribute(ints("perm", new long[] {1, 0, 2})));
        String x = "input_tm";
        for (int i = 0; i < layers.size(); i++) {
            Layer l = layers.get(i);
            int h = l.hidden();
            long gh = (long) l.gates() * h;
            String p = l.op().toLowerCase(java.util.Locale.ROOT) + i;
            g.addInitializer(floatTensor(p + "_W", l.w(), 1, gh, l.input()));
            g.addInitializer(floatTensor(p + "_R", l.r(), 1, gh, h));
            g.addInitializer(floatTensor(p + "_B", l.b(), 1, 2 * gh));
            boolean last = i == layers.size() - 1;
            String y = last ? "" : p + "_Y";
            String yh = last ? p + "_Y_h" : "";
            NodeProto.Builder rec = node(l.op(), p, List.of(x, p + "_W", p + "_R", p + "_B", "lengths"), List.of(y, yh))
                    .addAttribute(integer("hidden_size", h))
                    .addAttribute(AttributeProto.newBuilder().setName("direction")
                            .setType(AttributeProto.AttributeType.STRING)
                            .setS(ByteString.copyFromUtf8("forward")));
            if (l.op().equals("GRU")) {
                rec.addAttribute(integer("linear_before_reset", l.linearBeforeReset() ? 1 : 0));
            }
            g.addNode(rec);
            if (last) {
                g.addNode(node("Squeeze", p + "_drop_direction", List.of(yh, "axes_0"), List.of("last_state")));
            } else {
                g.addNode(node("Squeeze", p + "_drop_direction", List.of(y, "axes_1"), List.of(p + "_out")));
                x = p + "_out";
            }
        }
        g.addInitializer(floatTensor("readout_weight", readout, k, layers.get(layers.size() - 1).hidden()));
        g.addInitializer(floatTensor("readout_bias", readoutBias, k));
        g.addNode(node("Gemm", "readout", List.of("last_state", "readout_weight", "readout_bias"), List.of("scores"))
                .addAttribute(integer("transB", 1)));
        g.addNode(node("Softmax", "class_probabilities", List.of("scores"), List.of("probabilities"))
                .addAttribute(integer("axis", 1)));

        ModelProto.Builder m = ModelProto.newBuilder()
                .setIrVersion(IR_VERSION)
                .setProducerName("cruxset")
                .addOpsetImport(OperatorSetIdProto.newBuilder().setDomain("").setVersion(OPSET))
                .setGraph(g);
        Map<String, String> meta = new LinkedHashMap<>();
        meta.put(CLASSES_KEY, String.join("\n", classLabels));
        if (!regionNames.isEmpty()) {
            meta.put(REGIONS_KEY, String.join("\n", regionNames));
        }
        meta.put(PREPROCESSING_KEY, pre.label());
        meta.put(FORMAT_KEY, format);
        for (Map.Entry<String, String> e : extraMetadata.entrySet()) {
            if (RESERVED.contains(e.getKey())) {
                throw new IllegalArgumentException("extra metadata may not set the reserved key '" + e.getKey() + "'");
            }
            meta.put(e.getKey(), e.getValue());
        }
        meta.forEach((key, value) -> m.addMetadataProps(StringStringEntryProto.newBuilder().setKey(key).setValue(value)));
        return m.build();
    }

    private static void requireSingleLines(String what, List<String> values) {
        for (String v : values) {
            if (v.isEmpty() || v.indexOf('\n') >= 0 || v.indexOf('\r') >= 0) {
                throw new IllegalArgumentException(what + " must be a non-empty single line, found '" + v + "'");
            }
        }
    }

    private static NodeProto.Builder node(String op, String name, List<String> inputs, List<String> outputs) {
        return NodeProto.newBuilder().setOpType(op).setName(name).addAllInput(inputs).addAllOutput(outputs);
    }

    /** An INT attribute. */
    static AttributeProto integer(String name, long v) {
        return AttributeProto.newBuilder().setName(name).setType(AttributeProto.AttributeType.INT).setI(v).build();
    }

    /** An INTS attribute. */
    static AttributeProto ints(String name, long... v) {
        AttributeProto.Builder a = AttributeProto.newBuilder().setName(name).setType(AttributeProto.AttributeType.INTS);
        for (long x : v) {
            a.addInts(x);
        }
        return a.build();
    }

    /** A tensor value description; a String dimension is symbolic, a number fixed. */
    static ValueInfoProto valueInfo(String name, TensorProto.DataType type, Object... dims) {
        TensorShapeProto.Builder shape = TensorShapeProto.newBuilder();
        for (Object d : dims) {
            TensorShapeProto.Dimension.Builder dim = TensorShapeProto.Dimension.newBuilder();
            if (d instanceof String s) {
                dim.setDimParam(s);
            } else {
                dim.setDimValue(((Number) d).longValue());
            }
            shape.addDim(dim);
        }
        return ValueInfoProto.newBuilder().setName(name)
                .setType(TypeProto.newBuilder().setTensorType(TypeProto.Tensor.newBuilder()
                        .setElemType(type.getNumber()).setShape(shape)))
                .build();
    }

    static TensorProto floatTensor(String name, float[] values, long... dims) {
        ByteBuffer buf = ByteBuffer.allocate(4 * values.length).order(ByteOrder.LITTLE_ENDIAN);
        buf.asFloatBuffer().put(values);
        TensorProto.Builder t = TensorProto.newBuilder().setName(name)
                .setDataType(TensorProto.DataType.FLOAT.getNumber())
                .setRawData(ByteString.copyFrom(buf.array()));
        for (long d : dims) {
            t.addDims(d);
        }
        return t.build();
    }

    static TensorProto int64Tensor(String name, long... values) {
        TensorProto.Builder t = TensorProto.newBuilder().setName(name)
                .setDataType(TensorProto.DataType.INT64.getNumber())
                .addDims(values.length);
        for (long v : values) {
            t.addInt64Data(v);
        }
        return t.build();
    }
}
