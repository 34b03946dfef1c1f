package org.cruxset.scoring.onnx.reader;

import static org.cruxset.scoring.onnx.reader.Protos.*;

import ai.onnx.proto.OnnxMl.NodeProto;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.onnx.reader.Values.*;

/**
 * The recognisers of the readout: an affine map of the last recurrent state to class scores (Gemm, or MatMul then a
 * broadcast Add), and an optional Softmax or LogSoftmax over the classes; or the refusal naming the node.
 */
final class Readouts {
    private Readouts() {
    }

    static Val readoutInput(Interpreter it, Data d, List<Ax> expected, String op) {
        if (d.kind() == Kind.SEQ) {
            return new Bad(it.label + " reads out the " + it.role(d) + " " + it.text(d.axes())
                    + ", which still has a time axis; take the last step or Y_h first");
        }
        if (!it.resolve(d.axes()).equals(expected)) {
            return new Bad(it.label + " (" + op + ") takes the " + it.role(d) + " with axes " + it.text(d.axes()) + ", expected "
                    + it.text(expected));
        }
        if (d.chain() == null || d.chain().isEmpty()) {
            return new Bad(it.label + " reads out the input series without a GRU or LSTM before it");
        }
        return null;
    }

    static Val gemm(Interpreter it, NodeProto n, Val[] in, Data d) {
        long transA = intAttr(n, "transA", 0);
        long transB = intAttr(n, "transB", 0);
        float alpha = floatAttr(n, "alpha", 1f);
        float beta = floatAttr(n, "beta", 1f);
        Val bad = readoutInput(it, d, transA == 0 ? List.of(Ax.B, Ax.F) : List.of(Ax.F, Ax.B), "Gemm");
        if (bad != null) {
            return bad;
        }
        if (!(in.length > 1 && in[1] instanceof Const cb && cb.t().isFloat() && cb.t().dims().length == 2)) {
            return new Bad(it.label + " readout weights B are not a constant float matrix");
        }
        Tensor wt = cb.t();
        int hid = d.width();
        long[] wd = wt.dims();
        int k = (int) (transB == 1 ? wd[0] : wd[1]);
        int h = (int) (transB == 1 ? wd[1] : wd[0]);
        if (h != hid) {
            return new Bad(it.label + " readout weights " + wt.shape() + " (transB=" + transB + ") do not take "
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
                return new Bad(it.label + " readout bias C is not a constant float tensor");
            }
            float[] bias = broadcastBias(cc.t(), 2, 1, k);
            if (bias == null) {
                return new Bad(it.label + " readout bias C of shape " + cc.t().shape()
                        + " does not broadcast to [batch, " + k + "] without depending on the batch");
            }
            for (int c = 0; c < k; c++) {
                b[c] = beta * bias[c];
            }
        }
        return new Data(Kind.SCORES, List.of(Ax.B, Ax.C), k, d.chain(), null, d.source(),
                new Head(w, b, "Gemm", it.label));
    }

    static Val matmul(Interpreter it, Val[] in, Data d) {
        List<Ax> axes = it.resolve(d.axes());
        if (d.kind() == Kind.SEQ) {
            return readoutInput(it, d, List.of(Ax.B, Ax.F), "MatMul");
        }
        if (axes.isEmpty() || axes.get(axes.size() - 1) != Ax.F || axes.stream().filter(a -> a == Ax.B).count() != 1
                || axes.stream().anyMatch(a -> a != Ax.B && a != Ax.F && a != Ax.ONE && a != Ax.D)) {
            return new Bad(it.label + " (MatMul) takes the " + it.role(d) + " with axes " + it.text(d.axes())
                    + ", expected [batch, features]");
        }
        if (d.chain() == null || d.chain().isEmpty()) {
            return new Bad(it.label + " reads out the input series without a GRU or LSTM before it");
        }
        if (!(in.length > 1 && in[1] instanceof Const cb && cb.t().isFloat() && cb.t().dims().length == 2)) {
            return new Bad(it.label + " readout weights are not a constant float matrix [hidden, classes]");
        }
        Tensor wt = cb.t();
        int h = (int) wt.dims()[0];
        int k = (int) wt.dims()[1];
        if (h != d.width()) {
            return new Bad(it.label + " readout weights " + wt.shape() + " do not take " + d.width() + " hidden units");
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
                new Head(w, new float[k], "MatMul", it.label));
    }

    static Val addBias(Interpreter it, Val[] in, Data d) {
        if (in.length != 2) {
            return new Bad(it.label + " adds " + in.length + " inputs");
        }
        Val other = in[0] == d ? in[1] : in[0];
        if (!(other instanceof Const c && c.t().isFloat())) {
            return new Bad(it.label + " after the readout " + d.head().name()
                    + " adds a value that is not a constant bias: only Softmax or LogSoftmax may follow");
        }
        int ci = it.resolve(d.axes()).indexOf(Ax.C);
        float[] bias = broadcastBias(c.t(), d.axes().size(), ci, d.width());
        if (bias == null) {
            return new Bad(it.label + " adds a bias of shape " + c.t().shape() + " that does not broadcast to the "
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

    static Val softmax(Interpreter it, NodeProto n, Data d) {
        String op = n.getOpType();
        int r = d.axes().size();
        List<Ax> axes = it.resolve(d.axes());
        long axis = intAttr(n, "axis", it.opset >= 13 ? -1 : 1);
        int k = (int) (axis < 0 ? axis + r : axis);
        boolean ok;
        if (k < 0 || k >= r) {
            ok = false;
        } else if (it.opset >= 13) {
            ok = axes.get(k) == Ax.C;
        } else {
            // Before it.opset 13 the input is coerced to 2-D at the axis and normalised over the trailing part.
            int ci = axes.indexOf(Ax.C);
            ok = ci >= k;
            for (int i = k; i < r; i++) {
                if (i != ci && it.size(d, d.axes().get(i)) != 1) {
                    ok = false;
                }
            }
        }
        if (!ok) {
            return new Bad(it.label + " normalises over axis " + axis + " of " + it.text(d.axes())
                    + ", not over the classes");
        }
        return new Data(op.equals("Softmax") ? Kind.PROBS : Kind.LOGPROBS, d.axes(), d.width(), d.chain(), null,
                d.source(), d.head());
    }
}
