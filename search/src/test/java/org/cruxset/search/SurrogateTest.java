package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.function.Supplier;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.strategy.GeneticStrategy;
import org.cruxset.search.strategy.LocalStrategy;
import org.cruxset.search.strategy.SurrogateScreen;
import org.cruxset.search.strategy.SurrogateStrategy;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The surrogate strategy and the screen inside genetic: stopped part-way and resumed, a run ends exactly as an
 * uninterrupted one (fits, draws, skips and spot checks replay from the sets the store gives back in order), every
 * fit and skip is in the store, and no skipped set is ever reported.
 */
class SurrogateTest {
    /** Everything a run left in its store that must not depend on where it was interrupted. */
    record Trace(List<String> front, List<String> results, List<String> skips, List<String> fits) {
    }

    static Trace trace(Path db) throws SQLException {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db)) {
            return new Trace(
                    rows(c, "SELECT f.set_size || ':' || e.set_hex || ':' || f.critical FROM search_front f JOIN evaluations"
                            + " e ON e.id = f.evaluation_id ORDER BY f.set_size"),
                    rows(c, "SELECT r.rank || ':' || e.set_hex FROM search_results r JOIN evaluations e ON e.id = "
                            + "r.evaluation_id ORDER BY r.rank"),
                    rows(c, "SELECT position || ':' || set_hex || ':' || printf('%.9f', predicted) || ':' || spot_checked"
                            + " || ':' || coalesce(checked_critical, '-') FROM search_skips ORDER BY position"),
                    rows(c, "SELECT purpose || ':' || fit || ':' || training_sets || ':' || coalesce(next_sets, '-') "
                            + "|| ':' || coalesce(printf('%.9f', spearman), '-') FROM surrogate_fits ORDER BY purpose, fit"));
        }
    }

    static List<String> rows(Connection c, String sql) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Statement s = c.createStatement(); ResultSet r = s.executeQuery(sql)) {
            while (r.next()) {
                out.add(r.getString(1));
            }
        }
        return out;
    }

    /** Thrown from the progress listener: the run stops as if the process were killed between two batches. */
    static final class Killed extends RuntimeException {
        Killed() {
            super("killed");
        }
    }

    /**
     * Runs {@code strategy} once uninterrupted and once killed (an exception out of the progress listener, between
     * two batches) after {@code share} of the clean run's sets, then resumed; returns both stores' traces.
     */
    static Trace[] cleanAndResumed(Path dir, PlantedProblem p, double budget, Supplier<Strategy> strategy,
                                   double share) throws SQLException {
        SearchRun.Settings settings = new SearchRun.Settings(Double.POSITIVE_INFINITY, null, 2, true, 3,
                SearchRun.Settings.DEFAULT_RESERVE);
        SearchRun.Result clean;
        try (ScoringSession s = Planted.session(p, budget, dir.resolve("clean"), "surrogate test")) {
            clean = SearchRun.run(s, strategy.get(), settings, null);
            assertFalse(clean.reported().isEmpty(), "the clean run found a critical set");
        }
        double killAt = share * clean.charged();
        try (ScoringSession s = Planted.session(p, budget, dir.resolve("resumed"), "surrogate test")) {
            assertThrows(Killed.class, () -> SearchRun.run(s, strategy.get(), settings, ctx -> {
                if (ctx.charged() >= killAt) {
                    throw new Killed();
                }
            }));
        }
        SearchRun.Result resumed;
        try (ScoringSession s = Planted.session(p, budget, dir.resolve("resumed"), "surrogate test")) {
            assertTrue(s.run().resumed());
            resumed = SearchRun.run(s, strategy.get(), settings, null);
            assertTrue(s.scorer().replayedCount() > 0, "the resumed run replayed what it had paid for");
        }
        assertEquals(clean.bestSize(), resumed.bestSize());
        assertEquals(clean.charged(), resumed.charged(), 0.0, "each set paid once");
        return new Trace[] {trace(dir.resolve("clean").resolve(ScoringSession.STORE_FILE)),
            trace(dir.resolve("resumed").resolve(ScoringSession.STORE_FILE))};
    }

    @Test
    void surrogateSearchResumesToTheSameFitsAndSets(@TempDir Path dir) throws SQLException {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 4);
        Trace[] t = cleanAndResumed(dir, p, 1500, () -> new SurrogateStrategy(SurrogateStrategy.Settings.defaults(),
                null), 0.5);
        assertEquals(t[0], t[1], "an interrupted surrogate search replays to the same fits, sets and result");
        assertTrue(t[0].fits().size() >= 10, "fits recorded: " + t[0].fits().size());
        assertTrue(t[0].fits().get(0).startsWith("surrogate:1:"), t[0].fits().get(0));
        assertTrue(t[0].skips().isEmpty(), "the surrogate strategy skips nothing: it asks only for what it scores");
    }

    @Test
    void aLaterRunTrainsOnTheScoresOfEarlierRunsInTheStore(@TempDir Path dir) throws SQLException {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 4);
        SearchRun.Settings settings = new SearchRun.Settings(Double.POSITIVE_INFINITY, null, 2, false, 3, 0);
        try (ScoringSession s = Planted.session(p, 800, dir, "first")) {
            SearchRun.run(s, new SurrogateStrategy(SurrogateStrategy.Settings.defaults(), null), settings, null);
        }
        SurrogateStrategy second = new SurrogateStrategy(SurrogateStrategy.Settings.defaults(), null);
        try (ScoringSession s = Planted.session(p, 400, dir, "second")) {
            SearchRun.run(s, second, new SearchRun.Settings(Double.POSITIVE_INFINITY, null, 3, false, 3, 0), null);
        }
        String note = second.notes().get(0);
        java.util.regex.Matcher m = java.util.regex.Pattern.compile("; (\\d+) sets within it scored by earlier runs")
                .matcher(note);
        assertTrue(m.find(), note);
        int warm = Integer.parseInt(m.group(1));
        assertTrue(warm > 100, "the first run's sets in the space train the second: " + note);
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + dir.resolve(ScoringSession.STORE_FILE))) {
            List<String> first = rows(c, "SELECT training_sets FROM surrogate_fits WHERE fit = 1 ORDER BY run_id");
            assertEquals(2, first.size());
            assertTrue(Integer.parseInt(first.get(1)) >= warm, "the second run's first fit saw the earlier sets: "
                    + first);
        }
    }

    @Test
    void screenedGeneticResumesToTheSameSkipsAndNeverReportsASkippedSet(@TempDir Path dir) throws SQLException {
        PlantedProblem p = new PlantedProblem(PlantedProblem.benchmark(), 5);
        Trace[] t = cleanAndResumed(dir, p, 2500, () -> new GeneticStrategy(GeneticStrategy.Settings.defaults(), null,
                new SurrogateScreen(SurrogateScreen.Settings.defaults())), 0.5);
        assertEquals(t[0], t[1], "an interrupted screened search replays to the same skips, checks and result");
        List<String> skips = t[0].skips();
        assertTrue(skips.size() > 100, "the screen skipped candidates: " + skips.size());
        long checked = skips.stream().filter(s -> s.split(":")[3].equals("1")).count();
        assertTrue(checked > 0, "a share of the skips was spot-checked");
        for (String s : skips) {
            String[] f = s.split(":");
            assertEquals(f[3].equals("1"), !f[4].equals("-"), "a spot check has a verdict, a plain skip none: " + s);
        }
        // Reported sets are scored sets; a skipped, unchecked set is never among them.
        List<String> skippedSets = skips.stream().filter(s -> s.split(":")[3].equals("0")).map(s -> s.split(":")[1])
                .toList();
        for (String r : t[0].results()) {
            assertFalse(skippedSets.contains(r.split(":")[1]) && !scoredElsewhere(dir, r.split(":")[1]),
                    "a reported set was never scored: " + r);
        }
        assertNotNull(t[0].fits());
        // A dominated skip is larger than a critical set the run had scored, so larger than the smallest one found;
        // it is never spot-checked (it cannot be a loss).
        int smallest = t[0].front().stream().filter(f -> f.endsWith(":1")).mapToInt(f -> Integer.parseInt(
                f.split(":")[0])).filter(k -> k > 0).min().orElseThrow();
        List<String> dominated = storeRows(dir, "SELECT set_size || ':' || spot_checked FROM search_skips "
                + "WHERE reason LIKE 'dominated:%'");
        assertFalse(dominated.isEmpty(), "the screen skipped dominated candidates");
        for (String d : dominated) {
            assertTrue(Integer.parseInt(d.split(":")[0]) > smallest, "a dominated skip larger than " + smallest + ": "
                    + d);
            assertEquals("0", d.split(":")[1], "dominated skips are not spot-checked: " + d);
        }
    }

    @Test
    void onlyGeneticTakesTheDominatedSkip() {
        SearchConfig config = SearchConfig.defaults();
        assertTrue(((GeneticStrategy) StrategySpec.parse("genetic~screen").create(config)).screen().describe()
                .contains("dominated=true"));
        assertTrue(((LocalStrategy) StrategySpec.parse("local~screen").create(config)).screen().describe()
                .contains("dominated=false"), "local search needs the scores of sets larger than the best found");
    }

    static List<String> storeRows(Path dir, String sql) {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + dir.resolve("clean")
                .resolve(ScoringSession.STORE_FILE))) {
            return rows(c, sql);
        } catch (SQLException e) {
            throw new IllegalStateException(e);
        }
    }

    static boolean scoredElsewhere(Path dir, String hex) {
        return !storeRows(dir, "SELECT id FROM evaluations WHERE set_hex = '" + hex + "'").isEmpty();
    }
}
