package org.cruxset.scoring.onnx;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.OperatorSetIdProto;
import ai.onnx.proto.OnnxMl.StringStringEntryProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import ai.onnx.proto.OnnxMl.TensorShapeProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import com.google.protobuf.ByteString;
import com.google.protobuf.InvalidProtocolBufferException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.Collections;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.stream.Collectors;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.lstm.LstmLayer;
import org.cruxset.scoring.lstm.LstmNetwork;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;

/**
 * Recognises the canonical GRU form in any ONNX model from its graph structure: stacked forward GRU nodes on the
 * float input (time-first, or batch-first through Transpose perm [1,0,2]), the last valid time step, an affine
 * readout (Gemm, or MatMul and Add) and optionally a final Softmax or LogSoftmax; or says precisely why not.
 */
public final class OnnxGruReader {
    private static final long BIG_END = Integer.MAX_VALUE;

    private OnnxGruReader() {
    }

    /** What a model's class-score output carries. */
    public enum Output {
        /** Unnormalised class scores. */
        LOGITS,
        /** A Softmax over the classes. */
        PROBABILITIES,
        /** A LogSoftmax over the classes. */
        LOG_PROBABILITIES
    }

    /**
     * A model's interface as its graph states it, for any model: the float series input, its region count (-1 when
     * not fixed), the lengths input (null when none), the class-score output, its width (-1 when not fixed), the
     * input layout when the graph structure shows it (else AUTO), the layout the input's dimension names suggest
     * (else AUTO), how the layout was told, what the output carries, and the metadata properties.
     */
    public record Signature(String input, int regions, String lengths, String output, int classes, Layout layout,
                            Layout layoutHint, String layoutEvidence, Output outputKind, Map<String, String> metadata) {
        public Signature {
            Objects.requireNonNull(input, "input");
            Objects.requireNonNull(output, "output");
            Objects.requireNonNull(layout, "layout");
            Objects.requireNonNull(layoutHint, "layoutHint");
            Objects.requireNonNull(layoutEvidence, "layoutEvidence");
            Objects.requireNonNull(outputKind, "outputKind");
            metadata = Collections.unmodifiableMap(new LinkedHashMap<>(metadata));
        }
    }

    /** The outcome of {@link #analyse}: {@link Canonical} or {@link Refused}. */
    public sealed interface Analysis permits Canonical, Refused {
    }

    /**
     * A model in canonical GRU form: the network, the input layout (BATCH_FIRST or TIME_FIRST), what the output
     * carries, whether the GRUs take their sequence lengths from a graph input, and a one-line description.
     */
    public record Canonical(GruNetwork network, LstmNetwork lstm, Layout layout, Output output, boolean hasLengths,
                            String description) implements Analysis {
        public Canonical {
            if ((network == null) == (lstm == null)) {
                throw new IllegalArgumentException("a canonical model holds either a GRU or an LSTM network");
            }
            Objects.requireNonNull(layout, "layout");
            Objects.requireNonNull(output, "output");
            Objects.requireNonNull(description, "description");
        }
    }

    /** Number of input regions. */
    public static int inputs(Canonical c) {
        return c.network() != null ? c.network().inputs() : c.lstm().inputs();
    }

    /** Number of classes. */
    public static int classes(Canonical c) {
        return c.network() != null ? c.network().classes() : c.lstm().classes();
    }

    /** A model not in canonical GRU form, with the reason. */
    public record Refused(String reason) implements Analysis {
        public Refused {
            Objects.requireNonNull(reason, "reason");
        }
    }

    /** Parses serialized model bytes; a malformed model raises IllegalArgumentException. */
    public static ModelProto parse(byte[] bytes) {
        try {
            ModelProto m = ModelProto.parseFrom(bytes);
            if (!m.hasGraph()) {
                throw new IllegalArgumentException("not an ONNX model: no graph");
            }
            return m;
        } catch (InvalidProtocolBufferException e) {
            throw new IllegalArgumentException("not an ONNX model: " + e.getMessage(), e);
        }
    }

    /** The metadata properties of a model, in file order. */
    public static Map<String, String> metadata(ModelProto model) {
        Map<String, String> m = new LinkedHashMap<>();
        for (StringStringEntryProto e : model.getMetadataPropsList()) {
            m.put(e.getKey(), e.getValue());
        }
        return m;
    }

    /** The interface of any model with one float series input; an unsupported interface raises IllegalArgumentException. */
    public static Signature signature(ModelProto model) {
        GraphProto g = model.getGraph();
        Inputs in = inputs(g);
        if (in.problem != null) {
            throw new IllegalArgumentException(in.problem);
        }
        ValueInfoProto x = in.series;
        long[] xd = dims(x);
        int regions = xd != null && xd.length == 3 && xd[2] > 0 ? (int) xd[2] : -1;
        ValueInfoProto out = chooseOutput(g);
        long[] od = dims(out);
        int classes = od != null && od.length == 2 && od[1] > 0 ? (int) od[1] : -1;
        String[] evidence = new String[1];
        Layout layout = detectLayout(g, x, evidence);
        Layout hint = layout;
        if (layout == Layout.AUTO) {
            hint = layoutByNames(x, evidence);
        }
        return new Signature(x.getName(), regions, in.lengths == null ? null : in.lengths.getName(), out.getName(),
                classes, layout, hint, evidence[0], outputKind(g, out.getName(), opset(model)), metadata(model));
    }

    /** Whether the model is in canonical GRU form, with the network or the reason it is not. */
    public static Analysis analyse(ModelProto model) {
        GraphProto g = model.getGraph();
        Inputs in = inputs(g);
        if (in.problem != null) {
            return new Refused(in.problem);
        }
        try {
            return new Interpreter(model, in).run();
        } catch (RuntimeException e) {
            return new Refused("the graph could not be read: " + e.getMessage());
        }
    }

    // ------------------------------------------------------------------------------------------ interface

    private record Inputs(ValueInfoProto series, ValueInfoProto lengths, String problem) {
    }

    private static Inputs inputs(GraphProto g) {
        Set<String> inits = new HashSet<>();
        for (TensorProto t : g.getInitializerList()) {
            inits.add(t.getName());
        }
        ValueInfoProto series = null;
        ValueInfoProto lengths = null;
        for (ValueInfoProto v : g.getInputList()) {
            if (inits.contains(v.getName())) {
                continue;
            }
            int type = v.getType().getTensorType().getElemType();
            long[] d = dims(v);
            if (type == TensorProto.DataType.FLOAT_VALUE && (d == null || d.length == 3) && series == null) {
                series = v;
            } else if ((type == TensorProto.DataType.INT32_VALUE || type == TensorProto.DataType.INT64_VALUE)
                    && (d == null || d.length == 1) && lengths == null) {
                lengths = v;
            } else {
                return new Inputs(null, null, "graph input '" + v.getName() + "' (" + typeName(type) + " " + shapeText(v)
                        + ") is neither the float [batch, time, regions] series nor an int32/int64 [batch] lengths vector");
            }
        }
        if (series == null) {
            return new Inputs(null, null, "the graph has no float input of rank 3 (the region time series)");
        }
        return new Inputs(series, lengths, null);
    }

    /** The class-score output: the single output, else "probabilities", else "scores", else the first of rank 2. */
    static ValueInfoProto chooseOutput(GraphProto g) {
        List<ValueInfoProto> outs = g.getOutputList();
        if (outs.isEmpty()) {
            throw new IllegalArgumentException("the graph has no outputs");
        }
        if (outs.size() == 1) {
            return outs.get(0);
        }
        for (String preferred : List.of("probabilities", "scores")) {
            for (ValueInfoProto v : outs) {
                if (v.getName().equals(preferred)) {
                    return v;
                }
            }
        }
        for (ValueInfoProto v : outs) {
            long[] d = dims(v);
            if (d != null && d.length == 2) {
                return v;
            }
        }
        throw new IllegalArgumentException("none of the outputs " + outs.stream().map(ValueInfoProto::getName).toList()
                + " is a [batch, classes] tensor");
    }

    private static Output outputKind(GraphProto g, String output, long opset) {
        Map<String, NodeProto> producer = new HashMap<>();
        for (NodeProto n : g.getNodeList()) {
            for (String o : n.getOutputList()) {
                producer.put(o, n);
            }
        }
        String name = output;
        for (int hops = 0; hops < 1000; hops++) {
            NodeProto n = producer.get(name);
            if (n == null) {
                return Output.LOGITS;
            }
            String op = n.getOpType();
            if (op.equals("Identity") && n.getInputCount() == 1) {
                name = n.getInput(0);
                continue;
            }
            if (op.equals("Softmax") || op.equals("LogSoftmax")) {
                long axis = intAttr(n, "axis", opset >= 13 ? -1 : 1);
                if (axis == 1 || axis == -1) {
                    return op.equals("Softmax") ? Output.PROBABILITIES : Output.LOG_PROBABILITIES;
                }
            }
            return Output.LOGITS;
        }
        return Output.LOGITS;
    }

