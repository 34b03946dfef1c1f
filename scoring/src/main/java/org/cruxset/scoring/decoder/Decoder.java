package org.cruxset.scoring.decoder;

import java.util.List;

/**
 * A trained classifier of region time series. Implementations: Cruxset's own GRU engine and ONNX Runtime.
 */
public interface Decoder extends AutoCloseable {
    /** What the decoder expects and which engine runs it. */
    ModelCard card();

    /**
     * Binds a batch of samples (already in model input space, regions in {@link ModelCard#regionNames()} order)
     * so that many masks can be scored against it; engines may cache per-batch work here.
     */
    Bound bind(InputBatch batch);

    /**
     * How many sets the scorer should decode per {@link Bound#probabilities} call when it may use {@code threads}
     * threads: enough to keep them busy, few enough to commit often. A decoder on a cluster asks for more (each call
     * is one job there, and a job's overhead is paid once).
     */
    default int setsPerCall(int threads) {
        return Math.max(1, Math.min(64, 4 * threads));
    }

    @Override
    default void close() {
    }

    /** A decoder bound to one batch of samples. */
    interface Bound {
        /**
         * Class probabilities of every sample under every mask: {@code result[m][s][k]} for mask {@code m} of
         * {@code masks}, sample {@code s} of the batch and class {@code k} of {@link ModelCard#classLabels()}.
         * Safe to call from several threads; {@code threads} bounds the worker threads this call uses.
         */
        float[][][] probabilities(List<InputMask> masks, int threads);
    }
}
