package org.cruxset.search.strategy;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.StopSearch;
import org.cruxset.search.Strategy;
import org.cruxset.search.rank.CriticalPrefix;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.SingleLesion;
import org.cruxset.search.strategy.local.LocalSearch;

/**
 * Local search with OptaPlanner (see {@link LocalSearch}), started from the smallest critical prefix of a ranking
 * (single lesions on the search part, or one given), or from all regions when no prefix is critical.
 */
public final class LocalStrategy implements Strategy {
    private final LocalSearch.Settings settings;
    private final Ranking given;

    /** A local search with {@code settings}, started from {@code ranking}'s critical prefix (single lesions when null). */
    public LocalStrategy(LocalSearch.Settings settings, Ranking ranking) {
        this.settings = settings;
        this.given = ranking;
    }

    @Override
    public String name() {
        return "local";
    }

    @Override
    public String settings() {
        return settings.describe() + ", start=" + (given == null ? SingleLesion.SOURCE : "given") + " prefix";
    }

    @Override
    public void run(SearchContext ctx) {
        Ranking r = given == null ? SingleLesion.rank(ctx) : given;
        List<RegionSet> prefixes = new ArrayList<>();
        for (RegionSet atlasSet : r.prefixes(ctx.session().cohort().atlas())) {
            prefixes.add(ctx.session().toInputs(atlasSet));
        }
        CriticalPrefix.Result p = CriticalPrefix.find(ctx, prefixes);
        RegionSet start = p.length() > 0 ? p.set() : RegionSet.all(ctx.regions());
        try {
            LocalSearch.run(ctx, start, settings);
        } catch (RuntimeException e) {
            for (Throwable c = e; c != null; c = c.getCause()) {
                if (c instanceof StopSearch s) {
                    throw s;
                }
            }
            throw e;
        }
    }
}
