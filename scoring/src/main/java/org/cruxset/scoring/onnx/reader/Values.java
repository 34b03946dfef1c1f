package org.cruxset.scoring.onnx.reader;

import static org.cruxset.scoring.onnx.reader.Protos.*;

import java.util.List;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.lstm.LstmLayer;

/**
 * The abstract values the {@link Interpreter} computes for every tensor of a graph: constants, run-time zeros and shape
 * integers, the lengths input, tensors on the data path described by their axes and the recurrent layers and readout
 * applied so far, and refusals.
 */
final class Values {
    private Values() {
    }

    /** Axis labels of the tensors on the data path. IN0 and IN1 are the input's first two axes until a GRU tells them. */
    enum Ax {
        IN0("input axis 0"), IN1("input axis 1"), T("time"), B("batch"), F("features"), D("num_directions"),
        L("layers"), ONE("1"), C("classes");

        final String text;

        Ax(String text) {
            this.text = text;
        }
    }

    enum Kind { SEQ, STATE, SCORES, PROBS, LOGPROBS }

    /** Stacked GRU layers applied so far, whether they take sequence_lens, and the node label of the last one. */
    record Chain(List<GruLayer> layers, List<LstmLayer> lstm, boolean seqLens, String lastNode) {
        static final Chain EMPTY = new Chain(List.of(), List.of(), false, null);

        boolean isEmpty() {
            return layers.isEmpty() && lstm.isEmpty();
        }
    }

    /** The affine readout: [classes × hidden] row-major weights and bias, and how it was written. */
    record Head(float[] w, float[] b, String name, String node) {
    }

    sealed interface Val permits Const, Zero, Meta, Opaque, Lengths, Data, Bad {
    }

    record Const(Tensor t) implements Val {
    }

    /** An all-zero tensor of a shape computed at run time. */
    record Zero() implements Val {
    }

    /** Integers computed from tensor shapes at run time. */
    record Meta() implements Val {
    }

    /** A value the reader does not compute (fine unless the data path needs it). */
    record Opaque(String why) implements Val {
    }

    /** The graph's lengths input, possibly cast to int32. */
    record Lengths(String input) implements Val {
    }

    /** A tensor on the data path, described by its axes. */
    record Data(Kind kind, List<Ax> axes, int width, Chain chain, List<Chain> stack, String source, Head head)
            implements Val {
        Data axes(List<Ax> a) {
            return new Data(kind, List.copyOf(a), width, chain, stack, source, head);
        }
    }

    record Bad(String reason) implements Val {
    }
}
