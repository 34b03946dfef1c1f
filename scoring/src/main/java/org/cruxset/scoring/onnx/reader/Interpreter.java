package org.cruxset.scoring.onnx.reader;

import static org.cruxset.scoring.onnx.reader.GraphInterface.*;
import static org.cruxset.scoring.onnx.reader.Protos.*;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import ai.onnx.proto.OnnxMl.TensorProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.stream.Collectors;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.lstm.LstmNetwork;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.reader.ModelReader.Analysis;
import org.cruxset.scoring.onnx.reader.ModelReader.Canonical;
import org.cruxset.scoring.onnx.reader.ModelReader.Output;
import org.cruxset.scoring.onnx.reader.ModelReader.Refused;
import org.cruxset.scoring.onnx.reader.Values.*;

/**
 * The abstract interpretation of a model graph: every node, in order, maps the abstract values of its inputs
 * ({@link Values}) to those of its outputs: constants are folded, run-time shapes and zeros are tracked, and the data
 * path from the series input is followed through the recurrent layers ({@link RecurrentForms}) to an affine readout
 * and an optional Softmax or LogSoftmax. The graph's output then either is canonical class scores or carries the
 * first refusal met on its path.
 */
final class Interpreter {
    /** A Slice end at or past this means "to the end". */
    private static final long BIG_END = Integer.MAX_VALUE;

    private final GraphProto g;
    final long opset;
    private final Inputs inputs;
    private final Map<String, Val> vals = new HashMap<>();
    private final long[] inputDims;
    private Ax bound0;
    private Ax bound1;
    /** The node being read, as refusals name it: "node 3 (GRU 'gru0')". */
    String label;

    Interpreter(ModelProto model, Inputs inputs) {
        this.g = model.getGraph();
        this.opset = opset(model);
        this.inputs = inputs;
        this.inputDims = dims(inputs.series());
    }

    Analysis run() {
        for (TensorProto t : g.getInitializerList()) {
            Object v = tensor(t);
            vals.put(t.getName(), v instanceof Tensor tt ? new Const(tt) : new Opaque((String) v));
        }
        int width = inputDims != null && inputDims.length == 3 && inputDims[2] > 0 ? (int) inputDims[2] : -1;
        vals.put(inputs.series().getName(), new Data(Kind.SEQ, List.of(Ax.IN0, Ax.IN1, Ax.F), width, Chain.EMPTY,
                null, null, null));
        if (inputs.lengths() != null) {
            vals.put(inputs.lengths().getName(), new Lengths(inputs.lengths().getName()));
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
        boolean hasLengths = inputs.lengths() != null;
        if (hasLengths && !c.seqLens()) {
            return new Refused("graph input '" + inputs.lengths().getName()
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
            desc.append(", lengths input '").append(inputs.lengths().getName()).append('\'');
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
            return RecurrentForms.read(this, RecurrentForms.GRU, n, in);
        }
        if (op.equals("LSTM")) {
            return RecurrentForms.read(this, RecurrentForms.LSTM, n, in);
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
                    Tensor joined = concat(ts, intAttr(n, "axis", 0));
                    return joined == null ? null : new Const(joined);
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
                    return Readouts.addBias(this, in, d);
                }
                case "Softmax", "LogSoftmax" -> {
                    return Readouts.softmax(this, n, d);
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
                return Readouts.gemm(this, n, in, d);
            }
            case "MatMul" -> {
                return Readouts.matmul(this, in, d);
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
    static String cell(Chain c) {
        return c != null && !c.lstm().isEmpty() ? "LSTM" : "GRU";
    }

    String role(Data d) {
        return switch (d.kind()) {
            case SEQ -> d.chain().isEmpty() ? "input series" : cell(d.chain()) + " output sequence Y";
            case STATE -> cell(d.chain()) + " state";
            default -> "class scores";
        };
    }

    Ax resolve(Ax a) {
        if (a == Ax.IN0 && bound0 != null) {
            return bound0;
        }
        if (a == Ax.IN1 && bound1 != null) {
            return bound1;
        }
        return a;
    }

    List<Ax> resolve(List<Ax> axes) {
        List<Ax> r = new ArrayList<>(axes.size());
        for (Ax a : axes) {
            r.add(resolve(a));
        }
        return r;
    }

    String text(List<Ax> axes) {
        return resolve(axes).stream().map(a -> a.text).collect(Collectors.joining(", ", "[", "]"));
    }

    /** The axis size when the graph fixes it, 1 for singleton labels, else -1. */
    long size(Data d, Ax a) {
        Ax r = resolve(a);
        return switch (r) {
            case D, ONE -> 1;
            case L -> d.stack().size();
            case F, C -> d.width() < 0 ? -1 : d.width();
            case T -> staticTime();
            default -> -1;
        };
    }

    long staticTime() {
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

    /**
     * Checks that the input X of a recurrent node {@code op} is [time, batch, features], binding the graph input's
     * first two axes at the first recurrent node; null when it is, else the refusal.
     */
    Val bindAxes(Data d, String op) {
        List<Ax> axes = d.axes();
        if (axes.size() != 3 || resolve(axes.get(2)) != Ax.F) {
            return new Bad(label + ": " + op + " input X has axes " + text(axes) + ", expected [time, batch, features]");
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
            return new Bad(label + ": " + op + " input X has axes " + text(axes) + ", expected [time, batch, features]");
        }
        return null;
    }
}
