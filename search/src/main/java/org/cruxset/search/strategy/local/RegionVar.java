package org.cruxset.search.strategy.local;

import org.optaplanner.core.api.domain.entity.PlanningEntity;
import org.optaplanner.core.api.domain.variable.PlanningVariable;

/** A region as a planning entity: its model input position and whether it is lesioned. */
@PlanningEntity
public class RegionVar {
    private int position;

    @PlanningVariable(valueRangeProviderRefs = "lesioned")
    private Boolean lesioned;

    /** For the solver's cloning. */
    public RegionVar() {
    }

    RegionVar(int position, boolean lesioned) {
        this.position = position;
        this.lesioned = lesioned;
    }

    int position() {
        return position;
    }

    public Boolean getLesioned() {
        return lesioned;
    }

    public void setLesioned(Boolean lesioned) {
        this.lesioned = lesioned;
    }

    @Override
    public String toString() {
        return "r" + position + (Boolean.TRUE.equals(lesioned) ? "*" : "");
    }
}
