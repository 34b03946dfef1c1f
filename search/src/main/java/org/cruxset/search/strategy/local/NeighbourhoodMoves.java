package org.cruxset.search.strategy.local;

import java.util.List;
import org.optaplanner.core.impl.heuristic.selector.move.factory.MoveListFactory;

/** Hands the solver each step's neighbourhood, already scored as one batch. */
public final class NeighbourhoodMoves implements MoveListFactory<LesionPlan> {
    @Override
    public List<FlipMove> createMoveList(LesionPlan plan) {
        return plan.neighbourhood().moves(plan);
    }
}
