package org.cruxset.scoring.train;

import java.util.List;
import org.cruxset.scoring.gru.GruNetwork;

/** The trained network (best validation epoch), and per-epoch losses and accuracies. */
public record TrainingResult(GruNetwork network, int bestEpoch, List<Epoch> epochs) {
    public TrainingResult {
        epochs = List.copyOf(epochs);
    }

    /** One epoch's mean training loss, validation loss and validation accuracy. */
    public record Epoch(int epoch, double trainLoss, double validationLoss, double validationAccuracy) {
    }
}
