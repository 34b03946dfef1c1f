package org.cruxset.search.bench;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.List;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;

/**
 * A benchmark suite carried by another build (the cluster build's {@code --suite cluster}), found by
 * {@link java.util.ServiceLoader}: {@code cruxset bench} builds the workload, the suite measures it.
 */
public interface ExternalSuite {
    /** The suite's name, as in {@code --suite}. */
    String name();

    /** Measures the workload with {@code threads} cores on one machine (and whatever the suite compares). */
    void run(PrintWriter out, Workload workload, int threads);

    /** The reference workload: the model file, its held-out batch, the lesion masks to score, and in words. */
    record Workload(Path model, InputBatch batch, List<InputMask> masks, String description) {
        public Workload {
            masks = List.copyOf(masks);
        }
    }
}
