package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** cruxset search on the demo: against the decoder's own truth, confirmed, and resumed after kill -9. */
class SearchCommandTest {
    static List<String> args(Path out, String... more) {
        List<String> a = new ArrayList<>(List.of("search", "--model", DemoData.MODEL.toString(), "--cohort",
                DemoData.COHORT.toString(), "--out", out.toString(), "--threads", "1"));
        a.addAll(List.of(more));
        return a;
    }

    /** The best critical size printed, or -1. */
    static int bestSize(String out) {
        Matcher m = Pattern.compile("Smallest critical sets found: size ([0-9]+)").matcher(out);
        return m.find() ? Integer.parseInt(m.group(1)) : -1;
    }

    /** The lines of the reported sets' table and of the front. */
    static List<String> results(String out) {
        List<String> rows = new ArrayList<>();
        boolean in = false;
        for (String line : out.split("\n")) {
            if (line.startsWith("#  regions") || line.startsWith("size  accuracy")) {
                in = true;
            } else if (in && (line.isBlank() || line.startsWith("Core") || line.startsWith("Results"))) {
                in = false;
            }
            if (in) {
                rows.add(line.strip());
            }
        }
        return rows;
    }

    // Must show: grow+prune finds a critical set no larger than the smallest in the decoder's own truth on the search
    // part, and says whether it is confirmed on the confirmation part.
    @Test
    void growThenPruneMatchesTheDecodersOwnTruthAndIsConfirmed(@TempDir Path out) {
        int truth = TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0).size();
        CruxsetCommand.Captured r = Cli.run(args(out, "--strategy", "grow", "--budget", "3000", "--seed", "7").toArray(String[]::new))
                .requireSuccess();
        int best = bestSize(r.out());
        assertTrue(best > 0 && best <= truth, "best " + best + ", truth " + truth + ":\n" + r.out());
        String first = r.out().lines().filter(l -> l.startsWith("1  ")).findFirst().orElseThrow();
        assertTrue(first.contains("CRITICAL") && first.endsWith("irreducible"), first);
        assertTrue(first.matches(".*CRITICAL.*(CRITICAL|not confirmed).*"), "the confirmation verdict is shown: " + first);
        assertTrue(r.out().contains("Stopped: finished"), r.out());
        assertTrue(r.out().contains("Front (best set found at each size where no smaller set scored as low"), r.out());
        CruxsetCommand.Captured export = Cli.run("export", "--out", out.toString()).requireSuccess();
        assertTrue(export.out().contains("Wrote TSV views"), export.out());
        assertTrue(Files.exists(out.resolve("export").resolve("search_trace.tsv")));
    }

    @Test
    void rankedReportsTheSmallestCriticalPrefixAndBadOptionsAreClearErrors(@TempDir Path out) {
        CruxsetCommand.Captured r = Cli.run(args(out, "--strategy", "ranked", "--budget", "1000").toArray(String[]::new)).requireSuccess();
        assertTrue(r.out().contains("Ranking: smallest critical prefix"), r.out());
        Path file = out.resolve("ranking-single-lesion.tsv");
        assertTrue(r.out().contains("Single-lesion ranking written to " + file), r.out());
        CruxsetCommand.Captured again = Cli.run(args(out.resolve("again"), "--strategy", "ranked", "--ranking", file.toString(),
                "--budget", "1000").toArray(String[]::new)).requireSuccess();
        assertEquals(bestSize(r.out()), bestSize(again.out()), "the written ranking gives the same result:\n"
                + again.out());
        CruxsetCommand.Captured bad = Cli.run(args(out, "--strategy", "annealing").toArray(String[]::new));
        assertEquals(2, bad.exit(), bad.err());
        assertTrue(bad.err().contains("--strategy must be grow, ranked, prune, exhaustive, random, genetic, local or surrogate"), bad.err());
        CruxsetCommand.Captured budget = Cli.run(args(out, "--budget", "0").toArray(String[]::new));
        assertEquals(2, budget.exit(), budget.err());
        assertTrue(budget.err().contains("--budget must be at least 1"), budget.err());
    }

    @Test
    void geneticTakesItsSettingsFromAYamlConfigAndFindsTheTruthsSize(@TempDir Path out) throws Exception {
        Path cfg = out.resolve("search.yaml");
        Files.writeString(cfg, "genetic:\n  population: 40\n  patience: 30\n");
        CruxsetCommand.Captured r = Cli.run(args(out.resolve("run"), "--strategy", "genetic", "--config", cfg.toString(), "--budget",
                "4000", "--seed", "2").toArray(String[]::new)).requireSuccess();
        assertTrue(r.out().contains("population=40") && r.out().contains("patience=30"), r.out());
        int truth = TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0).size();
        int best = bestSize(r.out());
        assertTrue(best > 0 && best <= truth, "best " + best + ", truth " + truth + ":\n" + r.out());
        String first = r.out().lines().filter(l -> l.startsWith("1  ")).findFirst().orElseThrow();
        assertTrue(first.matches(".*CRITICAL.*(CRITICAL|not confirmed).*irreducible"), first);
        assertTrue(r.out().contains("Front hypervolume"), r.out());
        Files.writeString(cfg, "genetic:\n  populace: 40\n");
        CruxsetCommand.Captured bad = Cli.run(args(out.resolve("bad"), "--strategy", "genetic", "--config", cfg.toString())
                .toArray(String[]::new));
        assertEquals(2, bad.exit(), bad.err());
        assertTrue(bad.err().contains(cfg.toString()) && bad.err().contains("populace"), bad.err());
    }

    @Test
    void aBudgetTooSmallStopsWithWhatWasFoundAndSaysSo(@TempDir Path out) {
        CruxsetCommand.Captured r = Cli.run(args(out, "--strategy", "grow", "--budget", "150").toArray(String[]::new)).requireSuccess();
        assertTrue(r.out().contains("Stopped: budget (the budget of 150 scored sets is spent)"), r.out());
        assertTrue(r.out().contains("Scored sets charged: 150 of 150"), r.out());
        assertTrue(r.out().contains("No critical set was found"), r.out());
    }

    private static List<String> trace(Path db) throws SQLException {
        List<String> rows = new ArrayList<>();
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             Statement st = c.createStatement();
             ResultSet rs = st.executeQuery("SELECT t.position, t.sets_charged, t.set_size, t.critical, e.set_hex FROM "
                     + "search_trace t JOIN evaluations e ON e.id = t.evaluation_id ORDER BY t.position")) {
            while (rs.next()) {
                rows.add(rs.getInt(1) + " " + rs.getDouble(2) + " " + rs.getInt(3) + " " + rs.getInt(4) + " "
                        + rs.getString(5));
            }
        }
        return rows;
    }

    // Must show: kill -9 mid-search, rerun the same command: the same final sets, each set paid once.
    @org.junit.jupiter.params.ParameterizedTest
    @org.junit.jupiter.params.provider.ValueSource(strings = {"grow", "genetic", "local"})
    void aSearchKilledMidWayResumesToTheSameResultPayingEachSetOnce(String strategy, @TempDir Path dir)
            throws Exception {
        Path killed = dir.resolve("killed");
        Path db = killed.resolve("results.sqlite");
        String[] more = {"--strategy", strategy, "--budget", "2500", "--seed", "3"};
        // Raced sets are paid in run_partials until they are scored whole: count both.
        Killed.runAndKill(dir, args(killed, more), db,
                "SELECT (SELECT COUNT(*) FROM run_evaluations) + (SELECT COUNT(*) FROM run_partials)", 160);

        CruxsetCommand.Captured resumed = Cli.run(args(killed, more).toArray(String[]::new)).requireSuccess();
        assertTrue(resumed.out().contains("Resuming an earlier run of this command"), resumed.out());
        CruxsetCommand.Captured clean = Cli.run(args(dir.resolve("clean"), more).toArray(String[]::new)).requireSuccess();
        assertEquals(results(clean.out()), results(resumed.out()), "the same final sets and front");
        Path cleanDb = dir.resolve("clean").resolve("results.sqlite");
        assertEquals(trace(cleanDb), trace(db), "the same anytime trace");
        assertEquals(Killed.count(cleanDb, "SELECT total(cost) FROM run_evaluations"),
                Killed.count(db, "SELECT total(cost) FROM run_evaluations"), "the same sets charged");
        // No sample scored twice for the same set: the raced samples paid (and their cost) match the clean run's.
        assertEquals(Killed.count(cleanDb, "SELECT total(samples_paid) FROM run_partials"),
                Killed.count(db, "SELECT total(samples_paid) FROM run_partials"), "the same raced samples paid");
        assertEquals(Killed.count(cleanDb, "SELECT CAST(round(total(cost) * 1e6) AS INTEGER) FROM run_partials"),
                Killed.count(db, "SELECT CAST(round(total(cost) * 1e6) AS INTEGER) FROM run_partials"), "the same raced charges");
        assertEquals(Killed.count(cleanDb, "SELECT total(samples_done) FROM partial_evaluations"),
                Killed.count(db, "SELECT total(samples_done) FROM partial_evaluations"), "the same samples scored");
        assertEquals(Killed.count(db, "SELECT COUNT(*) FROM evaluations"), Killed.count(db, "SELECT COUNT(*) FROM run_evaluations"),
                "each evaluation linked to the run once");
        assertEquals(1, Killed.count(db, "SELECT COUNT(*) FROM runs"));
        assertEquals(Killed.count(cleanDb, "SELECT COUNT(*) FROM certificates"),
                Killed.count(db, "SELECT COUNT(*) FROM certificates"), "certificates recorded once");
    }

    @Test
    void surrogateAndScreenedSearchesFindTheDemosMinimumAndAccountForTheirFits(@TempDir Path out) throws Exception {
        int minimum = TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0).size();
        CruxsetCommand.Captured s = Cli.run(args(out.resolve("s"), "--strategy", "surrogate", "--budget", "600", "--seed", "3")
                .toArray(String[]::new)).requireSuccess();
        assertEquals(minimum, bestSize(s.out()), s.out());
        assertTrue(s.out().contains("Surrogate search space: "), s.out());
        assertTrue(s.out().matches("(?s).*Surrogate model: \\d+ fits in .*"), s.out());
        assertTrue(s.out().contains("held-out R² median"), s.out());
        assertTrue(s.out().contains("Accounting: decoder "), s.out());
        CruxsetCommand.Captured g = Cli.run(args(out.resolve("g"), "--strategy", "genetic", "--screen", "--budget", "1500", "--seed",
                "3").toArray(String[]::new)).requireSuccess();
        assertEquals(minimum, bestSize(g.out()), g.out());
        Matcher m = Pattern.compile("(\\d+) candidates, (\\d+) skipped without a decoder call").matcher(g.out());
        assertTrue(m.find(), g.out());
        long skipped = Long.parseLong(m.group(2));
        assertTrue(skipped > 0, g.out());
        assertTrue(g.out().contains("false-skip rate"), g.out());
        Path db = out.resolve("g").resolve("results.sqlite");
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             Statement st = c.createStatement();
             ResultSet r = st.executeQuery("SELECT count(*), sum(spot_checked) FROM search_skips")) {
            r.next();
            assertEquals(skipped, r.getLong(1), "every skip is logged");
            assertTrue(r.getLong(2) > 0, "some skips were spot-checked");
        }
        Cli.run("export", "--out", out.resolve("g").toString()).requireSuccess();
        List<String> skips = Files.readAllLines(out.resolve("g").resolve("export").resolve("search_skips.tsv"));
        assertEquals(skipped + 1, skips.size(), "the export holds the skip log with its header");
        assertTrue(skips.get(0).startsWith("run_id\tposition\tset_hex"), skips.get(0));
        CruxsetCommand.Captured bad = Cli.run(args(out.resolve("b"), "--strategy", "grow", "--screen").toArray(String[]::new));
        assertEquals(2, bad.exit(), bad.err());
        assertTrue(bad.err().contains("--screen works with --strategy genetic or local"), bad.err());
    }
}
