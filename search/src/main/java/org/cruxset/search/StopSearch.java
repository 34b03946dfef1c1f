package org.cruxset.search;

/** Thrown by {@link SearchContext#score} when the budget or the time is spent; what was scored is kept. */
public final class StopSearch extends RuntimeException {
    private static final long serialVersionUID = 1L;

    /** Why a search stopped. */
    public enum Reason {
        /** The budget of scored sets is spent (the last batch was truncated to meet it exactly). */
        BUDGET,
        /** The time limit or deadline has passed. */
        TIME
    }

    private final Reason reason;

    StopSearch(Reason reason, String message) {
        super(message, null, false, false);
        this.reason = reason;
    }

    public Reason reason() {
        return reason;
    }
}
