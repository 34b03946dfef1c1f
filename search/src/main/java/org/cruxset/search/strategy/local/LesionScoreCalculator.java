package org.cruxset.search.strategy.local;

import org.optaplanner.core.api.score.buildin.hardsoftlong.HardSoftLongScore;
import org.optaplanner.core.api.score.calculator.EasyScoreCalculator;

/** Reads a plan's graded score from its step's scored neighbourhood. */
public final class LesionScoreCalculator implements EasyScoreCalculator<LesionPlan, HardSoftLongScore> {
    @Override
    public HardSoftLongScore calculateScore(LesionPlan plan) {
        return plan.neighbourhood().score(plan);
    }
}
