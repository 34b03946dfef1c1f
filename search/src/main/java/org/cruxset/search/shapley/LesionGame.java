package org.cruxset.search.shapley;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;

/**
 * The lesion game of a decoder: players are units (regions, or networks as groups of regions, as model-input
 * sets); {@code v(S)} is the score with the players in S intact and every other player lesioned, so v(all) is the
 * intact score and v(∅) the score with every player lesioned. The score is accuracy or the mean true-class
 * probability. Every coalition is scored through the search context (budget, store, replay); a redundant pair has a
 * negative interaction in this game and a synergistic pair a positive one.
 */
public final class LesionGame implements Game {
    /** Which score is the worth. */
    public enum Worth {
        ACCURACY, PROBABILITY;

        /** The spelling on the command line and in outputs. */
        public String label() {
            return this == ACCURACY ? "accuracy" : "probability";
        }
    }

    private final SearchContext ctx;
    private final List<RegionSet> units;
    private final Worth worth;
    private final RegionSet covered;

    /** The game of {@code units} (disjoint model-input sets) scored through {@code ctx}. */
    public LesionGame(SearchContext ctx, List<RegionSet> units, Worth worth) {
        this.ctx = ctx;
        this.units = List.copyOf(units);
        this.worth = worth;
        RegionSet all = ctx.empty();
        for (RegionSet u : this.units) {
            if (!all.intersect(u).isEmpty()) {
                throw new IllegalArgumentException("the players' regions must not overlap");
            }
            all = all.union(u);
        }
        this.covered = all;
    }

    @Override
    public int players() {
        return units.size();
    }

    /** The lesion set of a coalition: every region of the players outside it. */
    public RegionSet lesion(RegionSet coalition) {
        RegionSet out = covered;
        for (int p : coalition.positions()) {
            out = out.minus(units.get(p));
        }
        return out;
    }

    @Override
    public double[] worth(List<RegionSet> coalitions) {
        List<RegionSet> sets = new ArrayList<>(coalitions.size());
        for (RegionSet c : coalitions) {
            sets.add(lesion(c));
        }
        List<LesionScorer.Scored> scored = ctx.score(sets);
        double[] out = new double[scored.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = worth == Worth.ACCURACY ? scored.get(i).score().accuracy()
                    : scored.get(i).score().meanTrueClassProbability();
        }
        return out;
    }
}
