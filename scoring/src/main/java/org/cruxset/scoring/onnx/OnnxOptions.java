package org.cruxset.scoring.onnx;

import java.nio.file.Path;
import java.util.Objects;
import org.cruxset.scoring.decoder.Preprocessing;

/**
 * How {@link OnnxModels#load} opens a model: which engine, the input layout when the graph does not show it, a class
 * order file (nullable) and a preprocessing override (nullable). Thread counts are given per scoring call.
 */
public record OnnxOptions(Engine engine, Layout layout, Path classesFile, Preprocessing preprocessing) {
    public OnnxOptions {
        Objects.requireNonNull(engine, "engine");
        Objects.requireNonNull(layout, "layout");
    }

    /** Which engine runs a model. */
    public enum Engine {
        /** Cruxset's own engine for models in canonical GRU or LSTM form, ONNX Runtime for the others. */
        AUTO,
        /** Cruxset's own engine; models not in canonical GRU or LSTM form are refused. */
        NATIVE,
        /** ONNX Runtime for every model. */
        ONNXRUNTIME
    }

    /** How the model's float input orders its axes. */
    public enum Layout {
        /** Read from the graph (a Transpose perm [1,0,2] before the GRU means batch-first). */
        AUTO,
        /** [batch, time, regions]. */
        BATCH_FIRST,
        /** [time, batch, regions]. */
        TIME_FIRST;

        /** The option spelling: {@code batch-first} or {@code time-first} ({@code auto} for AUTO). */
        public String label() {
            return name().toLowerCase(java.util.Locale.ROOT).replace('_', '-');
        }
    }

    /** Engine AUTO, layout AUTO, no classes file, preprocessing from the model. */
    public static OnnxOptions defaults() {
        return new OnnxOptions(Engine.AUTO, Layout.AUTO, null, null);
    }

    /** The same options with another engine. */
    public OnnxOptions withEngine(Engine e) {
        return new OnnxOptions(e, layout, classesFile, preprocessing);
    }

    /** The same options with another layout. */
    public OnnxOptions withLayout(Layout l) {
        return new OnnxOptions(engine, l, classesFile, preprocessing);
    }

    /** The same options with a class order file (nullable). */
    public OnnxOptions withClassesFile(Path file) {
        return new OnnxOptions(engine, layout, file, preprocessing);
    }

    /** The same options with a preprocessing override (nullable). */
    public OnnxOptions withPreprocessing(Preprocessing p) {
        return new OnnxOptions(engine, layout, classesFile, p);
    }

}