    private static Layout detectLayout(GraphProto g, ValueInfoProto x, String[] evidence) {
        Map<String, List<NodeProto>> consumers = new HashMap<>();
        for (NodeProto n : g.getNodeList()) {
            for (String i : n.getInputList()) {
                consumers.computeIfAbsent(i, k -> new ArrayList<>()).add(n);
            }
        }
        String name = x.getName();
        for (NodeProto n : consumers.getOrDefault(name, List.of())) {
            Layout l = recurrentLayout(n, name, consumers, false, evidence);
            if (l != null) {
                return l;
            }
        }
        return Layout.AUTO;
    }

    private static Layout layoutByNames(ValueInfoProto x, String[] evidence) {
        String[] p = dimParams(x);
        if (p != null && p.length == 3) {
            boolean b0 = isBatchName(p[0]);
            boolean b1 = isBatchName(p[1]);
            boolean t0 = isTimeName(p[0]);
            boolean t1 = isTimeName(p[1]);
            if ((b0 || t1) && !(b1 || t0)) {
                evidence[0] = "input dimension names " + Arrays.toString(p);
                return Layout.BATCH_FIRST;
            }
            if ((t0 || b1) && !(t1 || b0)) {
                evidence[0] = "input dimension names " + Arrays.toString(p);
                return Layout.TIME_FIRST;
            }
        }
        evidence[0] = "the graph does not show whether input '" + x.getName() + "' " + shapeText(x)
                + " is batch-first or time-first";
        return Layout.AUTO;
    }

    private static Layout recurrentLayout(NodeProto n, String value, Map<String, List<NodeProto>> consumers,
                                          boolean transposed, String[] evidence) {
        String op = n.getOpType();
        if (op.equals("GRU") || op.equals("LSTM") || op.equals("RNN")) {
            if (n.getInputCount() == 0 || !n.getInput(0).equals(value)) {
                return null;
            }
            boolean batchMajor = intAttr(n, "layout", 0) == 1;
            evidence[0] = transposed ? "Transpose perm [1,0,2] before the " + op
                    : "the input feeds the " + op + " directly" + (batchMajor ? " (layout=1)" : "");
            return batchMajor != transposed ? Layout.BATCH_FIRST : Layout.TIME_FIRST;
        }
        if (op.equals("Identity")) {
            for (NodeProto c : consumers.getOrDefault(n.getOutput(0), List.of())) {
                Layout l = recurrentLayout(c, n.getOutput(0), consumers, transposed, evidence);
                if (l != null) {
                    return l;
                }
            }
        }
        if (op.equals("Transpose") && !transposed && Arrays.equals(intsAttr(n, "perm"), new long[] {1, 0, 2})) {
            for (NodeProto c : consumers.getOrDefault(n.getOutput(0), List.of())) {
                Layout l = recurrentLayout(c, n.getOutput(0), consumers, true, evidence);
                if (l != null) {
                    return l;
                }
            }
        }
        return null;
    }

    private static boolean isBatchName(String s) {
        return s != null && s.toLowerCase(Locale.ROOT).contains("batch");
    }

    private static boolean isTimeName(String s) {
        if (s == null) {
            return false;
        }
        String t = s.toLowerCase(Locale.ROOT);
        return t.contains("time") || t.contains("seq") || t.contains("step");
    }

    static long opset(ModelProto m) {
        for (OperatorSetIdProto o : m.getOpsetImportList()) {
            if (o.getDomain().isEmpty() || o.getDomain().equals("ai.onnx")) {
                return o.getVersion();
            }
        }
        return 1;
    }

    private static long[] dims(ValueInfoProto v) {
        if (!v.getType().hasTensorType() || !v.getType().getTensorType().hasShape()) {
            return null;
        }
        TensorShapeProto s = v.getType().getTensorType().getShape();
        long[] d = new long[s.getDimCount()];
        for (int i = 0; i < d.length; i++) {
            TensorShapeProto.Dimension dim = s.getDim(i);
            d[i] = dim.hasDimValue() ? dim.getDimValue() : -1;
        }
        return d;
    }

    private static String[] dimParams(ValueInfoProto v) {
        if (!v.getType().hasTensorType() || !v.getType().getTensorType().hasShape()) {
            return null;
        }
        TensorShapeProto s = v.getType().getTensorType().getShape();
        String[] p = new String[s.getDimCount()];
        for (int i = 0; i < p.length; i++) {
            TensorShapeProto.Dimension dim = s.getDim(i);
            p[i] = dim.hasDimParam() ? dim.getDimParam() : dim.hasDimValue() ? Long.toString(dim.getDimValue()) : "?";
        }
        return p;
    }

    private static String shapeText(ValueInfoProto v) {
        String[] p = dimParams(v);
        return p == null ? "[unknown shape]" : Arrays.toString(p);
    }

    private static String typeName(int type) {
        TensorProto.DataType t = TensorProto.DataType.forNumber(type);
        return t == null ? "type " + type : t.name().toLowerCase(Locale.ROOT);
    }

    // ------------------------------------------------------------------------------------------ attributes

    private static AttributeProto attr(NodeProto n, String name) {
        for (AttributeProto a : n.getAttributeList()) {
            if (a.getName().equals(name)) {
                return a;
            }
        }
        return null;
    }

    private static long intAttr(NodeProto n, String name, long dflt) {
        AttributeProto a = attr(n, name);
        return a == null ? dflt : a.getI();
    }

    private static float floatAttr(NodeProto n, String name, float dflt) {
        AttributeProto a = attr(n, name);
        return a == null ? dflt : a.getF();
    }

