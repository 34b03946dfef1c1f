package org.cruxset.search.strategy.local;

import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;
import org.optaplanner.core.api.domain.solution.PlanningEntityCollectionProperty;
import org.optaplanner.core.api.domain.solution.PlanningScore;
import org.optaplanner.core.api.domain.solution.PlanningSolution;
import org.optaplanner.core.api.domain.valuerange.ValueRangeProvider;
import org.optaplanner.core.api.score.buildin.hardmediumsoftlong.HardMediumSoftLongScore;

/**
 * The local search's planning solution: one {@link RegionVar} per region (lesioned or not), the {@link Neighbourhood}
 * that scores each step's moves as one batch (shared by every clone), and the score.
 */
@PlanningSolution
public class LesionPlan {
    @PlanningEntityCollectionProperty
    private List<RegionVar> regions;

    @ValueRangeProvider(id = "lesioned")
    private List<Boolean> values = List.of(Boolean.FALSE, Boolean.TRUE);

    @PlanningScore
    private HardMediumSoftLongScore score;

    private Neighbourhood neighbourhood;

    /** For the solver's cloning. */
    public LesionPlan() {
    }

    LesionPlan(List<RegionVar> regions, Neighbourhood neighbourhood) {
        this.regions = regions;
        this.neighbourhood = neighbourhood;
    }

    public List<RegionVar> getRegions() {
        return regions;
    }

    public HardMediumSoftLongScore getScore() {
        return score;
    }

    public void setScore(HardMediumSoftLongScore score) {
        this.score = score;
    }

    Neighbourhood neighbourhood() {
        return neighbourhood;
    }

    /** The lesion set this plan stands for. */
    RegionSet set() {
        RegionSet s = RegionSet.empty(regions.size());
        for (RegionVar v : regions) {
            if (Boolean.TRUE.equals(v.getLesioned())) {
                s = s.with(v.position());
            }
        }
        return s;
    }
}
