package org.cruxset.scoring.decoder;

import java.io.Serializable;
import java.util.List;
import java.util.Objects;

/**
 * What another JVM (a cluster's executor) needs to open a decoder exactly as it was opened here: the model file's
 * bytes and name, the engine chosen ({@code native} or {@code onnxruntime}, never "auto", so every JVM runs the same
 * one), the input layout, the class labels in output order, the preprocessing label and ONNX Runtime's intra-op
 * threads. Serializable, so it can be broadcast once per run.
 */
public record DecoderSource(byte[] model, String name, String engine, String layout, List<String> classLabels,
                            String preprocessing, int intraOpThreads) implements Serializable {
    public DecoderSource {
        Objects.requireNonNull(model, "model");
        Objects.requireNonNull(name, "name");
        Objects.requireNonNull(engine, "engine");
        Objects.requireNonNull(layout, "layout");
        Objects.requireNonNull(preprocessing, "preprocessing");
        classLabels = List.copyOf(classLabels);
        model = model.clone();
    }

    @Override
    public byte[] model() {
        return model.clone();
    }
}
