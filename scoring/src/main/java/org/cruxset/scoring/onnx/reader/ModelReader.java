package org.cruxset.scoring.onnx.reader;

import static org.cruxset.scoring.onnx.reader.GraphInterface.*;

import ai.onnx.proto.OnnxMl.GraphProto;
import ai.onnx.proto.OnnxMl.ModelProto;
import ai.onnx.proto.OnnxMl.StringStringEntryProto;
import ai.onnx.proto.OnnxMl.ValueInfoProto;
import com.google.protobuf.InvalidProtocolBufferException;
import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.Objects;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.lstm.LstmNetwork;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;

/**
 * Recognises the canonical GRU or LSTM form in any ONNX model from its graph structure: stacked forward GRU nodes, or
 * stacked forward LSTM nodes, on the float input (time-first, or batch-first through Transpose perm [1,0,2]), the last
 * valid time step, an affine readout (Gemm, or MatMul and Add) and optionally a final Softmax or LogSoftmax; or says
 * precisely why not.
 *
 * <p>The package holds one file per concern: {@link GraphInterface} (inputs, output and layout as the graph declares
 * them), {@link Protos} (protobuf attributes and tensors), {@link Values} (the abstract values), {@link Interpreter}
 * (the abstract interpretation of the graph), {@link RecurrentForms} (the GRU and LSTM recognisers) and
 * {@link Readouts} (the readout recognisers).
 */
public final class ModelReader {
    private ModelReader() {
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
        Inputs in = seriesInputs(g);
        if (in.problem() != null) {
            throw new IllegalArgumentException(in.problem());
        }
        ValueInfoProto x = in.series();
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
        return new Signature(x.getName(), regions, in.lengths() == null ? null : in.lengths().getName(), out.getName(),
                classes, layout, hint, evidence[0], outputKind(g, out.getName(), opset(model)), metadata(model));
    }

    /** Whether the model is in canonical GRU form, with the network or the reason it is not. */
    public static Analysis analyse(ModelProto model) {
        GraphProto g = model.getGraph();
        Inputs in = seriesInputs(g);
        if (in.problem() != null) {
            return new Refused(in.problem());
        }
        try {
            return new Interpreter(model, in).run();
        } catch (RuntimeException e) {
            return new Refused("the graph could not be read: " + e.getMessage());
        }
    }
}
