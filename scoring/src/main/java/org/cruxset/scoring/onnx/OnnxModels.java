package org.cruxset.scoring.onnx;

import ai.onnx.proto.OnnxMl.ModelProto;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.DecoderSource;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.onnx.reader.ModelReader.Analysis;
import org.cruxset.scoring.onnx.reader.ModelReader.Canonical;
import org.cruxset.scoring.onnx.reader.ModelReader.Refused;
import org.cruxset.scoring.onnx.reader.ModelReader.Signature;
import org.cruxset.scoring.onnx.OnnxOptions.Engine;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.reader.ModelReader;

/** Opens ONNX decoder models: Cruxset's own engine for canonical GRU and LSTM models, ONNX Runtime for any other. */
public final class OnnxModels {
    /** Engine name on the model card of models run by {@link NativeRecurrentDecoder}. */
    public static final String NATIVE = "native";
    /** Engine name on the model card of models run by {@link OnnxRuntimeDecoder}. */
    public static final String ONNXRUNTIME = "onnxruntime";

    private OnnxModels() {
    }

    /** Loads the model file as a decoder; unreadable, inconsistent or unsupported models raise IllegalArgumentException naming the file. */
    public static Decoder load(Path model, OnnxOptions options) {
        return load(model, options, 1);
    }

    /**
     * {@link #load(Path, OnnxOptions)} with {@code intraOpThreads} ONNX Runtime intra-op threads per run instead of
     * one (the benchmark's second configuration: all cores inside each run, one caller).
     */
    public static Decoder load(Path model, OnnxOptions options, int intraOpThreads) {
        Objects.requireNonNull(model, "model");
        Objects.requireNonNull(options, "options");
        byte[] bytes;
        try {
            bytes = Files.readAllBytes(model);
        } catch (IOException e) {
            throw new IllegalArgumentException("cannot read model " + model + ": " + e, e);
        }
        return load(bytes, model, options, null, intraOpThreads);
    }

    /**
     * Opens the decoder a {@link DecoderSource} describes, in another JVM (a cluster's executor): the same bytes,
     * engine, layout, class labels and preprocessing as where it was first opened, so it decodes identically.
     */
    public static Decoder open(DecoderSource source) {
        OnnxOptions options = new OnnxOptions(source.engine().equals(NATIVE) ? Engine.NATIVE : Engine.ONNXRUNTIME,
                Layout.valueOf(source.layout()), null, Preprocessing.parse(source.preprocessing()));
        return load(source.model(), Path.of(source.name()), options, source.classLabels(), source.intraOpThreads());
    }

    /**
     * What another JVM needs to open {@code opened} again exactly: the model file's bytes and the engine, layout,
     * class labels and preprocessing it was opened with (from its card, so an {@code auto} engine stays the one
     * chosen here).
     */
    public static DecoderSource source(Path model, OnnxOptions options, Decoder opened, int intraOpThreads) {
        try {
            return new DecoderSource(Files.readAllBytes(model), model.getFileName().toString(),
                    opened.card().engine(), options.layout().name(), opened.card().classLabels(),
                    opened.card().preprocessing().label(), intraOpThreads);
        } catch (IOException e) {
            throw new IllegalArgumentException("cannot read model " + model + ": " + e, e);
        }
    }