    private static long[] intsAttr(NodeProto n, String name) {
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

    private static String stringAttr(NodeProto n, String name) {
        AttributeProto a = attr(n, name);
        return a == null ? null : a.getS().toStringUtf8();
    }

    // ------------------------------------------------------------------------------------------ tensors

    /** A constant tensor: float data for float types, integer data for integer types. */
    private record Tensor(long[] dims, float[] f, long[] i) {
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

    private static long product(long[] d) {
        long p = 1;
        for (long x : d) {
            p *= x;
        }
        return p;
    }

    /** The tensor's values, or a reason it cannot be read. */
    private static Object tensor(TensorProto t) {
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

    // ------------------------------------------------------------------------------------------ abstract values

    /** Axis labels of the tensors on the data path. IN0 and IN1 are the input's first two axes until a GRU tells them. */
    private enum Ax {
        IN0("input axis 0"), IN1("input axis 1"), T("time"), B("batch"), F("features"), D("num_directions"),
        L("layers"), ONE("1"), C("classes");

        final String text;

        Ax(String text) {
            this.text = text;
        }
    }

    private enum Kind { SEQ, STATE, SCORES, PROBS, LOGPROBS }

    /** Stacked GRU layers applied so far, whether they take sequence_lens, and the node label of the last one. */
    private record Chain(List<GruLayer> layers, List<LstmLayer> lstm, boolean seqLens, String lastNode) {
        static final Chain EMPTY = new Chain(List.of(), List.of(), false, null);

        boolean isEmpty() {
            return layers.isEmpty() && lstm.isEmpty();
        }
    }

    /** The affine readout: [classes × hidden] row-major weights and bias, and how it was written. */
    private record Head(float[] w, float[] b, String name, String node) {
    }

    private sealed interface Val permits Const, Zero, Meta, Opaque, Lengths, Data, Bad {
    }

    private record Const(Tensor t) implements Val {
    }

    /** An all-zero tensor of a shape computed at run time. */
    private record Zero() implements Val {
    }

    /** Integers computed from tensor shapes at run time. */
    private record Meta() implements Val {
    }

    /** A value the reader does not compute (fine unless the data path needs it). */
    private record Opaque(String why) implements Val {
    }

    /** The graph's lengths input, possibly cast to int32. */
    private record Lengths(String input) implements Val {
    }

    /** A tensor on the data path, described by its axes. */
    private record Data(Kind kind, List<Ax> axes, int width, Chain chain, List<Chain> stack, String source, Head head)
            implements Val {
        Data axes(List<Ax> a) {
            return new Data(kind, List.copyOf(a), width, chain, stack, source, head);
        }
    }

    private record Bad(String reason) implements Val {
    }

    // ------------------------------------------------------------------------------------------ interpreter

    private static final class Interpreter {
        private final GraphProto g;
        private final long opset;
        private final Inputs inputs;
        private final Map<String, Val> vals = new HashMap<>();
        private final long[] inputDims;
        private Ax bound0;
        private Ax bound1;
        private String label;

        Interpreter(ModelProto model, Inputs inputs) {
            this.g = model.getGraph();
            this.opset = opset(model);
            this.inputs = inputs;
            this.inputDims = dims(inputs.series);
        }

        Analysis run() {
            for (TensorProto t : g.getInitializerList()) {
                Object v = tensor(t);
                vals.put(t.getName(), v instanceof Tensor tt ? new Const(tt) : new Opaque((String) v));
            }
            int width = inputDims != null && inputDims.length == 3 && inputDims[2] > 0 ? (int) inputDims[2] : -1;
            vals.put(inputs.series.getName(), new Data(Kind.SEQ, List.of(Ax.IN0, Ax.IN1, Ax.F), width, Chain.EMPTY,
                    null, null, null));
            if (inputs.lengths != null) {
                vals.put(inputs.lengths.getName(), new Lengths(inputs.lengths.getName()));
            }
            List<NodeProto> nodes = g.getNodeList();
            for (int k = 0; k < nodes.size(); k++) {
                NodeProto n = nodes.get(k);
                label = "node " + k + " (" + n.getOpType() + (n.getName().isEmpty() ? "" : " '" + n.getName() + "'") + ")";
                Val[] in = new Val[n.getInputCount()];
                for (int i = 0; i < in.length; i++) {
                    String name = n.getInput(i);
                    if (name.isEmpty()) {
                        continue;
                    }
                    in[i] = vals.get(name);
                    if (in[i] == null) {
                        in[i] = new Bad(label + " uses '" + name + "' before any node computes it");
                    }
                }
                List<Val> out;
                if (!n.getDomain().isEmpty() && !n.getDomain().equals("ai.onnx")) {
                    out = List.of(new Bad(label + " is in operator domain '" + n.getDomain() + "', not standard ONNX"));
                } else {
                    out = node(n, in);
                }
                for (int o = 0; o < n.getOutputCount(); o++) {
                    String name = n.getOutput(o);
                    if (name.isEmpty()) {
                        continue;
                    }
                    Val v = o < out.size() ? out.get(o) : out.get(out.size() - 1);
                    vals.put(name, v);
                }
            }
            return finish();
        }

        private Analysis finish() {
            ValueInfoProto o;
            try {
                o = chooseOutput(g);
            } catch (IllegalArgumentException e) {
                return new Refused(e.getMessage());
            }
            String name = o.getName();
            Val v = vals.get(name);
            if (v == null) {
                return new Refused("output '" + name + "' is not computed by any node");
            }
            if (v instanceof Bad b) {
                return new Refused(b.reason());
            }
            if (!(v instanceof Data d)) {
                return new Refused("output '" + name + "' does not depend on the input series");
            }
            if (d.kind() == Kind.SEQ || d.kind() == Kind.STATE) {
                return new Refused("output '" + name + "' is " + (d.kind() == Kind.SEQ ? "a sequence" : "a recurrent state")
                        + ", not class scores: no Gemm or MatMul readout reaches it");
            }
            List<Ax> axes = resolve(d.axes());
            if (!axes.equals(List.of(Ax.B, Ax.C))) {
                return new Refused("output '" + name + "' has axes " + text(axes) + ", expected [batch, classes]");
            }
            Chain c = d.chain();
            boolean hasLengths = inputs.lengths != null;
            if (hasLengths && !c.seqLens()) {
                return new Refused("graph input '" + inputs.lengths.getName()
                        + "' does not feed the " + (c.lstm().isEmpty() ? "GRUs'" : "LSTMs'")
                        + " sequence_lens, so padded steps would change the result");
            }
            Head h = d.head();
            boolean lstm = !c.lstm().isEmpty();
            String cell = lstm ? "LSTM" : "GRU";
            GruNetwork net = null;
            LstmNetwork lnet = null;
            try {
                if (lstm) {
                    lnet = new LstmNetwork(c.lstm(), h.b().length, h.w(), h.b());
                } else {
                    net = new GruNetwork(c.layers(), h.b().length, h.w(), h.b());
                }
            } catch (IllegalArgumentException e) {
                return new Refused("the readout does not fit the " + cell + ": " + e.getMessage());
            }
            Layout layout = bound0 == Ax.B ? Layout.BATCH_FIRST : Layout.TIME_FIRST;
            Output kind = d.kind() == Kind.PROBS ? Output.PROBABILITIES
                    : d.kind() == Kind.LOGPROBS ? Output.LOG_PROBABILITIES : Output.LOGITS;
            int nl = lstm ? c.lstm().size() : c.layers().size();
            StringBuilder desc = new StringBuilder("canonical " + cell + " form: ");
            desc.append(nl == 1 ? "1 " + cell + " layer" : nl + " stacked " + cell + " layers");
            desc.append(", ").append(d.source()).append(" readout, ").append(h.name());
            if (kind != Output.LOGITS) {
                desc.append(kind == Output.PROBABILITIES ? ", Softmax output" : ", LogSoftmax output");
            }
            desc.append(", ").append(layout.label()).append(" input");
            if (hasLengths) {
                desc.append(", lengths input '").append(inputs.lengths.getName()).append('\'');
            }
            return new Canonical(net, lnet, layout, kind, hasLengths, desc.toString());
        }

        // ---------------------------------------------------------------- dispatch

        private List<Val> node(NodeProto n, Val[] in) {
            String op = n.getOpType();
            if (op.equals("Constant")) {
                return List.of(constant(n));
            }
            if (op.equals("Shape") || op.equals("Size")) {
                return List.of(new Meta());
            }
            Data data = null;
            for (Val v : in) {
                if (v instanceof Bad) {
                    return List.of(v);
                }
                if (v instanceof Data d && data == null) {
                    data = d;
                }
            }
            if (op.equals("GRU")) {
                return gru(n, in);
            }
            if (op.equals("LSTM")) {
                return lstm(n, in);
            }
            if (data != null) {
                return List.of(onData(n, in, data));
            }
            return List.of(offData(n, in));
        }

        private Val constant(NodeProto n) {
            for (AttributeProto a : n.getAttributeList()) {
                switch (a.getName()) {
                    case "value" -> {
                        Object t = tensor(a.getT());
                        return t instanceof Tensor tt ? new Const(tt) : new Opaque((String) t);
                    }
                    case "value_float" -> {
                        return new Const(new Tensor(new long[0], new float[] {a.getF()}, null));
                    }
                    case "value_floats" -> {
                        float[] f = new float[a.getFloatsCount()];
                        for (int k = 0; k < f.length; k++) {
                            f[k] = a.getFloats(k);
                        }
                        return new Const(new Tensor(new long[] {f.length}, f, null));
                    }
                    case "value_int" -> {
                        return new Const(new Tensor(new long[0], null, new long[] {a.getI()}));
                    }
                    case "value_ints" -> {
                        long[] v = new long[a.getIntsCount()];
                        for (int k = 0; k < v.length; k++) {
                            v[k] = a.getInts(k);
                        }
                        return new Const(new Tensor(new long[] {v.length}, null, v));
                    }
                    default -> {
                    }
                }
            }
            return new Opaque(label + " holds a constant the reader does not decode");
        }

        /** Nodes off the data path: constant folding, zero tracking and shape arithmetic. */
        private Val offData(NodeProto n, Val[] in) {
            String op = n.getOpType();
            boolean anyMeta = false;
            boolean allConst = true;
            for (Val v : in) {
                if (v == null) {
                    continue;
                }
                if (v instanceof Meta) {
                    anyMeta = true;
                }
                if (!(v instanceof Const)) {
                    allConst = false;
                }
            }
            Val first = in.length > 0 ? in[0] : null;
            switch (op) {
                case "Shape", "Size" -> {
                    return new Meta();
                }
                case "ConstantOfShape" -> {
                    AttributeProto a = attr(n, "value");
                    if (a == null) {
                        return new Zero();
                    }
                    Object t = tensor(a.getT());
                    return t instanceof Tensor tt && tt.allZero() ? new Zero()
                            : new Opaque(label + " fills a tensor with a nonzero value");
                }
                case "Identity", "Transpose", "Squeeze", "Unsqueeze", "Reshape", "Flatten", "Gather", "Slice",
                        "Expand", "Tile", "Cast" -> {
                    if (first instanceof Zero || first instanceof Const c0 && c0.t().allZero() && !allConst) {
                        return new Zero();
                    }
                    if (first instanceof Lengths l && (op.equals("Identity")
                            || op.equals("Cast") && intAttr(n, "to", 0) == TensorProto.DataType.INT32_VALUE)) {
                        return l;
                    }
                    if (allConst) {
                        Val f = fold(n, in);
                        if (f != null) {
                            return f;
                        }
                    }
                }
                case "Concat" -> {
                    boolean allZero = true;
                    for (Val v : in) {
                        if (!(v instanceof Zero || v instanceof Const c && c.t().isFloat() && c.t().allZero())) {
                            allZero = false;
                        }
                    }
                    if (allZero && !allConst) {
                        return new Zero();
                    }
                    if (allConst) {
                        Val f = fold(n, in);
                        if (f != null) {
                            return f;
                        }
                    }
                }
                default -> {
                }
            }
            if (anyMeta) {
                return new Meta();
            }
            return new Opaque(label + " computes a value the reader does not evaluate");
        }

        private Val fold(NodeProto n, Val[] in) {
            Tensor t = ((Const) in[0]).t();
            try {
                switch (n.getOpType()) {
                    case "Identity" -> {
                        return in[0];
                    }
                    case "Cast" -> {
                        long to = intAttr(n, "to", 0);
                        if (to == TensorProto.DataType.FLOAT_VALUE || to == TensorProto.DataType.DOUBLE_VALUE) {
                            float[] f = new float[t.size()];
                            for (int k = 0; k < f.length; k++) {
                                f[k] = (float) t.get(k);
                            }
                            return new Const(new Tensor(t.dims(), f, null));
                        }
                        if (to == TensorProto.DataType.INT64_VALUE || to == TensorProto.DataType.INT32_VALUE) {
                            long[] v = new long[t.size()];
                            for (int k = 0; k < v.length; k++) {
                                v[k] = (long) t.get(k);
                            }
                            return new Const(new Tensor(t.dims(), null, v));
                        }
                        return null;
                    }
                    case "Reshape" -> {
                        long[] shape = ((Const) in[1]).t().i();
                        if (shape == null) {
                            return null;
                        }
                        long[] d = shape.clone();
                        int infer = -1;
                        long known = 1;
                        for (int k = 0; k < d.length; k++) {
                            if (d[k] == 0 && intAttr(n, "allowzero", 0) == 0) {
                                d[k] = t.dims()[k];
                            }
                            if (d[k] == -1) {
                                infer = k;
                            } else {
                                known *= d[k];
                            }
                        }
                        if (infer >= 0) {
                            d[infer] = known == 0 ? 0 : t.size() / known;
                        }
                        return product(d) == t.size() ? new Const(t.withDims(d)) : null;
                    }
                    case "Squeeze" -> {
                        long[] axes = axesOf(n, in, 1);
                        List<Long> d = new ArrayList<>();
                        int r = t.dims().length;
                        Set<Long> drop = new HashSet<>();
                        if (axes != null) {
                            for (long a : axes) {
                                drop.add(a < 0 ? a + r : a);
                            }
                        }
                        for (int k = 0; k < r; k++) {
                            boolean squeeze = axes == null ? t.dims()[k] == 1 : drop.contains((long) k);
                            if (!squeeze) {
                                d.add(t.dims()[k]);
                            }
                        }
                        return new Const(t.withDims(d.stream().mapToLong(Long::longValue).toArray()));
                    }
                    case "Unsqueeze" -> {
                        long[] axes = axesOf(n, in, 1);
                        if (axes == null) {
                            return null;
                        }
                        int r = t.dims().length + axes.length;
                        Set<Long> add = new HashSet<>();
                        for (long a : axes) {
                            add.add(a < 0 ? a + r : a);
                        }
                        long[] d = new long[r];
                        int src = 0;
                        for (int k = 0; k < r; k++) {
                            d[k] = add.contains((long) k) ? 1 : t.dims()[src++];
                        }
                        return new Const(t.withDims(d));
                    }
                    case "Flatten" -> {
                        int r = t.dims().length;
                        long axis = intAttr(n, "axis", 1);
                        if (axis < 0) {
                            axis += r;
                        }
                        long a = 1;
                        for (int k = 0; k < axis; k++) {
                            a *= t.dims()[k];
                        }
                        return new Const(t.withDims(new long[] {a, t.size() / Math.max(1, a)}));
                    }
                    case "Transpose" -> {
                        return new Const(transpose(t, intsAttr(n, "perm")));
                    }
                    case "Concat" -> {
                        List<Tensor> ts = new ArrayList<>();
                        for (Val v : in) {
                            ts.add(((Const) v).t());
                        }
                        return concat(ts, intAttr(n, "axis", 0));
                    }
                    default -> {
                        return null;
                    }
                }
            } catch (RuntimeException e) {
                return null;
            }
        }

        // ---------------------------------------------------------------- data path

        private Val onData(NodeProto n, Val[] in, Data d) {
            String op = n.getOpType();
            if (in[0] != d && !op.equals("Add") && !op.equals("Concat")) {
                return new Bad(label + " uses the " + role(d) + " as a parameter, not as its data input");
            }
            if (d.kind() == Kind.PROBS || d.kind() == Kind.LOGPROBS) {
                if (op.equals("Identity")) {
                    return d;
                }
                return new Bad(label + " after the final " + (d.kind() == Kind.PROBS ? "Softmax" : "LogSoftmax")
                        + ": nothing may follow it");
            }
            switch (op) {
                case "Identity" -> {
                    return d;
                }
                case "Transpose" -> {
                    return transposeData(n, d);
                }
                case "Squeeze" -> {
                    return squeezeData(n, in, d);
                }
                case "Unsqueeze" -> {
                    return unsqueezeData(n, in, d);
                }
                case "Reshape" -> {
                    return reshapeData(n, in, d);
                }
                case "Flatten" -> {
                    return flattenData(n, d);
                }
                case "Cast" -> {
                    if (intAttr(n, "to", 0) == TensorProto.DataType.FLOAT_VALUE) {
                        return d;
                    }
                    return new Bad(label + " casts the " + role(d) + " to another type");
                }
                default -> {
                }
            }
            if (d.kind() == Kind.SCORES) {
                switch (op) {
                    case "Add" -> {
                        return addBias(in, d);
                    }
                    case "Softmax", "LogSoftmax" -> {
                        return softmax(n, d);
                    }
                    default -> {
                        return new Bad(label + " after the readout " + d.head().name()
                                + ": only Softmax or LogSoftmax may follow");
                    }
                }
            }
            switch (op) {
                case "Gather" -> {
                    return gatherData(n, in, d);
                }
                case "Slice" -> {
                    return sliceData(n, in, d);
                }
                case "Concat" -> {
                    return concatData(n, in);
                }
                case "Gemm" -> {
                    return gemm(n, in, d);
                }
                case "MatMul" -> {
                    return matmul(in, d);
                }
                default -> {
                }
            }
            if (d.kind() == Kind.SEQ) {
                return new Bad(label + " acts on the " + role(d) + ": only Transpose, Squeeze, Unsqueeze, Reshape or "
                        + "Identity may come between the input and a GRU or LSTM or between recurrent layers");
            }
            return new Bad(label + " acts on the " + role(d) + " before the readout: only Squeeze, Unsqueeze, Reshape, "
                    + "Transpose, Identity, Gather or Slice may come between the " + cell(d.chain())
                    + " and the readout Gemm or MatMul");
        }

        /** "LSTM" for a chain of LSTM layers, else "GRU". */
        private static String cell(Chain c) {
            return c != null && !c.lstm().isEmpty() ? "LSTM" : "GRU";
        }

        private String role(Data d) {
            return switch (d.kind()) {
                case SEQ -> d.chain().isEmpty() ? "input series" : cell(d.chain()) + " output sequence Y";
                case STATE -> cell(d.chain()) + " state";
                default -> "class scores";
            };
        }

        private Ax resolve(Ax a) {
            if (a == Ax.IN0 && bound0 != null) {
                return bound0;
            }
            if (a == Ax.IN1 && bound1 != null) {
                return bound1;
            }
            return a;
        }

        private List<Ax> resolve(List<Ax> axes) {
            List<Ax> r = new ArrayList<>(axes.size());
            for (Ax a : axes) {
                r.add(resolve(a));
            }
            return r;
        }

        private String text(List<Ax> axes) {
            return resolve(axes).stream().map(a -> a.text).collect(Collectors.joining(", ", "[", "]"));
        }

        /** The axis size when the graph fixes it, 1 for singleton labels, else -1. */
        private long size(Data d, Ax a) {
            Ax r = resolve(a);
            return switch (r) {
                case D, ONE -> 1;
                case L -> d.stack().size();
                case F, C -> d.width() < 0 ? -1 : d.width();
                case T -> staticTime();
                default -> -1;
            };
        }

        private long staticTime() {
            if (inputDims == null || inputDims.length != 3 || bound0 == null) {
                return -1;
            }
            long t = bound0 == Ax.T ? inputDims[0] : inputDims[1];
            return t > 0 ? t : -1;
        }

        private long[] axesOf(NodeProto n, Val[] in, int index) {
            if (opset >= 13 || (n.getOpType().equals("Slice") && opset >= 10)) {
                if (in.length > index && in[index] instanceof Const c && c.t().i() != null) {
                    return c.t().i();
                }
                if (in.length > index && in[index] != null) {
                    return new long[] {Long.MIN_VALUE};
                }
                return intsAttr(n, "axes");
            }
            return intsAttr(n, "axes");
        }

        private Val transposeData(NodeProto n, Data d) {
            long[] perm = intsAttr(n, "perm");
            int r = d.axes().size();
            if (perm == null) {
                perm = new long[r];
                for (int k = 0; k < r; k++) {
                    perm[k] = r - 1 - k;
                }
            }
            if (perm.length != r) {
                return new Bad(label + " has perm " + Arrays.toString(perm) + " for a tensor of rank " + r);
            }
            List<Ax> a = new ArrayList<>();
            for (long p : perm) {
                a.add(d.axes().get((int) p));
            }
            return d.axes(a);
        }

        private Val squeezeData(NodeProto n, Val[] in, Data d) {
            long[] axes = axesOf(n, in, 1);
            if (axes == null) {
                return new Bad(label + " has no axes: a Squeeze of every size-1 axis would also drop a batch of 1");
            }
            if (axes.length == 1 && axes[0] == Long.MIN_VALUE) {
                return new Bad(label + " takes its axes from a computed tensor");
            }
            int r = d.axes().size();
            Set<Integer> drop = new HashSet<>();
            for (long a : axes) {
                int k = (int) (a < 0 ? a + r : a);
                if (k < 0 || k >= r) {
                    return new Bad(label + " squeezes axis " + a + " of a tensor of rank " + r);
                }
                Ax x = resolve(d.axes().get(k));
                if (x != Ax.D && x != Ax.ONE) {
                    return new Bad(label + " squeezes the " + x.text + " axis of the " + role(d)
                            + "; only size-1 axes may be squeezed");
                }
                drop.add(k);
            }
            List<Ax> out = new ArrayList<>();
            for (int k = 0; k < r; k++) {
                if (!drop.contains(k)) {
                    out.add(d.axes().get(k));
                }
            }
            return d.axes(out);
        }

        private Val unsqueezeData(NodeProto n, Val[] in, Data d) {
            long[] axes = axesOf(n, in, 1);
            if (axes == null || axes.length == 1 && axes[0] == Long.MIN_VALUE) {
                return new Bad(label + " has no constant axes");
            }
            int r = d.axes().size() + axes.length;
            Set<Integer> add = new HashSet<>();
            for (long a : axes) {
                add.add((int) (a < 0 ? a + r : a));
            }
            List<Ax> out = new ArrayList<>();
            int src = 0;
            for (int k = 0; k < r; k++) {
                out.add(add.contains(k) ? Ax.ONE : d.axes().get(src++));
            }
            return d.axes(out);
        }

        private Val reshapeData(NodeProto n, Val[] in, Data d) {
            long[] shape;
            if (opset >= 5) {
                if (!(in.length > 1 && in[1] instanceof Const c && c.t().i() != null)) {
                    return new Bad(label + " reshapes the " + role(d) + " to a shape computed at run time");
                }
                shape = c.t().i();
            } else {
                shape = intsAttr(n, "shape");
                if (shape == null) {
                    return new Bad(label + " has no shape");
                }
            }
            boolean allowZero = intAttr(n, "allowzero", 0) == 1;
            List<Ax> core = new ArrayList<>();
            for (Ax a : d.axes()) {
                if (size(d, a) != 1) {
                    core.add(a);
                }
            }
            List<Ax> out = new ArrayList<>();
            int p = 0;
            String fail = label + " reshapes the " + role(d) + " " + text(d.axes()) + " to " + Arrays.toString(shape)
                    + ", which merges, splits or fixes axes";
            for (int k = 0; k < shape.length; k++) {
                long e = shape[k];
                if (e == 0 && !allowZero) {
                    if (k >= d.axes().size()) {
                        return new Bad(fail);
                    }
                    Ax a = d.axes().get(k);
                    if (size(d, a) == 1) {
                        out.add(Ax.ONE);
                    } else if (p < core.size() && core.get(p) == a) {
                        out.add(a);
                        p++;
                    } else {
                        return new Bad(fail);
                    }
                } else if (e == -1) {
                    if (p < core.size()) {
                        out.add(core.get(p++));
                    } else {
                        out.add(Ax.ONE);
                    }
                } else if (e == 1) {
                    out.add(Ax.ONE);
                } else if (e > 1 && p < core.size() && size(d, core.get(p)) == e) {
                    out.add(core.get(p++));
                } else {
                    return new Bad(fail);
                }
            }
            if (p != core.size()) {
                return new Bad(fail);
            }
            return d.axes(out);
        }

        private Val flattenData(NodeProto n, Data d) {
            int r = d.axes().size();
            long axis = intAttr(n, "axis", 1);
            if (axis < 0) {
                axis += r;
            }
            List<Ax> out = new ArrayList<>();
            for (List<Ax> part : List.of(d.axes().subList(0, (int) axis), d.axes().subList((int) axis, r))) {
                List<Ax> big = new ArrayList<>();
                for (Ax a : part) {
                    if (size(d, a) != 1) {
                        big.add(a);
                    }
                }
                if (big.size() > 1) {
                    return new Bad(label + " flattens the " + role(d) + " " + text(d.axes()) + " at axis " + axis
                            + ", which merges axes");
                }
                out.add(big.isEmpty() ? Ax.ONE : big.get(0));
            }
            return d.axes(out);
        }

        /** Picks one position along axis k: index idx (already checked), keeping the axis as size 1 when keep. */
        private Data pick(Data d, int k, boolean keep, Kind kind, Chain chain, String source) {
            List<Ax> a = new ArrayList<>(d.axes());
            Ax x = resolve(a.get(k));
            if (keep) {
                a.set(k, Ax.ONE);
            } else {
                a.remove(k);
            }
            List<Chain> stack = x == Ax.L ? null : d.stack();
            return new Data(kind, List.copyOf(a), d.width(), chain, stack, source, d.head());
        }

        /** The result of picking index idx on axis k, or a Bad. */
        private Val select(Data d, int k, long idx, boolean keep, String what) {
            Ax x = resolve(d.axes().get(k));
            switch (x) {
                case T -> {
                    long t = staticTime();
                    if (!(idx == -1 || t > 0 && idx == t - 1)) {
                        return new Bad(label + " " + what + " time step " + idx + " of the " + role(d)
                                + "; only the last step (-1) is a readout of the last valid step");
                    }
                    if (d.kind() != Kind.SEQ) {
                        return new Bad(label + " " + what + " along time of a non-sequence");
                    }
                    Chain c = d.chain();
                    if (!c.isEmpty() && c.seqLens()) {
                        return new Bad(label + " reads Y of " + c.lastNode() + " at the last padded time step, but "
                                + "that " + cell(c) + " has sequence_lens: samples shorter than the padded length read zeros "
                                + "there, not their last valid step (read Y_h instead)");
                    }
                    return pick(d, k, keep, Kind.STATE, c, "last step of Y");
                }
                case D, ONE -> {
                    if (idx != 0 && idx != -1) {
                        return new Bad(label + " " + what + " index " + idx + " of a size-1 axis");
                    }
                    return pick(d, k, keep, d.kind(), d.chain(), d.source());
                }
                case L -> {
                    int n = d.stack().size();
                    long j = idx < 0 ? idx + n : idx;
                    if (j < 0 || j >= n) {
                        return new Bad(label + " " + what + " layer " + idx + " of " + n + " stacked states");
                    }
                    return pick(d, k, keep, d.kind(), d.stack().get((int) j), d.source());
                }
                default -> {
                    return new Bad(label + " " + what + " along the " + x.text + " axis of the " + role(d));
                }
            }
        }

        private Val gatherData(NodeProto n, Val[] in, Data d) {
            if (!(in.length > 1 && in[1] instanceof Const c && c.t().i() != null)) {
                return new Bad(label + " gathers with indices that are not a constant");
            }
            Tensor idx = c.t();
            int r = d.axes().size();
            long axis = intAttr(n, "axis", 0);
            int k = (int) (axis < 0 ? axis + r : axis);
            if (k < 0 || k >= r) {
                return new Bad(label + " gathers along axis " + axis + " of a tensor of rank " + r);
            }
            if (idx.size() != 1 || idx.dims().length > 1) {
                return new Bad(label + " gathers " + idx.size() + " indices of shape " + idx.shape()
                        + "; only a single index is a readout");
            }
            return select(d, k, idx.i()[0], idx.dims().length == 1, "takes");
        }

        private Val sliceData(NodeProto n, Val[] in, Data d) {
            long[] starts;
            long[] ends;
            long[] axes;
            long[] steps = null;
            if (opset >= 10) {
                long[][] parts = new long[4][];
                for (int p = 0; p < 4; p++) {
                    int i = p + 1;
                    if (in.length <= i || in[i] == null) {
                        continue;
                    }
                    if (!(in[i] instanceof Const c && c.t().i() != null)) {
                        return new Bad(label + " slices with bounds that are not constants");
                    }
                    parts[p] = c.t().i();
                }
                starts = parts[0];
                ends = parts[1];
                axes = parts[2];
                steps = parts[3];
            } else {
                starts = intsAttr(n, "starts");
                ends = intsAttr(n, "ends");
                axes = intsAttr(n, "axes");
            }
            if (starts == null || ends == null || starts.length != ends.length) {
                return new Bad(label + " has no matching starts and ends");
            }
            int r = d.axes().size();
            Val cur = d;
            for (int s = 0; s < starts.length; s++) {
                long step = steps == null ? 1 : steps[s];
                long a = axes == null ? s : axes[s];
                int k = (int) (a < 0 ? a + r : a);
                if (step != 1) {
                    return new Bad(label + " slices with step " + step);
                }
                if (k < 0 || k >= r) {
                    return new Bad(label + " slices axis " + a + " of a tensor of rank " + r);
                }
                Data cd = (Data) cur;
                long size = size(cd, cd.axes().get(k));
                long start = starts[s];
                long end = ends[s];
                boolean toEnd = end >= BIG_END || size > 0 && end >= size;
                if (start == 0 && toEnd) {
                    continue;
                }
                if (size > 0) {
                    long st = start < 0 ? start + size : start;
                    long en = end < 0 ? end + size : Math.min(end, size);
                    if (en - st != 1) {
                        return new Bad(label + " slices [" + start + ":" + end + "] of the " + resolve(cd.axes().get(k)).text
                                + " axis of size " + size + "; only one position may be kept");
                    }
                    cur = select(cd, k, st, true, "slices");
                } else if (start == -1 && toEnd) {
                    cur = select(cd, k, -1, true, "slices");
                } else {
                    return new Bad(label + " slices [" + start + ":" + end + "] of the " + resolve(cd.axes().get(k)).text
                            + " axis of the " + role(cd) + "; only the last position may be kept");
                }
                if (cur instanceof Bad) {
                    return cur;
                }
            }
            return cur;
        }

        private Val concatData(NodeProto n, Val[] in) {
            List<Data> parts = new ArrayList<>();
            for (Val v : in) {
                if (!(v instanceof Data d) || d.kind() != Kind.STATE) {
                    return new Bad(label + " concatenates the GRU " + (v instanceof Data ? "sequence" : "state")
                            + " with other values");
                }
                parts.add(d);
            }
            if (parts.size() == 1) {
                return parts.get(0);
            }
            Data first = parts.get(0);
            int r = first.axes().size();
            long axis = intAttr(n, "axis", 0);
            int k = (int) (axis < 0 ? axis + r : axis);
            List<Chain> stack = new ArrayList<>();
            for (Data d : parts) {
                if (d.axes().size() != r || k < 0 || k >= r) {
                    return new Bad(label + " concatenates states of different ranks");
                }
                for (int i = 0; i < r; i++) {
                    if (i != k && resolve(d.axes().get(i)) != resolve(first.axes().get(i))) {
                        return new Bad(label + " concatenates states with axes " + text(first.axes()) + " and "
                                + text(d.axes()));
                    }
                }
                if (d.width() != first.width()) {
                    return new Bad(label + " concatenates GRU states of different widths");
                }
                Ax x = resolve(d.axes().get(k));
                if (x == Ax.D || x == Ax.ONE) {
                    stack.add(d.chain());
                } else if (x == Ax.L) {
                    stack.addAll(d.stack());
                } else {
                    return new Bad(label + " concatenates GRU states along the " + x.text + " axis");
                }
            }
            List<Ax> a = new ArrayList<>(first.axes());
            a.set(k, Ax.L);
            return new Data(Kind.STATE, List.copyOf(a), first.width(), null, List.copyOf(stack), first.source(), null);
        }

        private Val readoutInput(Data d, List<Ax> expected, String op) {
            if (d.kind() == Kind.SEQ) {
                return new Bad(label + " reads out the " + role(d) + " " + text(d.axes())
                        + ", which still has a time axis; take the last step or Y_h first");
            }
            if (!resolve(d.axes()).equals(expected)) {
                return new Bad(label + " (" + op + ") takes the " + role(d) + " with axes " + text(d.axes()) + ", expected "
                        + text(expected));
            }
            if (d.chain() == null || d.chain().isEmpty()) {
                return new Bad(label + " reads out the input series without a GRU or LSTM before it");
            }
            return null;
        }

        private Val gemm(NodeProto n, Val[] in, Data d) {
            long transA = intAttr(n, "transA", 0);
            long transB = intAttr(n, "transB", 0);
            float alpha = floatAttr(n, "alpha", 1f);
            float beta = floatAttr(n, "beta", 1f);
            Val bad = readoutInput(d, transA == 0 ? List.of(Ax.B, Ax.F) : List.of(Ax.F, Ax.B), "Gemm");
            if (bad != null) {
                return bad;
            }
            if (!(in.length > 1 && in[1] instanceof Const cb && cb.t().isFloat() && cb.t().dims().length == 2)) {
                return new Bad(label + " readout weights B are not a constant float matrix");
            }
            Tensor wt = cb.t();
            int hid = d.width();
            long[] wd = wt.dims();
            int k = (int) (transB == 1 ? wd[0] : wd[1]);
            int h = (int) (transB == 1 ? wd[1] : wd[0]);
            if (h != hid) {
                return new Bad(label + " readout weights " + wt.shape() + " (transB=" + transB + ") do not take "
                        + hid + " hidden units");
            }
            float[] w = new float[k * h];
            for (int c = 0; c < k; c++) {
                for (int j = 0; j < h; j++) {
                    w[c * h + j] = alpha * (transB == 1 ? wt.f()[c * h + j] : wt.f()[j * k + c]);
                }
            }
            float[] b = new float[k];
            if (in.length > 2 && in[2] != null) {
                if (!(in[2] instanceof Const cc && cc.t().isFloat())) {
                    return new Bad(label + " readout bias C is not a constant float tensor");
                }
                float[] bias = broadcastBias(cc.t(), 2, 1, k);
                if (bias == null) {
                    return new Bad(label + " readout bias C of shape " + cc.t().shape()
                            + " does not broadcast to [batch, " + k + "] without depending on the batch");
                }
                for (int c = 0; c < k; c++) {
                    b[c] = beta * bias[c];
                }
            }
            return new Data(Kind.SCORES, List.of(Ax.B, Ax.C), k, d.chain(), null, d.source(),
                    new Head(w, b, "Gemm", label));
        }

        private Val matmul(Val[] in, Data d) {
            List<Ax> axes = resolve(d.axes());
            if (d.kind() == Kind.SEQ) {
                return readoutInput(d, List.of(Ax.B, Ax.F), "MatMul");
            }
            if (axes.isEmpty() || axes.get(axes.size() - 1) != Ax.F || axes.stream().filter(a -> a == Ax.B).count() != 1
                    || axes.stream().anyMatch(a -> a != Ax.B && a != Ax.F && a != Ax.ONE && a != Ax.D)) {
                return new Bad(label + " (MatMul) takes the " + role(d) + " with axes " + text(d.axes())
                        + ", expected [batch, features]");
            }
            if (d.chain() == null || d.chain().isEmpty()) {
                return new Bad(label + " reads out the input series without a GRU or LSTM before it");
            }
            if (!(in.length > 1 && in[1] instanceof Const cb && cb.t().isFloat() && cb.t().dims().length == 2)) {
                return new Bad(label + " readout weights are not a constant float matrix [hidden, classes]");
            }
            Tensor wt = cb.t();
            int h = (int) wt.dims()[0];
            int k = (int) wt.dims()[1];
            if (h != d.width()) {
                return new Bad(label + " readout weights " + wt.shape() + " do not take " + d.width() + " hidden units");
            }
            float[] w = new float[k * h];
            for (int c = 0; c < k; c++) {
                for (int j = 0; j < h; j++) {
                    w[c * h + j] = wt.f()[j * k + c];
                }
            }
            List<Ax> out = new ArrayList<>(d.axes());
            out.set(out.size() - 1, Ax.C);
            return new Data(Kind.SCORES, List.copyOf(out), k, d.chain(), null, d.source(),
                    new Head(w, new float[k], "MatMul", label));
        }

        private Val addBias(Val[] in, Data d) {
            if (in.length != 2) {
                return new Bad(label + " adds " + in.length + " inputs");
            }
            Val other = in[0] == d ? in[1] : in[0];
            if (!(other instanceof Const c && c.t().isFloat())) {
                return new Bad(label + " after the readout " + d.head().name()
                        + " adds a value that is not a constant bias: only Softmax or LogSoftmax may follow");
            }
            int ci = resolve(d.axes()).indexOf(Ax.C);
            float[] bias = broadcastBias(c.t(), d.axes().size(), ci, d.width());
            if (bias == null) {
                return new Bad(label + " adds a bias of shape " + c.t().shape() + " that does not broadcast to the "
                        + d.width() + " classes without depending on the batch");
            }
            float[] b = d.head().b().clone();
            for (int k = 0; k < b.length; k++) {
                b[k] += bias[k];
            }
            String name = d.head().name().equals("MatMul") ? "MatMul+Add" : d.head().name() + "+Add";
            return new Data(Kind.SCORES, d.axes(), d.width(), d.chain(), null, d.source(),
                    new Head(d.head().w(), b, name, d.head().node()));
        }

        /** The per-class bias of a constant broadcast (numpy rules) onto a tensor of rank r with classes at axis ci. */
        private static float[] broadcastBias(Tensor t, int r, int ci, int k) {
            long[] bd = t.dims();
            if (bd.length > r) {
                return null;
            }
            int off = r - bd.length;
            boolean perClass = false;
            for (int i = 0; i < bd.length; i++) {
                int axis = off + i;
                if (axis == ci && bd[i] == k) {
                    perClass = true;
                } else if (bd[i] != 1) {
                    return null;
                }
            }
            float[] b = new float[k];
            for (int c = 0; c < k; c++) {
                b[c] = perClass ? t.f()[c] : t.f()[0];
            }
            return b;
        }

        private Val softmax(NodeProto n, Data d) {
            String op = n.getOpType();
            int r = d.axes().size();
            List<Ax> axes = resolve(d.axes());
            long axis = intAttr(n, "axis", opset >= 13 ? -1 : 1);
            int k = (int) (axis < 0 ? axis + r : axis);
            boolean ok;
            if (k < 0 || k >= r) {
                ok = false;
            } else if (opset >= 13) {
                ok = axes.get(k) == Ax.C;
            } else {
                // Before opset 13 the input is coerced to 2-D at the axis and normalised over the trailing part.
                int ci = axes.indexOf(Ax.C);
                ok = ci >= k;
                for (int i = k; i < r; i++) {
                    if (i != ci && size(d, d.axes().get(i)) != 1) {
                        ok = false;
                    }
                }
            }
            if (!ok) {
                return new Bad(label + " normalises over axis " + axis + " of " + text(d.axes())
                        + ", not over the classes");
            }
            return new Data(op.equals("Softmax") ? Kind.PROBS : Kind.LOGPROBS, d.axes(), d.width(), d.chain(), null,
                    d.source(), d.head());
        }

        // ---------------------------------------------------------------- GRU

        private List<Val> gru(NodeProto n, Val[] in) {
            String direction = stringAttr(n, "direction");
            if (direction != null && !direction.equals("forward")) {
                return List.of(new Bad(label + ": GRU direction '" + direction + "' is not forward"));
            }
            AttributeProto acts = attr(n, "activations");
            if (acts != null) {
                List<String> names = acts.getStringsList().stream().map(ByteString::toStringUtf8).toList();
                if (names.size() != 2 || !names.get(0).equalsIgnoreCase("Sigmoid")
                        || !names.get(1).equalsIgnoreCase("Tanh")) {
                    return List.of(new Bad(label + ": GRU activations " + names
                            + " are not the default [Sigmoid, Tanh]"));
                }
            }
            if (attr(n, "clip") != null) {
                return List.of(new Bad(label + ": GRU clip " + floatAttr(n, "clip", 0f)
                        + " is set; only unclipped GRUs are canonical"));
            }
            long layout = intAttr(n, "layout", 0);
            if (layout != 0) {
                return List.of(new Bad(label + ": GRU layout " + layout + " (batch-major) is not supported"));
            }
            long lbr = intAttr(n, "linear_before_reset", 0);
            if (lbr != 0 && lbr != 1) {
                return List.of(new Bad(label + ": GRU linear_before_reset " + lbr + " is neither 0 nor 1"));
            }
            Val x = in.length > 0 ? in[0] : null;
            if (x instanceof Bad) {
                return List.of(x);
            }
            if (!(x instanceof Data d) || d.kind() != Kind.SEQ) {
                return List.of(new Bad(label + ": GRU input X is not the input series or a GRU output sequence"
                        + (x instanceof Data dd ? " (it is the " + role(dd) + ")" : "")));
            }
            for (int i = 1; i < in.length; i++) {
                if (in[i] instanceof Bad b) {
                    return List.of(b);
                }
                if (in[i] instanceof Data) {
                    return List.of(new Bad(label + ": GRU input " + i + " is computed from the input series"));
                }
            }
            Val bind = bindAxes(d);
            if (bind != null) {
                return List.of(bind);
            }
            if (!(in.length > 2 && in[1] instanceof Const cw && cw.t().isFloat() && in[2] instanceof Const cr
                    && cr.t().isFloat())) {
                return List.of(new Bad(label + ": GRU weights W and R are not constant float initializers"));
            }
            Tensor w = cw.t();
            Tensor r = cr.t();
            if (w.dims().length != 3 || r.dims().length != 3 || w.dims()[0] != 1 || r.dims()[0] != 1) {
                return List.of(new Bad(label + ": GRU W " + w.shape() + " and R " + r.shape()
                        + " must have shapes [1, 3H, input] and [1, 3H, H]"));
            }
            int hid = (int) intAttr(n, "hidden_size", r.dims()[2]);
            int inSize = (int) w.dims()[2];
            if (w.dims()[1] != 3L * hid || r.dims()[1] != 3L * hid || r.dims()[2] != hid) {
                return List.of(new Bad(label + ": GRU W " + w.shape() + " and R " + r.shape()
                        + " do not match hidden_size " + hid));
            }
            if (d.width() > 0 && d.width() != inSize) {
                return List.of(new Bad(label + ": GRU W takes " + inSize + " inputs but X has " + d.width()));
            }
            float[] wb = new float[3 * hid];
            float[] rb = new float[3 * hid];
            Val bv = in.length > 3 ? in[3] : null;
            if (bv instanceof Const cb && cb.t().isFloat()) {
                Tensor b = cb.t();
                if (b.size() != 6 * hid || b.dims().length != 2 || b.dims()[0] != 1) {
                    return List.of(new Bad(label + ": GRU B " + b.shape() + " is not [1, " + 6 * hid + "]"));
                }
                System.arraycopy(b.f(), 0, wb, 0, 3 * hid);
                System.arraycopy(b.f(), 3 * hid, rb, 0, 3 * hid);
            } else if (bv != null && !(bv instanceof Zero)) {
                return List.of(new Bad(label + ": GRU bias B is not a constant float initializer"));
            }
            Val sl = in.length > 4 ? in[4] : null;
            boolean seqLens = false;
            if (sl instanceof Lengths) {
                seqLens = true;
            } else if (sl != null) {
                return List.of(new Bad(label + ": GRU sequence_lens is not the graph's lengths input"));
            }
            Val h0 = in.length > 5 ? in[5] : null;
            if (h0 != null && !(h0 instanceof Zero) && !(h0 instanceof Const c0 && c0.t().allZero())) {
                return List.of(new Bad(label + ": GRU initial_h is not all zeros"
                        + (h0 instanceof Opaque o ? " (" + o.why() + ")" : "")));
            }
            if (in.length > 6) {
                return List.of(new Bad(label + ": GRU has " + in.length + " inputs, at most 6 are defined"));
            }
            Chain prev = d.chain();
            if (!prev.lstm().isEmpty()) {
                return List.of(new Bad(label + ": a GRU stacked on LSTM layers is not a canonical form"));
            }
            if (!prev.layers().isEmpty() && prev.seqLens() != seqLens) {
                return List.of(new Bad(label + ": GRU layers disagree on sequence_lens: "
                        + (prev.seqLens() ? prev.lastNode() + " has it, this one does not"
                        : "this one has it, " + prev.lastNode() + " does not")));
            }
            GruLayer layer;
            try {
                layer = new GruLayer(inSize, hid, w.f(), r.f(), wb, rb, lbr == 1);
            } catch (IllegalArgumentException e) {
                return List.of(new Bad(label + ": " + e.getMessage()));
            }
            List<GruLayer> layers = new ArrayList<>(prev.layers());
            layers.add(layer);
            Chain chain = new Chain(List.copyOf(layers), List.of(), seqLens, label);
            Data y = new Data(Kind.SEQ, List.of(Ax.T, Ax.D, Ax.B, Ax.F), hid, chain, null, null, null);
            Data yh = new Data(Kind.STATE, List.of(Ax.D, Ax.B, Ax.F), hid, chain, null, "Y_h", null);
            return List.of(y, yh);
        }

        // ---------------------------------------------------------------- LSTM

        private List<Val> lstm(NodeProto n, Val[] in) {
            String direction = stringAttr(n, "direction");
            if (direction != null && !direction.equals("forward")) {
                return List.of(new Bad(label + ": LSTM direction '" + direction + "' is not forward"));
            }
            AttributeProto acts = attr(n, "activations");
            if (acts != null) {
                List<String> names = acts.getStringsList().stream().map(ByteString::toStringUtf8).toList();
                if (names.size() != 3 || !names.get(0).equalsIgnoreCase("Sigmoid")
                        || !names.get(1).equalsIgnoreCase("Tanh") || !names.get(2).equalsIgnoreCase("Tanh")) {
                    return List.of(new Bad(label + ": LSTM activations " + names
                            + " are not the default [Sigmoid, Tanh, Tanh]"));
                }
            }
            if (attr(n, "clip") != null) {
                return List.of(new Bad(label + ": LSTM clip " + floatAttr(n, "clip", 0f)
                        + " is set; only unclipped LSTMs are canonical"));
            }
            if (intAttr(n, "input_forget", 0) != 0) {
                return List.of(new Bad(label + ": LSTM input_forget " + intAttr(n, "input_forget", 0)
                        + " couples the input and forget gates; only uncoupled LSTMs are canonical"));
            }
            long layout = intAttr(n, "layout", 0);
            if (layout != 0) {
                return List.of(new Bad(label + ": LSTM layout " + layout + " (batch-major) is not supported"));
            }
            Val x = in.length > 0 ? in[0] : null;
            if (x instanceof Bad) {
                return List.of(x);
            }
            if (!(x instanceof Data d) || d.kind() != Kind.SEQ) {
                return List.of(new Bad(label + ": LSTM input X is not the input series or an LSTM output sequence"
                        + (x instanceof Data dd ? " (it is the " + role(dd) + ")" : "")));
            }
            for (int i = 1; i < in.length; i++) {
                if (in[i] instanceof Bad b) {
                    return List.of(b);
                }
                if (in[i] instanceof Data) {
                    return List.of(new Bad(label + ": LSTM input " + i + " is computed from the input series"));
                }
            }
            Val bind = bindAxes(d);
            if (bind != null) {
                return List.of(bind);
            }
            if (!(in.length > 2 && in[1] instanceof Const cw && cw.t().isFloat() && in[2] instanceof Const cr
                    && cr.t().isFloat())) {
                return List.of(new Bad(label + ": LSTM weights W and R are not constant float initializers"));
            }
            Tensor w = cw.t();
            Tensor r = cr.t();
            if (w.dims().length != 3 || r.dims().length != 3 || w.dims()[0] != 1 || r.dims()[0] != 1) {
                return List.of(new Bad(label + ": LSTM W " + w.shape() + " and R " + r.shape()
                        + " must have shapes [1, 4H, input] and [1, 4H, H]"));
            }
            int hid = (int) intAttr(n, "hidden_size", r.dims()[2]);
            int inSize = (int) w.dims()[2];
            if (w.dims()[1] != 4L * hid || r.dims()[1] != 4L * hid || r.dims()[2] != hid) {
                return List.of(new Bad(label + ": LSTM W " + w.shape() + " and R " + r.shape()
                        + " do not match hidden_size " + hid));
            }
            if (d.width() > 0 && d.width() != inSize) {
                return List.of(new Bad(label + ": LSTM W takes " + inSize + " inputs but X has " + d.width()));
            }
            float[] wb = new float[4 * hid];
            float[] rb = new float[4 * hid];
            Val bv = in.length > 3 ? in[3] : null;
            if (bv instanceof Const cb && cb.t().isFloat()) {
                Tensor b = cb.t();
                if (b.size() != 8 * hid || b.dims().length != 2 || b.dims()[0] != 1) {
                    return List.of(new Bad(label + ": LSTM B " + b.shape() + " is not [1, " + 8 * hid + "]"));
                }
                System.arraycopy(b.f(), 0, wb, 0, 4 * hid);
                System.arraycopy(b.f(), 4 * hid, rb, 0, 4 * hid);
            } else if (bv != null && !(bv instanceof Zero)) {
                return List.of(new Bad(label + ": LSTM bias B is not a constant float initializer"));
            }
            Val sl = in.length > 4 ? in[4] : null;
            boolean seqLens = false;
            if (sl instanceof Lengths) {
                seqLens = true;
            } else if (sl != null) {
                return List.of(new Bad(label + ": LSTM sequence_lens is not the graph's lengths input"));
            }
            String[] initial = {"initial_h", "initial_c", "P (peepholes)"};
            for (int i = 5; i < Math.min(in.length, 8); i++) {
                Val v = in[i];
                if (v != null && !(v instanceof Zero) && !(v instanceof Const c0 && c0.t().allZero())) {
                    return List.of(new Bad(label + ": LSTM " + initial[i - 5] + " is not all zeros"
                            + (v instanceof Opaque o ? " (" + o.why() + ")" : "")));
                }
            }
            if (in.length > 8) {
                return List.of(new Bad(label + ": LSTM has " + in.length + " inputs, at most 8 are defined"));
            }
            Chain prev = d.chain();
            if (!prev.layers().isEmpty()) {
                return List.of(new Bad(label + ": an LSTM stacked on GRU layers is not a canonical form"));
            }
            if (!prev.lstm().isEmpty() && prev.seqLens() != seqLens) {
                return List.of(new Bad(label + ": LSTM layers disagree on sequence_lens: "
                        + (prev.seqLens() ? prev.lastNode() + " has it, this one does not"
                        : "this one has it, " + prev.lastNode() + " does not")));
            }
            LstmLayer layer;
            try {
                layer = new LstmLayer(inSize, hid, w.f(), r.f(), wb, rb);
            } catch (IllegalArgumentException e) {
                return List.of(new Bad(label + ": " + e.getMessage()));
            }
            List<LstmLayer> layers = new ArrayList<>(prev.lstm());
            layers.add(layer);
            Chain chain = new Chain(List.of(), List.copyOf(layers), seqLens, label);
            Data y = new Data(Kind.SEQ, List.of(Ax.T, Ax.D, Ax.B, Ax.F), hid, chain, null, null, null);
            Data yh = new Data(Kind.STATE, List.of(Ax.D, Ax.B, Ax.F), hid, chain, null, "Y_h", null);
            Bad yc = new Bad(label + ": the readout reads the LSTM cell state Y_c; canonical LSTMs are read out from "
                    + "the hidden state (Y_h or the last step of Y)");
            return List.of(y, yh, yc);
        }

        private Val bindAxes(Data d) {
            List<Ax> axes = d.axes();
            if (axes.size() != 3 || resolve(axes.get(2)) != Ax.F) {
                return new Bad(label + ": GRU input X has axes " + text(axes) + ", expected [time, batch, features]");
            }
            Ax a0 = axes.get(0);
            Ax a1 = axes.get(1);
            if (bound0 == null && (a0 == Ax.IN0 && a1 == Ax.IN1 || a0 == Ax.IN1 && a1 == Ax.IN0)) {
                if (a0 == Ax.IN0) {
                    bound0 = Ax.T;
                    bound1 = Ax.B;
                } else {
                    bound0 = Ax.B;
                    bound1 = Ax.T;
                }
                return null;
            }
            if (resolve(a0) != Ax.T || resolve(a1) != Ax.B) {
                return new Bad(label + ": GRU input X has axes " + text(axes) + ", expected [time, batch, features]");
            }
            return null;
        }
    }

    // ------------------------------------------------------------------------------------------ tensor helpers

    private static Tensor transpose(Tensor t, long[] perm) {
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

    private static Val concat(List<Tensor> ts, long axis) {
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
        return new Const(new Tensor(nd, f, iv));
    }
}
