package org.cruxset.scoring.eval;

import org.cruxset.scoring.Checks;

/**
 * The budget of a run in the one unit every strategy shares: one scored set is a set scored on all samples of the
 * part being searched; a set scored on a fraction of them costs that fraction. Within a run a set is paid once;
 * sets other runs already stored are charged (fairness) but cost no decoder time. Not thread-safe.
 */
public final class Budget {
    private final double limit;
    private double spent;

    private Budget(double limit, double spent) {
        this.limit = limit;
        this.spent = spent;
    }

    /** A budget of {@code limit} scored sets, of which {@code alreadySpent} were spent before a resume. */
    public static Budget of(double limit, double alreadySpent) {
        Checks.positive("budget", limit);
        Checks.within("alreadySpent", alreadySpent, 0.0, Double.MAX_VALUE);
        return new Budget(limit, alreadySpent);
    }

    /** No limit. */
    public static Budget unlimited(double alreadySpent) {
        return new Budget(Double.POSITIVE_INFINITY, alreadySpent);
    }

    public double limit() {
        return limit;
    }

    public double spent() {
        return spent;
    }

    public double remaining() {
        return Math.max(0, limit - spent);
    }

    /** Whether {@code cost} more fits. */
    public boolean allows(double cost) {
        return spent + cost <= limit + 1e-9;
    }

    /** Charges {@code cost}; fails when it does not fit. */
    public void charge(double cost) {
        if (!allows(cost)) {
            throw new IllegalStateException("budget exhausted: " + spent + " of " + limit + " spent, " + cost + " more asked");
        }
        spent += cost;
    }
}