    private static Decoder load(byte[] bytes, Path model, OnnxOptions options, List<String> givenLabels,
                                int intraOpThreads) {
        ModelProto proto;
        Signature sig;
        try {
            proto = ModelReader.parse(bytes);
            sig = ModelReader.signature(proto);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("model " + model + ": " + e.getMessage(), e);
        }
        Analysis analysis = ModelReader.analyse(proto);
        Canonical canonical = analysis instanceof Canonical c ? c : null;
        String refusal = analysis instanceof Refused r ? r.reason() : null;
        Map<String, String> meta = sig.metadata();

        List<String> labels = givenLabels != null ? givenLabels : classLabels(model, options.classesFile(), meta);
        int width = canonical != null ? ModelReader.classes(canonical) : sig.classes();
        if (width > 0 && width != labels.size()) {
            throw new IllegalArgumentException("model " + model + " gives " + width + " class scores but "
                    + labels.size() + " class labels were given" + (options.classesFile() != null
                    ? " in " + options.classesFile() : " in its metadata " + OnnxGruWriter.CLASSES_KEY));
        }
        Preprocessing pre;
        if (options.preprocessing() != null) {
            pre = options.preprocessing();
        } else if (meta.containsKey(OnnxGruWriter.PREPROCESSING_KEY)) {
            try {
                pre = Preprocessing.parse(meta.get(OnnxGruWriter.PREPROCESSING_KEY));
            } catch (IllegalArgumentException e) {
                throw new IllegalArgumentException("model " + model + " metadata " + OnnxGruWriter.PREPROCESSING_KEY
                        + ": " + e.getMessage(), e);
            }
        } else {
            pre = Preprocessing.NONE;
        }
        List<String> regionNames = meta.containsKey(OnnxGruWriter.REGIONS_KEY)
                ? lines(meta.get(OnnxGruWriter.REGIONS_KEY)) : List.of();
        int regions = canonical != null ? ModelReader.inputs(canonical)
                : sig.regions() > 0 ? sig.regions() : regionNames.size();
        if (regions < 1) {
            throw new IllegalArgumentException("model " + model + " does not fix the region count of input '"
                    + sig.input() + "' and names no regions in " + OnnxGruWriter.REGIONS_KEY);
        }
        if (!regionNames.isEmpty() && regionNames.size() != regions) {
            throw new IllegalArgumentException("model " + model + " names " + regionNames.size() + " regions in "
                    + OnnxGruWriter.REGIONS_KEY + " but takes " + regions + " inputs");
        }
        String hash = sha256(bytes);

        boolean runNative = switch (options.engine()) {
            case AUTO -> canonical != null;
            case NATIVE -> {
                if (canonical == null) {
                    throw new IllegalArgumentException("model " + model + " is not in canonical GRU or LSTM form, so the native "
                            + "engine cannot run it: " + refusal + " (use engine auto or onnxruntime)");
                }
                yield true;
            }
            case ONNXRUNTIME -> false;
        };
        Layout layout = layout(model, sig, canonical, options.layout());
        if (runNative) {
            ModelCard card = card(model, regions, regionNames, labels, pre, NATIVE, canonical.description(), hash, meta);
            return canonical.network() != null ? new NativeRecurrentDecoder(canonical.network(), card)
                    : new NativeRecurrentDecoder(canonical.lstm(), card);
        }
        String reason;
        if (options.engine() == Engine.ONNXRUNTIME) {
            reason = "engine onnxruntime requested" + (canonical != null ? " (" + canonical.description() + ")"
                    : "; not in canonical GRU or LSTM form: " + refusal);
        } else {
            reason = "not in canonical GRU or LSTM form: " + refusal;
        }
        ModelCard card = card(model, regions, regionNames, labels, pre, ONNXRUNTIME, reason, hash, meta);
        ModelReader.Output kind = canonical != null ? canonical.output() : sig.outputKind();
        try {
            // By default one intra-op thread per run; runs go in parallel over the caller's threads (bench measures
            // this against all-core intra-op runs with one caller and prints both).
            return new OnnxRuntimeDecoder(bytes, card, layout, kind, sig.output(), intraOpThreads);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("model " + model + ": " + e.getMessage(), e);
        }
    }

    private static ModelCard card(Path model, int regions, List<String> regionNames, List<String> labels,
                                  Preprocessing pre, String engine, String reason, String hash, Map<String, String> meta) {
        try {
            return new ModelCard(regions, regionNames, labels, pre, engine, reason, hash, meta);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("model " + model + ": " + e.getMessage(), e);
        }
    }

    private static Layout layout(Path model, Signature sig, Canonical canonical, Layout option) {
        Layout graph = canonical != null ? canonical.layout() : sig.layout();
        if (graph != Layout.AUTO) {
            if (option != Layout.AUTO && option != graph) {
                throw new IllegalArgumentException("model " + model + " reads input '" + sig.input() + "' as "
                        + graph.label() + " (" + (canonical != null ? canonical.description() : sig.layoutEvidence())
                        + ") but layout " + option.label() + " was given");
            }
            return graph;
        }
        if (option != Layout.AUTO) {
            return option;
        }
        if (sig.layoutHint() != Layout.AUTO) {
            return sig.layoutHint();
        }
        throw new IllegalArgumentException("model " + model + ": " + sig.layoutEvidence()
                + ": pass --layout batch-first or --layout time-first");
    }

    private static List<String> classLabels(Path model, Path classesFile, Map<String, String> meta) {
        if (classesFile != null) {
            try {
                List<String> labels = lines(Files.readString(classesFile, StandardCharsets.UTF_8));
                if (labels.isEmpty()) {
                    throw new IllegalArgumentException("classes file " + classesFile + " holds no labels");
                }
                return labels;
            } catch (IOException e) {
                throw new IllegalArgumentException("cannot read classes file " + classesFile + ": " + e, e);
            }
        }
        String stated = meta.get(OnnxGruWriter.CLASSES_KEY);
        if (stated == null || lines(stated).isEmpty()) {
            throw new IllegalArgumentException("model " + model
                    + " states no class order: pass --classes FILE (one label per line in output order)");
        }
        return lines(stated);
    }

    /** Non-blank lines, trimmed. */
    private static List<String> lines(String text) {
        List<String> out = new ArrayList<>();
        for (String line : text.split("\\R")) {
            String t = line.strip();
            if (!t.isEmpty()) {
                out.add(t);
            }
        }
        return out;
    }

    /** SHA-256 of the bytes as lower-case hex. */
    static String sha256(byte[] bytes) {
        try {
            return HexFormat.of().formatHex(MessageDigest.getInstance("SHA-256").digest(bytes));
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException(e);
        }
    }
}
