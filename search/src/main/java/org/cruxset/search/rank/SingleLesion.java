package org.cruxset.search.rank;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.Objective;
import org.cruxset.search.SearchContext;

/**
 * The single-lesion ranking: every region lesioned alone (one batch of N scored sets on the search part), ranked by
 * the score under its lesion, lowest mean true-class probability first (ties: lower accuracy, then model input
 * order). Values are the drop in mean true-class probability from the intact decoder.
 */
public final class SingleLesion {
    /** The source name written in ranking files. */
    public static final String SOURCE = "single-lesion";

    private SingleLesion() {
    }

    /** Scores every single-region lesion through {@code ctx} and ranks the regions. */
    public static Ranking rank(SearchContext ctx) {
        int n = ctx.regions();
        List<RegionSet> sets = new ArrayList<>(n);
        for (int p = 0; p < n; p++) {
            sets.add(RegionSet.of(n, p));
        }
        List<LesionScorer.Scored> scored = ctx.score(sets);
        List<Integer> order = new ArrayList<>();
        for (int p = 0; p < n; p++) {
            order.add(p);
        }
        order.sort(Comparator.<Integer, org.cruxset.scoring.eval.SetScore>comparing(p -> scored.get(p).score(),
                Objective.BETTER_BY_PROBABILITY).thenComparingInt(p -> p));
        Atlas atlas = ctx.session().cohort().atlas();
        int[] regionOf = ctx.session().inputs().regionOfInput();
        double intact = ctx.intact().meanTrueClassProbability();
        List<String> units = new ArrayList<>();
        List<Double> values = new ArrayList<>();
        List<String> sources = new ArrayList<>();
        for (int p : order) {
            units.add(atlas.region(regionOf[p]).name());
            values.add(intact - scored.get(p).score().meanTrueClassProbability());
            sources.add(SOURCE);
        }
        return new Ranking(Ranking.Kind.REGIONS, units, values, sources, n == atlas.size(), "search",
                "drop in mean true-class probability when the region alone is lesioned");
    }
}
