package org.cruxset.scoring.train;

import org.cruxset.scoring.Checks;

/**
 * Settings of one GRU training run. Weight decay is decoupled (applied to weights, not biases, as in AdamW);
 * gradients are clipped to {@code clipNorm} in global L2 norm; training stops after {@code patience} epochs
 * without a lower validation loss and keeps the best epoch's parameters.
 */
public record TrainingConfig(int hidden, int layers, int maxEpochs, int batchSize, double learningRate,
                             double weightDecay, double clipNorm, int patience, long seed, int threads) {
    public TrainingConfig {
        Checks.within("hidden", hidden, 1, 4096);
        Checks.within("layers", layers, 1, 8);
        Checks.within("maxEpochs", maxEpochs, 1, 100_000);
        Checks.within("batchSize", batchSize, 1, 1_000_000);
        Checks.positive("learningRate", learningRate);
        Checks.within("weightDecay", weightDecay, 0.0, 1.0);
        Checks.positive("clipNorm", clipNorm);
        Checks.within("patience", patience, 1, 100_000);
        Checks.within("threads", threads, 1, 4096);
    }

    /** Defaults that train the bundled cohorts well: hidden 32, one layer, Adam at 0.005. */
    public static TrainingConfig defaults(long seed) {
        return new TrainingConfig(32, 1, 60, 32, 0.005, 1e-4, 5.0, 8, seed, Runtime.getRuntime().availableProcessors());
    }
}
