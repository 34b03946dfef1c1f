package org.cruxset.scoring.decoder;

import java.util.List;
import java.util.Map;
import java.util.Objects;

/**
 * What a loaded decoder expects and gives: the number of input regions and, where the model states them, their
 * names in input order (else empty: inputs then follow the atlas {@code index} order); class labels in output
 * order; the preprocessing to apply; which engine runs it and why; the model file's SHA-256; free-form metadata.
 */
public record ModelCard(int regions, List<String> regionNames, List<String> classLabels, Preprocessing preprocessing,
                        String engine, String engineReason, String modelHash, Map<String, String> metadata) {
    public ModelCard {
        regionNames = List.copyOf(regionNames);
        classLabels = List.copyOf(classLabels);
        Objects.requireNonNull(preprocessing, "preprocessing");
        Objects.requireNonNull(engine, "engine");
        Objects.requireNonNull(engineReason, "engineReason");
        Objects.requireNonNull(modelHash, "modelHash");
        metadata = Map.copyOf(metadata);
        if (regions < 1) {
            throw new IllegalArgumentException("a decoder needs at least 1 input region, found " + regions);
        }
        if (!regionNames.isEmpty() && regionNames.size() != regions) {
            throw new IllegalArgumentException("model names " + regionNames.size() + " regions but takes " + regions + " inputs");
        }
        if (classLabels.size() < 2) {
            throw new IllegalArgumentException("a decoder needs at least 2 classes, found " + classLabels.size());
        }
    }

    public int classes() {
        return classLabels.size();
    }

    /** The same card with another engine and reason. */
    public ModelCard withEngine(String engineName, String reason) {
        return new ModelCard(regions, regionNames, classLabels, preprocessing, engineName, reason, modelHash, metadata);
    }
}
