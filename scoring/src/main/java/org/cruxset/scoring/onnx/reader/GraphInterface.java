package org.cruxset.scoring.onnx.reader;

import static org.cruxset.scoring.onnx.reader.Protos.*;

import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.OperatorSetIdProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import ai.onnx.proto.OnnxMl.TensorShapeProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.reader.ModelReader.Output;

/**
 * The interface of a model graph, read from its declarations: the series and lengths inputs, the class-score output
 * and what it carries, the operator set, and the input layout where the graph shows it.
 */
final class GraphInterface {
    private GraphInterface() {
    }

    record Inputs(ValueInfoProto series, ValueInfoProto lengths, String problem) {
    }

    static Inputs seriesInputs(GraphProto g) {
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

    static Output outputKind(GraphProto g, String output, long opset) {
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

    static Layout detectLayout(GraphProto g, ValueInfoProto x, String[] evidence) {
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

    static Layout layoutByNames(ValueInfoProto x, String[] evidence) {
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

    static Layout recurrentLayout(NodeProto n, String value, Map<String, List<NodeProto>> consumers,
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

    static boolean isBatchName(String s) {
        return s != null && s.toLowerCase(Locale.ROOT).contains("batch");
    }

    static boolean isTimeName(String s) {
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

    static long[] dims(ValueInfoProto v) {
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

    static String[] dimParams(ValueInfoProto v) {
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

    static String shapeText(ValueInfoProto v) {
        String[] p = dimParams(v);
        return p == null ? "[unknown shape]" : Arrays.toString(p);
    }

}
