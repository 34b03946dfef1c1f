package org.cruxset.scoring.onnx.reader;

import static org.cruxset.scoring.onnx.reader.Protos.*;

import ai.onnx.proto.OnnxMl.AttributeProto;
import ai.onnx.proto.OnnxMl.NodeProto;
import com.google.protobuf.ByteString;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.lstm.LstmLayer;
import org.cruxset.scoring.onnx.reader.Values.*;

/**
 * The recognisers of the recurrent layers the native engine runs: ONNX GRU and LSTM nodes in their canonical form,
 * read into {@link GruLayer}s and {@link LstmLayer}s, or refused with the node and the reason.
 */
final class RecurrentForms {
    /** What distinguishes the two recurrent operators the engine runs. */
    record Form(String op, int gates, List<String> activations, int maxInputs, List<String> zeroInputs) {
    }

    /** ONNX GRU: gates z, r, h; inputs X, W, R, B, sequence_lens, initial_h. */
    static final Form GRU = new Form("GRU", 3, List.of("Sigmoid", "Tanh"), 6, List.of("initial_h"));
    /** ONNX LSTM: gates i, o, f, c; inputs X, W, R, B, sequence_lens, initial_h, initial_c, P. */
    static final Form LSTM = new Form("LSTM", 4, List.of("Sigmoid", "Tanh", "Tanh"), 8,
            List.of("initial_h", "initial_c", "P (peepholes)"));

    private RecurrentForms() {
    }

