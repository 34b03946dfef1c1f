package org.cruxset.scoring.decoder;

import java.util.List;
import java.util.Map;
import java.util.Objects;

/**
 * What a loaded decoder expects and gives: region names in input order, class labels in output order, the
 * preprocessing to apply, which engine runs it and why, the model file's SHA-256 and its free-form metadata.
 */
public record ModelCard(List<String> regionNames, List<String> classLabels, Preprocessing preprocessing,
                        String engine, String engineReason, String modelHash, Map<String, String> metadata) {
    public ModelCard {
        regionNames = List.copyOf(regionNames);
        classLabels = List.copyOf(classLabels);
        Objects.requireNonNull(preprocessing, "preprocessing");
        Objects.requireNonNull(engine, "engine");
        Objects.requireNonNull(engineReason, "engineReason");
        Objects.requireNonNull(modelHash, "modelHash");
        metadata = Map.copyOf(metadata);
        if (classLabels.size() < 2) {
            throw new IllegalArgumentException("a decoder needs at least 2 classes, found " + classLabels.size());
        }
    }

    public int regions() {
        return regionNames.size();
    }

    public int classes() {
        return classLabels.size();
    }
}
