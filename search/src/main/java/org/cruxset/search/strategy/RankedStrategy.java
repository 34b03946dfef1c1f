package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.Strategy;
import org.cruxset.search.rank.CriticalPrefix;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.SingleLesion;

/**
 * The smallest critical prefix of a ranking (the single-lesion ranking computed on the spot, or one given), which the
 * search then prunes. What the prefix search saw is kept in {@link #prefix()} for reports.
 */
public final class RankedStrategy implements Strategy {
    private final Ranking given;
    private Ranking used;
    private CriticalPrefix.Result prefix;

    /** Ranks by {@code ranking}, or by single lesions when null. */
    public RankedStrategy(Ranking ranking) {
        this.given = ranking;
    }

    @Override
    public String name() {
        return "ranked";
    }

    @Override
    public String settings() {
        return "ranking=" + (given == null ? SingleLesion.SOURCE + " (computed on the search part)"
                : given.sources().isEmpty() ? "given" : given.sources().get(0) + " (" + given.size() + " units, given)");
    }

    @Override
    public void run(SearchContext ctx) {
        used = given == null ? SingleLesion.rank(ctx) : given;
        List<RegionSet> prefixes = new ArrayList<>();
        for (RegionSet atlasSet : used.prefixes(ctx.session().cohort().atlas())) {
            prefixes.add(ctx.session().toInputs(atlasSet));
        }
        prefix = CriticalPrefix.find(ctx, prefixes);
    }

    /** The ranking used (after {@link #run}). */
    public Ranking ranking() {
        return used;
    }

    /** What the prefix search found (after {@link #run}; null when it was stopped first). */
    public CriticalPrefix.Result prefix() {
        return prefix;
    }
}