    /**
     * The outputs (Y, Y_h and, for an LSTM, Y_c) of recurrent node {@code n} of form {@code f} with inputs {@code in},
     * or a refusal naming the node and what leaves the canonical form: a forward, unclipped layer with the default
     * activations and zero initial state, constant weights, time-major input, sequence_lens only from the graph's
     * lengths input, stacked only on layers of its own kind that agree on sequence_lens.
     */
    static List<Val> read(Interpreter it, Form f, NodeProto n, Val[] in) {
        String op = f.op();
        String label = it.label;
        String direction = stringAttr(n, "direction");
        if (direction != null && !direction.equals("forward")) {
            return bad(label + ": " + op + " direction '" + direction + "' is not forward");
        }
        AttributeProto acts = attr(n, "activations");
        if (acts != null) {
            List<String> names = acts.getStringsList().stream().map(ByteString::toStringUtf8).toList();
            boolean defaults = names.size() == f.activations().size();
            for (int i = 0; defaults && i < names.size(); i++) {
                defaults = names.get(i).equalsIgnoreCase(f.activations().get(i));
            }
            if (!defaults) {
                return bad(label + ": " + op + " activations " + names + " are not the default " + f.activations());
            }
        }
        if (attr(n, "clip") != null) {
            return bad(label + ": " + op + " clip " + floatAttr(n, "clip", 0f) + " is set; only unclipped " + op
                    + "s are canonical");
        }
        if (f == LSTM && intAttr(n, "input_forget", 0) != 0) {
            return bad(label + ": LSTM input_forget " + intAttr(n, "input_forget", 0)
                    + " couples the input and forget gates; only uncoupled LSTMs are canonical");
        }
        long layout = intAttr(n, "layout", 0);
        if (layout != 0) {
            return bad(label + ": " + op + " layout " + layout + " (batch-major) is not supported");
        }
        long lbr = f == GRU ? intAttr(n, "linear_before_reset", 0) : 0;
        if (lbr != 0 && lbr != 1) {
            return bad(label + ": GRU linear_before_reset " + lbr + " is neither 0 nor 1");
        }
        Val x = in.length > 0 ? in[0] : null;
        if (x instanceof Bad) {
            return List.of(x);
        }
        if (!(x instanceof Data d) || d.kind() != Kind.SEQ) {
            return bad(label + ": " + op + " input X is not the input series or " + (f == GRU ? "a " : "an ") + op
                    + " output sequence" + (x instanceof Data dd ? " (it is the " + it.role(dd) + ")" : ""));
        }
        for (int i = 1; i < in.length; i++) {
            if (in[i] instanceof Bad b) {
                return List.of(b);
            }
            if (in[i] instanceof Data) {
                return bad(label + ": " + op + " input " + i + " is computed from the input series");
            }
        }
        Val bind = it.bindAxes(d, op);
        if (bind != null) {
            return List.of(bind);
        }
        if (!(in.length > 2 && in[1] instanceof Const cw && cw.t().isFloat() && in[2] instanceof Const cr
                && cr.t().isFloat())) {
            return bad(label + ": " + op + " weights W and R are not constant float initializers");
        }
        Tensor w = cw.t();
        Tensor r = cr.t();
        int g = f.gates();
        if (w.dims().length != 3 || r.dims().length != 3 || w.dims()[0] != 1 || r.dims()[0] != 1) {
            return bad(label + ": " + op + " W " + w.shape() + " and R " + r.shape() + " must have shapes [1, " + g
                    + "H, input] and [1, " + g + "H, H]");
        }
        int hid = (int) intAttr(n, "hidden_size", r.dims()[2]);
        int inSize = (int) w.dims()[2];
        if (w.dims()[1] != (long) g * hid || r.dims()[1] != (long) g * hid || r.dims()[2] != hid) {
            return bad(label + ": " + op + " W " + w.shape() + " and R " + r.shape() + " do not match hidden_size "
                    + hid);
        }
        if (d.width() > 0 && d.width() != inSize) {
            return bad(label + ": " + op + " W takes " + inSize + " inputs but X has " + d.width());
        }
        float[] wb = new float[g * hid];
        float[] rb = new float[g * hid];
        Val bv = in.length > 3 ? in[3] : null;
        if (bv instanceof Const cb && cb.t().isFloat()) {
            Tensor b = cb.t();
            if (b.size() != 2 * g * hid || b.dims().length != 2 || b.dims()[0] != 1) {
                return bad(label + ": " + op + " B " + b.shape() + " is not [1, " + 2 * g * hid + "]");
            }
            System.arraycopy(b.f(), 0, wb, 0, g * hid);
            System.arraycopy(b.f(), g * hid, rb, 0, g * hid);
        } else if (bv != null && !(bv instanceof Zero)) {
            return bad(label + ": " + op + " bias B is not a constant float initializer");
        }
        Val sl = in.length > 4 ? in[4] : null;
        boolean seqLens = false;
        if (sl instanceof Lengths) {
            seqLens = true;
        } else if (sl != null) {
            return bad(label + ": " + op + " sequence_lens is not the graph's lengths input");
        }
        for (int i = 5; i < Math.min(in.length, 5 + f.zeroInputs().size()); i++) {
            Val v = in[i];
            if (v != null && !(v instanceof Zero) && !(v instanceof Const c0 && c0.t().allZero())) {
                return bad(label + ": " + op + " " + f.zeroInputs().get(i - 5) + " is not all zeros"
                        + (v instanceof Opaque o ? " (" + o.why() + ")" : ""));
            }
        }
        if (in.length > f.maxInputs()) {
            return bad(label + ": " + op + " has " + in.length + " inputs, at most " + f.maxInputs() + " are defined");
        }
        Chain prev = d.chain();
        boolean otherKind = f == GRU ? !prev.lstm().isEmpty() : !prev.layers().isEmpty();
        if (otherKind) {
            return bad(label + ": " + (f == GRU ? "a GRU stacked on LSTM" : "an LSTM stacked on GRU")
                    + " layers is not a canonical form");
        }
        if (!prev.isEmpty() && prev.seqLens() != seqLens) {
            return bad(label + ": " + op + " layers disagree on sequence_lens: "
                    + (prev.seqLens() ? prev.lastNode() + " has it, this one does not"
                    : "this one has it, " + prev.lastNode() + " does not"));
        }
        Chain chain;
        try {
            if (f == GRU) {
                List<GruLayer> layers = new ArrayList<>(prev.layers());
                layers.add(new GruLayer(inSize, hid, w.f(), r.f(), wb, rb, lbr == 1));
                chain = new Chain(List.copyOf(layers), List.of(), seqLens, label);
            } else {
                List<LstmLayer> layers = new ArrayList<>(prev.lstm());
                layers.add(new LstmLayer(inSize, hid, w.f(), r.f(), wb, rb));
                chain = new Chain(List.of(), List.copyOf(layers), seqLens, label);
            }
        } catch (IllegalArgumentException e) {
            return bad(label + ": " + e.getMessage());
        }
        Data y = new Data(Kind.SEQ, List.of(Ax.T, Ax.D, Ax.B, Ax.F), hid, chain, null, null, null);
        Data yh = new Data(Kind.STATE, List.of(Ax.D, Ax.B, Ax.F), hid, chain, null, "Y_h", null);
        if (f == GRU) {
            return List.of(y, yh);
        }
        Bad yc = new Bad(label + ": the readout reads the LSTM cell state Y_c; canonical LSTMs are read out from the "
                + "hidden state (Y_h or the last step of Y)");
        return List.of(y, yh, yc);
    }

    private static List<Val> bad(String reason) {
        return List.of(new Bad(reason));
    }
}
