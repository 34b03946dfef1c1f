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
import java.util.SplittableRandom;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** A scoring run killed with SIGKILL mid-way resumes with the same command, loses nothing and duplicates nothing. */
class KillResumeTest {
    private static final int SETS = 300;
    private static final int KILL_AT = 60;

    private static List<String> args(Path out) {
        List<String> a = new ArrayList<>(List.of("score", "--model", DemoData.MODEL.toString(), "--cohort",
                DemoData.COHORT.toString(), "--out", out.toString(), "--threads", "1", "--bootstrap", "0"));
        SplittableRandom rng = new SplittableRandom(42);
        for (int i = 0; i < SETS; i++) {
            a.add("--lesion");
            a.add((1 + rng.nextInt(100)) + "," + (1 + rng.nextInt(100)) + "," + (1 + rng.nextInt(100)));
        }
        return a;
    }

    @Test
    void killedRunResumesWithIdenticalResultsAndNoDuplicates(@TempDir Path dir) throws Exception {
        Path killed = dir.resolve("killed");
        Path db = killed.resolve("results.sqlite");
        long seen = Killed.runAndKill(dir, args(killed), db, "SELECT COUNT(*) FROM evaluations", KILL_AT);
        long afterKill = Killed.count(db, "SELECT COUNT(*) FROM evaluations");
        assertTrue(afterKill >= seen && afterKill < 2 * (SETS + 1), "rows after the kill (both parts): " + afterKill);

        CruxsetCommand.Captured resumed = Cli.run(args(killed).toArray(String[]::new)).requireSuccess();
        assertTrue(resumed.out().contains("already paid by this run"), resumed.out());
        CruxsetCommand.Captured clean = Cli.run(args(dir.resolve("clean")).toArray(String[]::new)).requireSuccess();

        assertEquals(tableOf(clean.out()), tableOf(resumed.out()), "resumed results equal an uninterrupted run's");
        long distinct = Killed.count(db, "SELECT COUNT(DISTINCT data_hash || set_hex) FROM evaluations");
        assertEquals(distinct, Killed.count(db, "SELECT COUNT(*) FROM evaluations"), "no duplicate evaluations");
        assertEquals(Killed.count(dir.resolve("clean").resolve("results.sqlite"), "SELECT COUNT(*) FROM evaluations"), distinct);
        assertEquals(1, Killed.count(db, "SELECT COUNT(*) FROM runs"), "the same command resumed the same run");
        assertEquals(distinct, Killed.count(db, "SELECT COUNT(*) FROM run_evaluations"), "each set linked once");
        long searchSets = Killed.count(db, "SELECT COUNT(*) FROM evaluations e JOIN runs r ON e.data_hash = r.data_hash");
        assertEquals(distinct / 2, searchSets, "half the evaluations are on the search part");
        assertEquals(searchSets, Killed.count(db, "SELECT CAST(total(cost) AS INTEGER) FROM run_evaluations"),
                "each search-part set paid once; confirmation scores are not charged");
        assertEquals("finished", stringOf(db, "SELECT status FROM runs"));
    }

    private static String stringOf(Path db, String sql) throws SQLException {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             Statement st = c.createStatement();
             ResultSet rs = st.executeQuery(sql)) {
            return rs.next() ? rs.getString(1) : null;
        }
    }

    /** The rows of every table (both parts). */
    private static List<String> tableOf(String out) {
        List<String> rows = new ArrayList<>();
        boolean in = false;
        for (String line : out.split("\n")) {
            if (line.startsWith("lesion ")) {
                in = true;
            } else if (in && line.isBlank()) {
                in = false;
            } else if (in) {
                rows.add(line);
            }
        }
        assertEquals(2 * (SETS + 1), rows.size(), "both parts' tables: " + out);
        return rows;
    }
}
