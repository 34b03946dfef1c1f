package org.cruxset.search.strategy.local;

import org.optaplanner.core.api.score.buildin.hardmediumsoftlong.HardMediumSoftLongScore;
import org.optaplanner.core.api.score.calculator.EasyScoreCalculator;

/** Reads a plan's graded score from its step's scored neighbourhood. */
public final class LesionScoreCalculator implements EasyScoreCalculator<LesionPlan, HardMediumSoftLongScore> {
    @Override
    public HardMediumSoftLongScore calculateScore(LesionPlan plan) {
        return plan.neighbourhood().score(plan);
    }
}
