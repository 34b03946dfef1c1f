package org.cruxset.search.cli;

import java.nio.file.Path;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Option;

/** Options shared by commands that load a decoder. */
public final class ModelOptions implements ModelSource {
    @Option(names = "--model", required = true, paramLabel = "FILE", description = "Trained decoder in ONNX format.")
    Path model;

    @Option(names = "--classes", paramLabel = "FILE",
            description = "Class labels in the model's output order, one per line (for models that do not state them).")
    Path classes;

    @Option(names = "--engine", paramLabel = "ENGINE", defaultValue = "auto",
            description = "auto (Cruxset's own engine for canonical GRU and LSTM models, else ONNX Runtime), native or onnxruntime. Default: ${DEFAULT-VALUE}.")
    String engine;

    @Option(names = "--layout", paramLabel = "LAYOUT", defaultValue = "auto",
            description = "Input layout of a model from elsewhere: auto, batch-first or time-first. Default: ${DEFAULT-VALUE}.")
    String layout;

    @Option(names = "--preprocessing", paramLabel = "P",
            description = "Override the model's recorded preprocessing: none or zscore.")
    String preprocessing;

    @Mixin
    ThreadOptions threads;

    int threads() {
        return threads.threads();
    }

    @Override
    public org.cruxset.scoring.decoder.DecoderSource source(Decoder opened) {
        return OnnxModels.source(model, options(), opened, 1);
    }

    /** Opens the decoder. */
    Decoder open() {
        return OnnxModels.load(model, options());
    }

    private OnnxOptions options() {
        OnnxOptions.Engine e = switch (engine.toLowerCase(java.util.Locale.ROOT)) {
            case "auto" -> OnnxOptions.Engine.AUTO;
            case "native" -> OnnxOptions.Engine.NATIVE;
            case "onnxruntime" -> OnnxOptions.Engine.ONNXRUNTIME;
            default -> throw new IllegalArgumentException("--engine must be auto, native or onnxruntime, found '" + engine + "'");
        };
        OnnxOptions.Layout l = switch (layout.toLowerCase(java.util.Locale.ROOT)) {
            case "auto" -> OnnxOptions.Layout.AUTO;
            case "batch-first" -> OnnxOptions.Layout.BATCH_FIRST;
            case "time-first" -> OnnxOptions.Layout.TIME_FIRST;
            default -> throw new IllegalArgumentException("--layout must be auto, batch-first or time-first, found '" + layout + "'");
        };
        Preprocessing p = preprocessing == null ? null : Preprocessing.parse(preprocessing);
        return new OnnxOptions(e, l, classes, p);
    }
}
