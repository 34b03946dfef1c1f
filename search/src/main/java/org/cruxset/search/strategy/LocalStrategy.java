package org.cruxset.search.strategy;

import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.StopSearch;
import org.cruxset.search.Strategy;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.SingleLesion;
import org.cruxset.search.strategy.local.LocalSearch;

/**
 * Local search with OptaPlanner (see {@link LocalSearch}), started from a critical superset: the first
 * {@code startFactor} × k regions of a ranking (single lesions on the search part, or one given), where k is the
 * length of its smallest critical prefix; all regions when no prefix is critical. Starting above the smallest
 * critical prefix leaves regions the ranking placed late in the set, so the search can remove the ranking's early
 * regions instead when they turn out to be replaceable (a greedy path's trap).
 */
public final class LocalStrategy implements Strategy {
    private final LocalSearch.Settings settings;
    private final Ranking given;
    private final SurrogateScreen screen;

    /** A local search with {@code settings}, started above {@code ranking}'s critical prefix (single lesions when null). */
    public LocalStrategy(LocalSearch.Settings settings, Ranking ranking) {
        this(settings, ranking, null);
    }

    /** As above, each step's neighbourhood passing through {@code screen} (null: every set scored). */
    public LocalStrategy(LocalSearch.Settings settings, Ranking ranking, SurrogateScreen screen) {
        this.settings = settings;
        this.given = ranking;
        this.screen = screen;
    }

    /** The screen, or null. */
    public SurrogateScreen screen() {
        return screen;
    }

    @Override
    public java.util.List<String> notes() {
        return screen == null ? java.util.List.of() : screen.notes();
    }

    @Override
    public String name() {
        return "local";
    }

    @Override
    public String settings() {
        return settings.describe() + ", ranking=" + (given == null ? SingleLesion.SOURCE : "given")
                + (screen == null ? "" : ", " + screen.describe());
    }

    @Override
    public void run(SearchContext ctx) {
        RankedPool pool = RankedPool.of(ctx, given, settings.pool(), settings.focus());
        RegionSet superset = pool.criticalSuperset(ctx, settings.startFactor());
        RegionSet start = superset != null ? superset : RegionSet.all(ctx.regions());
        try {
            LocalSearch.run(ctx, start, pool, settings, screen);
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
