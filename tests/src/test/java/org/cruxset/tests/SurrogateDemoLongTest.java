package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.function.Supplier;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.search.SearchConfig;
import org.cruxset.search.SearchRun;
import org.cruxset.search.Strategy;
import org.cruxset.search.strategy.GeneticStrategy;
import org.cruxset.search.strategy.SurrogateScreen;
import org.cruxset.search.strategy.SurrogateStrategy;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The surrogate comparison on the demo (mvn -Plong): over 10 seeds, every run in a fresh store, with the command
 * line's defaults (racing on, budget 3,000 scored sets), the scored sets until {@code surrogate} and screened
 * {@code genetic} first reach plain genetic's best critical size (median, paired by seed; never reaching it counts as
 * infinite). Each must need at most half of plain genetic's. Plain genetic reaches the demo's minimum (4 regions)
 * after about 300 scored sets, 110 of them the single-lesion ranking and the critical prefix that all three share; the
 * screen trains on those 110 from its first batch and skips candidates larger than a critical set already scored
 * (under racing a critical set is always scored whole, so these are the dearest). Prints the per-seed figures.
 */
@Tag("long")
class SurrogateDemoLongTest {
    static final int SEEDS = 10;
    static final double BUDGET = 3000;

    record Outcome(int best, double chargedAtBest) {
    }

    static Outcome run(Path dir, Cohort cohort, Strategy strategy, long seed) {
        try (Decoder decoder = OnnxModels.load(DemoData.MODEL, OnnxOptions.defaults());
             ScoringSession session = ScoringSession.open(decoder, cohort, new ScoringSession.Settings(LesionMode.ZERO,
                     0, null, CollapseCriterion.defaults(), BUDGET, 2, dir, "test", "demo surrogate " + seed, seed,
                     Parts.DEFAULT_SEED, Parts.DEFAULT_CONFIRM))) {
            SearchRun.Result r = SearchRun.run(session, strategy, new SearchRun.Settings(Double.POSITIVE_INFINITY, null,
                    seed, true, 20, SearchRun.Settings.DEFAULT_RESERVE, true), null);
            return new Outcome(r.bestSize(), r.chargedAtBest());
        }
    }

    static double median(double[] v) {
        double[] x = v.clone();
        Arrays.sort(x);
        int n = x.length;
        return n % 2 == 1 ? x[n / 2] : (x[n / 2 - 1] + x[n / 2]) / 2;
    }

    @Test
    void surrogateNeedsAtMostHalfOfGeneticsScoredSetsOnTheDemo(@TempDir Path dir) {
        Cohort cohort = CohortFiles.read(DemoData.COHORT);
        SearchConfig config = SearchConfig.defaults();
        Map<String, Supplier<Strategy>> strategies = new LinkedHashMap<>();
        strategies.put("genetic", () -> new GeneticStrategy(config.genetic(), null));
        strategies.put("surrogate", () -> new SurrogateStrategy(config.surrogate(), null));
        strategies.put("genetic~screen", () -> new GeneticStrategy(config.genetic(), null,
                new SurrogateScreen(config.screen())));
        Map<String, List<Outcome>> outcomes = new LinkedHashMap<>();
        int k = 0;
        for (Map.Entry<String, Supplier<Strategy>> e : strategies.entrySet()) {
            List<Outcome> list = new ArrayList<>();
            for (long seed = 1; seed <= SEEDS; seed++) {
                list.add(run(dir.resolve("run-" + k++), cohort, e.getValue().get(), seed));
            }
            outcomes.put(e.getKey(), list);
            System.out.println(e.getKey() + ": " + list);
        }
        List<Outcome> genetic = outcomes.get("genetic");
        double[] base = genetic.stream().mapToDouble(Outcome::chargedAtBest).toArray();
        for (String s : List.of("surrogate", "genetic~screen")) {
            List<Outcome> mine = outcomes.get(s);
            double[] toBest = new double[SEEDS];
            for (int i = 0; i < SEEDS; i++) {
                Outcome g = genetic.get(i);
                Outcome m = mine.get(i);
                assertTrue(g.best() > 0, "genetic found a critical set on seed " + (i + 1));
                toBest[i] = m.best() > 0 && m.best() <= g.best() ? m.chargedAtBest() : Double.POSITIVE_INFINITY;
            }
            System.out.printf("%s: scored sets until genetic's best size, median %.1f vs %.1f (ratio %.2f); per seed "
                    + "%s vs %s%n", s, median(toBest), median(base), median(toBest) / median(base),
                    Arrays.toString(toBest), Arrays.toString(base));
            assertTrue(median(toBest) <= 0.5 * median(base), s + ": median " + median(toBest) + " vs genetic's "
                    + median(base));
        }
    }
}
