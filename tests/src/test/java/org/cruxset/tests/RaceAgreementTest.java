package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.Budget;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.stats.Binomial;
import org.junit.jupiter.api.Test;

/**
 * Raced "critical or not" verdicts on the demo agree with the verdicts of the whole search part: overall, and on sets
 * whose full-part accuracy lies within 2 points of the criterion's threshold, where the empirical error rate must stay
 * within alpha up to its one-sided 95% binomial sampling margin.
 */
class RaceAgreementTest {
    static final double ALPHA = 0.01;

    @Test
    void racedVerdictsAgreeWithTheWholeSearchPartOnTheDemo() {
        try (Decoder decoder = OnnxModels.load(DemoData.MODEL, OnnxOptions.defaults());
             ScoringSession session = ScoringSession.open(decoder, CohortFiles.read(DemoData.COHORT),
                     new ScoringSession.Settings(LesionMode.ZERO, 0, null, CollapseCriterion.defaults(),
                             Double.POSITIVE_INFINITY, 2, null, "test", "race agreement", 1, Parts.DEFAULT_SEED,
                             Parts.DEFAULT_CONFIRM))) {
            agreement("demo", decoder, session);
        }
    }

    @Test
    void racedVerdictsAgreeWithTheWholeSearchPartOnTheSearchBenchmark() {
        org.cruxset.search.bench.PlantedProblem p = new org.cruxset.search.bench.PlantedProblem(
                org.cruxset.search.bench.PlantedProblem.benchmark(), 1);
        try (Decoder decoder = p.decoder();
             ScoringSession session = ScoringSession.open(decoder, p.cohort(),
                     new ScoringSession.Settings(LesionMode.ZERO, 0, null, CollapseCriterion.defaults(),
                             Double.POSITIVE_INFINITY, 2, null, "test", "race agreement", 1, Parts.DEFAULT_SEED,
                             Parts.DEFAULT_CONFIRM))) {
            agreement("search benchmark", decoder, session);
        }
    }

    /**
     * Scores random sets whole (of every size, then more of the sizes whose accuracy lies near the threshold, until
     * 500 are within 2 points of it), races the same sets on a fresh scorer, and compares the verdicts.
     */
    private static void agreement(String what, Decoder decoder, ScoringSession session) {
        ScoringSession.Part part = session.search();
        int n = part.inputs().size();
        int regions = part.inputs().batch().regions();
        int threshold = part.criterion().criticalCount(n, part.intact().score().chance(), part.intact().score());
        LesionScorer full = part.scorer();
        SplittableRandom rng = new SplittableRandom(41);
        List<RegionSet> sets = new ArrayList<>();
        List<Integer> counts = new ArrayList<>();
        int near = 0;
        int[] nearBySize = new int[regions + 1];
        int margin = (int) Math.floor(0.02 * n);
        for (int round = 0; round < 60 && near < 520; round++) {
            List<RegionSet> batch = new ArrayList<>();
            for (int i = 0; i < 200; i++) {
                int size = round < 3 ? 1 + rng.nextInt(regions) : nearSize(nearBySize, rng, regions);
                batch.add(randomSet(rng, regions, size));
            }
            for (LesionScorer.Scored s : full.score(batch)) {
                sets.add(s.set());
                counts.add(s.score().correct());
                if (Math.abs(s.score().correct() - threshold) <= margin) {
                    near++;
                    nearBySize[s.set().size()]++;
                }
            }
        }
        LesionScorer raced = new LesionScorer(decoder, part.inputs(), LesionMode.ZERO, 0, full.fill(), null, null,
                Budget.unlimited(0), 1.0, 2, p -> "r" + p);
        List<LesionScorer.Raced> verdicts = raced.raceWithinBudget(sets, threshold,
                LesionScorer.Racing.defaults(7, n), 0);
        int agree = 0;
        int nearDecisions = 0;
        int nearErrors = 0;
        long used = 0;
        java.util.Set<RegionSet> seen = new java.util.HashSet<>();
        for (int i = 0; i < sets.size(); i++) {
            boolean truth = counts.get(i) <= threshold;
            boolean ok = verdicts.get(i).atMost() == truth;
            agree += ok ? 1 : 0;
            if (Math.abs(counts.get(i) - threshold) <= margin) {
                nearDecisions++;
                nearErrors += ok ? 0 : 1;
            }
            if (seen.add(sets.get(i))) {
                used += verdicts.get(i).samples();
            }
        }
        double rate = (double) agree / sets.size();
        double nearRate = (double) nearErrors / nearDecisions;
        // The one-sided 95% sampling margin of an error rate alpha over this many decisions (normal approximation of
        // the binomial, common practice).
        double allowed = ALPHA + Binomial.Z95 * Math.sqrt(ALPHA * (1 - ALPHA) / nearDecisions);
        System.out.printf("%s race: %d sets, %d samples, threshold %d correct; agreement %.4f; %d decisions within 2 "
                        + "points of the threshold, %d wrong (%.4f, allowed %.4f); sample-evaluations %.1f%% of scoring "
                        + "every set whole%n", what, sets.size(), n, threshold, rate, nearDecisions, nearErrors,
                nearRate, allowed, 100.0 * used / ((double) n * seen.size()));
        assertTrue(rate >= 0.99, what + ": agreement " + rate);
        assertTrue(nearDecisions >= 500, what + ": near-threshold decisions " + nearDecisions);
        assertTrue(nearRate <= allowed, what + ": near-threshold error rate " + nearRate + " above " + allowed);
    }

    /** A size drawn in proportion to how many near-threshold sets each size gave so far (any size when none did). */
    private static int nearSize(int[] nearBySize, SplittableRandom rng, int regions) {
        int total = 0;
        for (int c : nearBySize) {
            total += c;
        }
        if (total == 0) {
            return 1 + rng.nextInt(regions);
        }
        int pick = rng.nextInt(total);
        for (int s = 0; s < nearBySize.length; s++) {
            pick -= nearBySize[s];
            if (pick < 0) {
                return s;
            }
        }
        return regions;
    }

    private static RegionSet randomSet(SplittableRandom rng, int regions, int size) {
        int[] pool = new int[regions];
        for (int i = 0; i < regions; i++) {
            pool[i] = i;
        }
        int[] chosen = new int[size];
        for (int k = 0; k < size; k++) {
            int j = k + rng.nextInt(regions - k);
            int t = pool[k];
            pool[k] = pool[j];
            pool[j] = t;
            chosen[k] = pool[k];
        }
        return RegionSet.of(regions, chosen);
    }
}
