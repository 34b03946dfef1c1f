package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.bench.SearchSuite;
import org.cruxset.search.strategy.GrowStrategy;
import org.cruxset.search.strategy.RankedStrategy;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** On the search benchmark (N = 300, proven minimum 12): traps are real, and grow+prune beats random. */
class TrapsTest {
    static final List<Long> SEEDS = List.of(1L, 2L, 3L, 4L, 5L);
    static final long BUDGET = 6000;

    private static boolean containsAll(RegionSet big, RegionSet small) {
        for (int p : small.positions()) {
            if (!big.contains(p)) {
                return false;
            }
        }
        return true;
    }

    @Test
    void plainGrowFallsIntoANamedTrapOnSomeSeed(@TempDir Path dir) {
        PlantedProblem.Config cfg = PlantedProblem.benchmark();
        List<String> trapped = new ArrayList<>();
        int i = 0;
        for (long seed : SEEDS) {
            PlantedProblem p = new PlantedProblem(cfg, seed);
            try (ScoringSession s = Planted.session(p, BUDGET, dir.resolve("g" + i++), "grow")) {
                SearchRun.Result r = Planted.run(s, new GrowStrategy(false, false), seed, false);
                PlantedProblem.Proof proof = p.proof(PlantedProblem.ids(s.inputs().batch()), s.settings().criterion());
                assertTrue(proof.holds(), "seed " + seed + ": " + proof);
                RegionSet found = r.reported().get(0).set();
                for (RegionSet trap : p.traps()) {
                    if (containsAll(found, trap)) {
                        assertTrue(proof.trapCritical() && proof.trapInclusionMinimal(), "the named trap is an "
                                + "inclusion-minimal critical set: " + proof);
                        assertTrue(trap.size() >= 14 && trap.size() <= 16, "trap of " + trap.size());
                        trapped.add("seed " + seed + ": " + found.size() + " regions ⊇ trap " + trap);
                    }
                }
            }
        }
        assertTrue(!trapped.isEmpty(), "on at least one seed plain grow returns a superset of a named trap");
    }

    // The must-show at CI size: grow+prune beats random at equal budget on success rate and median best size.
    @Test
    void growThenPruneBeatsRandomAtEqualBudget(@TempDir Path dir) {
        List<SearchSuite.Row> rows = SearchSuite.run(PlantedProblem.benchmark(), SearchConfig.defaults(),
                List.of("random", "grow+prune"), List.of(BUDGET), SEEDS, dir, null);
        SearchSuite.Row random = rows.get(0);
        SearchSuite.Row grow = rows.get(1);
        assertEquals(SEEDS.size(), grow.runs());
        assertTrue(grow.successes() > random.successes(), "success rate: grow+prune " + grow.successes() + "/"
                + grow.runs() + ", random " + random.successes() + "/" + random.runs());
        assertTrue(grow.medianBest() < random.medianBest(), "median best size: grow+prune " + grow.medianBest()
                + ", random " + random.medianBest());
    }

    // The must-show of the genetic and local strategies at CI size (20 seeds with -Plong): at 20,000 scored sets each
    // reaches the proven minimum on at least 90% of the seeds (here all five), beats random, and is more successful than
    // grow+prune, which falls into a trap on some of these seeds.
    @Test
    void geneticAndLocalReachTheMinimumWhereGrowThenPruneIsTrapped(@TempDir Path dir) {
        List<SearchSuite.Row> rows = SearchSuite.run(PlantedProblem.benchmark(), SearchConfig.defaults(),
                List.of("grow+prune", "genetic", "local"), List.of(20_000L), SEEDS, dir, null);
        SearchSuite.Row grow = rows.get(0);
        for (SearchSuite.Row r : rows.subList(1, 3)) {
            assertEquals(SEEDS.size(), r.successes(), r.strategy() + " reaches 12 on every seed: " + r);
            assertTrue(r.successes() > grow.successes(), r + " vs " + grow);
            assertEquals(12.0, r.medianBest(), "random's median best size is above 100 at this budget: " + r);
        }
    }

    // A redundancy case: the single-lesion ranking puts both members of each synergistic pair first (each alone kills
    // a block), so its smallest critical prefix holds regions that are redundant given each other; search finds 12.
    @Test
    void theSingleLesionPrefixIsLargerThanTheMinimumWhileSearchFindsIt(@TempDir Path dir) {
        long seed = 4;
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), seed);
        RankedStrategy ranked = new RankedStrategy(null);
        try (ScoringSession s = Planted.session(p, BUDGET, dir.resolve("ranked"), "ranked")) {
            Planted.run(s, ranked, seed, false);
        }
        int prefix = ranked.prefix().length();
        assertTrue(prefix > p.minimumSize(), "the raw prefix has " + prefix + " regions, more than the minimum "
                + p.minimumSize());
        try (ScoringSession s = Planted.session(p, BUDGET, dir.resolve("grow"), "grow")) {
            SearchRun.Result r = Planted.run(s, new GrowStrategy(false, false), seed, true);
            assertEquals(p.minimumSize(), r.bestSize());
            assertTrue(p.minimumSets().contains(r.reported().get(0).set()));
        }
    }
}
