package org.cruxset.search.strategy.local;

import java.util.ArrayList;
import java.util.Collection;
import java.util.List;
import org.optaplanner.core.api.score.director.ScoreDirector;
import org.optaplanner.core.impl.heuristic.move.AbstractMove;

/** Flips the lesion of one region, or of two at once (a swap: one lesioned region restored, one intact lesioned). */
final class FlipMove extends AbstractMove<LesionPlan> {
    private final List<RegionVar> flipped;

    FlipMove(List<RegionVar> flipped) {
        this.flipped = List.copyOf(flipped);
    }

    @Override
    public boolean isMoveDoable(ScoreDirector<LesionPlan> director) {
        return true;
    }

    @Override
    protected AbstractMove<LesionPlan> createUndoMove(ScoreDirector<LesionPlan> director) {
        return new FlipMove(flipped);
    }

    @Override
    protected void doMoveOnGenuineVariables(ScoreDirector<LesionPlan> director) {
        for (RegionVar v : flipped) {
            director.beforeVariableChanged(v, "lesioned");
            v.setLesioned(!Boolean.TRUE.equals(v.getLesioned()));
            director.afterVariableChanged(v, "lesioned");
        }
    }

    @Override
    public FlipMove rebase(ScoreDirector<LesionPlan> director) {
        List<RegionVar> out = new ArrayList<>();
        for (RegionVar v : flipped) {
            out.add(director.lookUpWorkingObject(v));
        }
        return new FlipMove(out);
    }

    @Override
    public Collection<? extends Object> getPlanningEntities() {
        return flipped;
    }

    @Override
    public Collection<? extends Object> getPlanningValues() {
        return List.of(Boolean.TRUE, Boolean.FALSE);
    }

    @Override
    public String toString() {
        return "flip " + flipped;
    }
}
