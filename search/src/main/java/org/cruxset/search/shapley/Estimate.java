package org.cruxset.search.shapley;

/**
 * Estimated values of every player: the value, its standard error (0 for exact values), the 95% interval, and the
 * coalitions whose worth was asked for (cached repeats included).
 */
public record Estimate(String estimator, double[] values, double[] standardErrors, long evaluations) {
    /** The normal 0.975 quantile. */
    public static final double Z95 = 1.959963984540054;

    public Estimate {
        if (values.length != standardErrors.length) {
            throw new IllegalArgumentException("one standard error per value");
        }
        values = values.clone();
        standardErrors = standardErrors.clone();
    }

    @Override
    public double[] values() {
        return values.clone();
    }

    @Override
    public double[] standardErrors() {
        return standardErrors.clone();
    }

    /** Value of player {@code i}. */
    public double value(int i) {
        return values[i];
    }

    /** Half-width of player {@code i}'s 95% interval. */
    public double halfWidth(int i) {
        return Z95 * standardErrors[i];
    }

    /** Sum of the values (efficiency: equals v(all) − v(∅) for exact values). */
    public double sum() {
        double s = 0;
        for (double v : values) {
            s += v;
        }
        return s;
    }
}
