package org.cruxset.search;

import java.util.Comparator;
import org.cruxset.scoring.eval.SetScore;

/**
 * The objective every strategy shares: the smallest critical set; among sets of one size, the lowest accuracy, ties
 * broken by the lowest mean probability of the true class. {@link #BETTER} orders scores best first.
 */
public final class Objective {
    /** Lower accuracy first, then lower mean true-class probability. */
    public static final Comparator<SetScore> BETTER = Comparator.comparingDouble(SetScore::accuracy)
            .thenComparingDouble(SetScore::meanTrueClassProbability);

    /** Lower mean true-class probability first, then lower accuracy: the finer signal greedy steps follow. */
    public static final Comparator<SetScore> BETTER_BY_PROBABILITY = Comparator
            .comparingDouble(SetScore::meanTrueClassProbability).thenComparingDouble(SetScore::accuracy);

    private Objective() {
    }

    /** One sentence for reports. */
    public static String describe() {
        return "smallest critical set; among equal sizes the lowest accuracy, then the lowest mean true-class probability";
    }
}
