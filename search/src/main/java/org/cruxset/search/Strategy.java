package org.cruxset.search;

/**
 * A search strategy for small critical lesion sets. It proposes batches of sets to {@link SearchContext#score} and
 * decides what to ask next from the scores it receives; it is seeded through the context and deterministic given those
 * scores, so a resumed run replays it through the results store to the same point and the same result. A strategy
 * may simply return when it is done; the context throws {@link StopSearch} when the budget or the time runs out,
 * and what was found so far is kept by the context.
 */
public interface Strategy {
    /** A short name for reports, e.g. {@code grow}. */
    String name();

    /** The strategy's settings in one line, recorded with the run. */
    String settings();

    /** Runs the strategy; returns when it is done. */
    void run(SearchContext ctx);

    /**
     * Lines for the report of a run after {@link #run} (stopped or not), e.g. what a surrogate cost and how well it
     * predicted; none by default.
     */
    default java.util.List<String> notes() {
        return java.util.List.of();
    }
}
