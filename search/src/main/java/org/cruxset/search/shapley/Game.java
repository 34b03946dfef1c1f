package org.cruxset.search.shapley;

import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A cooperative game over {@link #players()} players: the worth {@code v(S)} of coalitions, asked for in batches (a
 * lesion game scores each batch as one call to the scorer). Coalitions are sets over the players.
 */
public interface Game {
    /** Number of players. */
    int players();

    /** The worth of each coalition, in order. */
    double[] worth(List<RegionSet> coalitions);

    /** The worth of one coalition. */
    default double worth(RegionSet coalition) {
        return worth(List.of(coalition))[0];
    }
}
