package org.cruxset.surrogate;

import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A cheap model of a lesion set's score, fitted on scored sets and predicting a mean and an uncertainty for many sets
 * at once. Models refit from all pairs seen when {@link #fit} is called again (no incremental update).
 */
public interface SurrogateModel {
    /** Fits the model to {@code sets} and their scores {@code y} (same order), replacing any earlier fit. */
    void fit(List<RegionSet> sets, double[] y);

    /** Predictive means and standard deviations of {@code sets}. */
    Prediction predict(List<RegionSet> sets);

    /**
     * Draw {@code k} of the fitted model's posterior (or of its members), evaluated on {@code sets}: one coherent
     * function of the set for every {@code k}, as Thompson sampling needs (the same k gives the same function until
     * the next fit).
     */
    double[] draw(List<RegionSet> sets, int k);

    /** One line for reports: the model, its features and what a fit cost. */
    String describe();

    /** Predictive means and standard deviations, one per set. */
    record Prediction(double[] mean, double[] sd) {
        public Prediction {
            mean = mean.clone();
            sd = sd.clone();
            if (mean.length != sd.length) {
                throw new IllegalArgumentException(mean.length + " means but " + sd.length + " deviations");
            }
        }

        @Override
        public double[] mean() {
            return mean.clone();
        }

        @Override
        public double[] sd() {
            return sd.clone();
        }
    }
}
