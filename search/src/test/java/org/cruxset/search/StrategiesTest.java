package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.function.ToDoubleFunction;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.rank.CriticalPrefix;
import org.cruxset.search.strategy.GrowStrategy;
import org.cruxset.search.strategy.RandomStrategy;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Budgets met exactly, same seed same result, time limits, lazy greedy's departure, and non-monotone prefixes. */
class StrategiesTest {
    private static ScoringSession table(ToDoubleFunction<RegionSet> f, int regions, double budget, Path dir) {
        return ScoringSession.open(new TableDecoder(regions, f, "table-" + f.hashCode()), TableDecoder.cohort(regions),
                new ScoringSession.Settings(LesionMode.ZERO, 0, null, CollapseCriterion.defaults(), budget, 1, dir, "test",
                        "table", 1, Parts.DEFAULT_SEED, Parts.DEFAULT_CONFIRM));
    }

    private static double runCost(Path dir) throws Exception {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + dir.resolve(ScoringSession.STORE_FILE));
             Statement st = c.createStatement();
             ResultSet r = st.executeQuery("SELECT total(cost) FROM run_evaluations")) {
            return r.getDouble(1);
        }
    }

    @Test
    void theBudgetIsMetExactlyAndTheStopIsSaid(@TempDir Path dir) throws Exception {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 2);
        try (ScoringSession s = Planted.session(p, 777, dir, "budget")) {
            SearchRun.Result r = Planted.run(s, new RandomStrategy(), 1, true);
            assertEquals("budget", r.status());
            assertTrue(r.stopMessage().contains("777"), r.stopMessage());
            assertEquals(777.0, r.charged(), 0.0);
        }
        assertEquals(777.0, runCost(dir), 0.0, "sets charged in the store, the intact set included");
    }

    @Test
    void sameSeedSameResultAndTrace(@TempDir Path dir) throws Exception {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 5);
        List<List<String>> traces = new ArrayList<>();
        List<List<RegionSet>> results = new ArrayList<>();
        for (String run : List.of("a", "b")) {
            Path d = dir.resolve(run);
            try (ScoringSession s = Planted.session(p, 2500, d, "same")) {
                SearchRun.Result r = Planted.run(s, new RandomStrategy(), 9, true);
                results.add(r.reported().stream().map(SearchRun.Reported::set).toList());
            }
            List<String> rows = new ArrayList<>();
            try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + d.resolve(ScoringSession.STORE_FILE));
                 Statement st = c.createStatement();
                 ResultSet rs = st.executeQuery("SELECT t.position, t.sets_charged, t.set_size, t.critical, e.set_hex"
                         + " FROM search_trace t JOIN evaluations e ON e.id = t.evaluation_id ORDER BY t.position")) {
                while (rs.next()) {
                    rows.add(rs.getInt(1) + " " + rs.getDouble(2) + " " + rs.getInt(3) + " " + rs.getInt(4) + " "
                            + rs.getString(5));
                }
            }
            traces.add(rows);
        }
        assertEquals(results.get(0), results.get(1));
        assertEquals(traces.get(0), traces.get(1));
        assertTrue(traces.get(0).size() > 5, "the trace records improvements: " + traces.get(0));
        try (ScoringSession s = Planted.session(p, 2500, dir.resolve("other-seed"), "same")) {
            SearchRun.Result other = Planted.run(s, new RandomStrategy(), 10, true);
            assertNotEquals(results.get(0), other.reported().stream().map(SearchRun.Reported::set).toList(),
                    "another seed draws other sets");
        }
    }

    @Test
    void aTimeLimitStopsTheSearchAndAResumeGetsOnlyTheTimeLeft(@TempDir Path dir) {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 1);
        SearchRun.Result r;
        try (ScoringSession s = Planted.session(p, Double.POSITIVE_INFINITY, dir, "timed")) {
            r = SearchRun.run(s, new RandomStrategy(), new SearchRun.Settings(0.5, null, 1, false, 1, 0), null);
            assertEquals("time", r.status());
            assertTrue(r.stopMessage().contains("time limit"), r.stopMessage());
            assertTrue(r.elapsedSeconds() >= 0.5, "ran its half second: " + r.elapsedSeconds());
        }
        try (ScoringSession s = Planted.session(p, Double.POSITIVE_INFINITY, dir, "timed")) {
            assertTrue(s.run().resumed());
            SearchRun.Result again = SearchRun.run(s, new RandomStrategy(), new SearchRun.Settings(0.5, null, 1, false,
                    1, 0), null);
            assertEquals("time", again.status());
            assertEquals(0, s.scorer().decodedCount(), "no time was left: the resumed run scores nothing new");
            assertEquals(r.bestSize(), again.bestSize(), "but it replays what it had found and reports it");
            assertEquals(r.charged(), again.charged());
            assertTrue(again.elapsedBeforeSeconds() >= 0.5, "it knows the time spent before");
        }
    }

    // Source: Minoux (1978) / Leskovec et al. (2007): lazy evaluation is exact under diminishing returns. Here r2's
    // gain grows once r0 is lesioned (synergy: 0 alone, 0.55 with r0), so after r0 plain greedy takes r2 and is done,
    // while lazy greedy trusts r2's stale gain of 0 and takes r3, then r1, before r2.
    @Test
    void lazyGreedyDepartsFromPlainGreedyWhenSynergyBreaksDiminishingReturns(@TempDir Path dir) {
        ToDoubleFunction<RegionSet> f = s -> {
            double p = 0.95;
            if (s.contains(0)) {
                p -= 0.30;
            }
            if (s.contains(1)) {
                p -= s.contains(0) ? 0.05 : 0.25;
            }
            if (s.contains(2)) {
                p -= s.contains(0) ? 0.55 : 0.0;
            }
            if (s.contains(3)) {
                p -= 0.20;
            }
            return Math.max(0.02, p);
        };
        List<RegionSet> plain;
        List<RegionSet> lazy;
        try (ScoringSession s = table(f, 6, Double.POSITIVE_INFINITY, dir.resolve("plain"))) {
            plain = Planted.run(s, new GrowStrategy(false, false), 1, false).reported().stream()
                    .map(SearchRun.Reported::set).toList();
        }
        try (ScoringSession s = table(f, 6, Double.POSITIVE_INFINITY, dir.resolve("lazy"))) {
            lazy = Planted.run(s, new GrowStrategy(false, true), 1, false).reported().stream()
                    .map(SearchRun.Reported::set).toList();
        }
        assertEquals(List.of(RegionSet.of(6, 0, 2)), plain, "plain greedy: r0, then r2 (its gain grew to 0.55)");
        assertEquals(List.of(RegionSet.of(6, 0, 1, 2, 3)), lazy, "lazy greedy: r0, r3, r1, then r2");
    }

    @Test
    void theCriticalPrefixIsVerifiedAndNonMonotoneStepsAreReported(@TempDir Path dir) {
        // Lesioning r0..r(k-1): critical at k = 2 and 3 (p below 1/4), but lesioning r3 too lifts p again (k = 4, 5).
        ToDoubleFunction<RegionSet> f = s -> {
            int k = s.size();
            boolean prefix = s.equals(RegionSet.all(8)) || s.positions().length == 0
                    || s.positions()[s.positions().length - 1] == k - 1;
            if (!prefix) {
                return 0.9;
            }
            return switch (k) {
                case 0 -> 0.9;
                case 1 -> 0.8;
                case 2, 3 -> 0.1;
                case 4, 5 -> 0.7;
                default -> 0.05;
            };
        };
        List<RegionSet> prefixes = new ArrayList<>();
        for (int k = 1; k <= 8; k++) {
            int[] pos = new int[k];
            for (int i = 0; i < k; i++) {
                pos[i] = i;
            }
            prefixes.add(RegionSet.of(8, pos));
        }
        try (ScoringSession s = table(f, 8, Double.POSITIVE_INFINITY, dir)) {
            SearchContext ctx = new SearchContext(s, 1, null, 0, Double.POSITIVE_INFINITY, null, null);
            CriticalPrefix.Result r = CriticalPrefix.find(ctx, prefixes);
            // the exponential phase scores 1, 2, 4 and 8 in one batch: 2 is the first critical one, 1 is not
            assertEquals(2, r.length());
            assertEquals(RegionSet.of(8, 0, 1), r.set());
            assertTrue(r.scored().stream().anyMatch(pt -> pt.length() == 1 && !pt.critical()), "verified: prefix 1 is "
                    + "not critical");
            assertTrue(r.nonMonotone().contains("prefix 2 is critical but the longer prefix 4 is not"),
                    r.nonMonotone().toString());
            assertTrue(r.nonMonotone().stream().anyMatch(n -> n.startsWith("accuracy rose from 0.000 at prefix 2")),
                    r.nonMonotone().toString());
            assertTrue(!r.monotoneAsSeen());
        }
    }
}
