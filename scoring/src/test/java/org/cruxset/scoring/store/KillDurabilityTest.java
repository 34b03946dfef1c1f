package org.cruxset.scoring.store;

import static org.cruxset.scoring.store.StoreFixtures.assertSameOutcomes;
import static org.cruxset.scoring.store.StoreFixtures.assertSameScore;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static org.junit.jupiter.api.Assertions.fail;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.cruxset.scoring.eval.Outcomes;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.sqlite.SQLiteConfig;

/**
 * Kills a writing process with SIGKILL and checks that every transaction it committed is in the store, whole, and
 * that resuming its run continues without paying twice.
 */
class KillDurabilityTest {
    private static final int TOTAL = 2000;
    private static final int KILL_AFTER = 300;
    private static final long WAIT_SECONDS = 60;
    private static final String RUN_KEY = "killed-search";

    @TempDir
    Path dir;

    /** One committed row as the parent saw it before the kill. */
    private record Row(long id, String setHex, int position, byte[] predicted, byte[] probabilities, double accuracy) {
    }

    @Test
    void committedRowsSurviveKill9AndTheRunResumes() throws Exception {
        Path db = dir.resolve("results.sqlite");
        Process child = start(db, TOTAL, 1);
        Map<Long, Row> seen;
        try {
            seen = waitForRows(db, child);
        } finally {
            child.destroyForcibly();
        }
        assertTrue(child.waitFor(WAIT_SECONDS, TimeUnit.SECONDS), "the killed child did not go away");
        assertNotEquals(0, child.exitValue(), "the child was killed, it did not finish");
        int before = seen.size();
        assertTrue(before >= KILL_AFTER, "rows seen before the kill: " + before);

        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db); Statement s = c.createStatement()) {
            try (ResultSet r = s.executeQuery("PRAGMA integrity_check")) {
                assertEquals("ok", r.getString(1));
            }
        }
        int atKill;
        try (ResultsStore store = ResultsStore.open(db)) {
            atKill = store.countEvaluations();
            assertTrue(atKill >= before && atKill < TOTAL, "evaluations after the kill: " + atKill + ", seen "
                    + before);
            Map<Long, Row> after = readRows(db);
            assertEquals(atKill, after.size(), "every evaluation is linked to the run exactly once");
            for (Row r : seen.values()) {
                Row now = after.get(r.id());
                assertTrue(now != null, "evaluation " + r.id() + " committed before the kill is gone");
                assertEquals(r.setHex(), now.setHex());
                assertEquals(r.position(), now.position());
                assertArrayEquals(r.predicted(), now.predicted());
                assertArrayEquals(r.probabilities(), now.probabilities());
                assertEquals(r.accuracy(), now.accuracy());
            }
            List<EvaluationKey> keys = new ArrayList<>();
            for (int i = 0; i < atKill; i++) {
                keys.add(StoreFixtures.key(i));
            }
            Map<EvaluationKey, ResultsStore.Stored> found = store.lookup(keys);
            assertEquals(atKill, found.size(), "the child wrote sets 0.." + (atKill - 1) + " in order, no gaps");
            for (Row r : after.values()) {
                assertEquals(StoreFixtures.key(r.position()).setHex(), r.setHex(), "position " + r.position());
            }
            for (int i = 0; i < atKill; i++) {
                ResultsStore.Stored st = found.get(keys.get(i));
                Outcomes o = StoreFixtures.outcomes(i);
                assertSameOutcomes(o, st.outcomes(), "set " + i);
                assertSameScore(StoreFixtures.score(o), st.score(), "set " + i);
            }

            ResultsStore.Run run = store.beginOrResume(StoreFixtures.runInfo(RUN_KEY));
            assertTrue(run.resumed());
            assertEquals(atKill, run.count());
            assertEquals(atKill, run.spent(), 0.0);
            assertTrue(run.paid(StoreFixtures.key(atKill - 1)));
        }

        Process resume = start(db, TOTAL, 0);
        try {
            assertTrue(resume.waitFor(WAIT_SECONDS, TimeUnit.SECONDS), "the resuming child did not finish within "
                    + WAIT_SECONDS + " s");
        } finally {
            resume.destroyForcibly();
        }
        assertEquals(0, resume.exitValue(), () -> "the resuming child failed:\n" + log("stderr"));
        assertTrue(log("stdout").contains("resumed true count " + atKill), log("stdout"));

        try (ResultsStore store = ResultsStore.open(db)) {
            assertEquals(TOTAL, store.countEvaluations());
            ResultsStore.Run run = store.beginOrResume(StoreFixtures.runInfo(RUN_KEY));
            assertTrue(run.finished());
            assertEquals(TOTAL, run.count());
            assertEquals(TOTAL, run.spent(), 0.0, "no set was paid twice across the kill");
            assertEquals(TOTAL, store.countRunEvaluations(run.id()));
            List<EvaluationKey> all = new ArrayList<>();
            for (int i = 0; i < TOTAL; i++) {
                all.add(StoreFixtures.key(i));
            }
            store.record(run, List.of(), all, 1.0);
            assertEquals(TOTAL, run.spent(), 0.0, "replaying every set again is free");
            assertEquals(TOTAL, store.countRunEvaluations(run.id()));
        }
        Map<Long, Row> end = readRows(db);
        boolean[] positions = new boolean[TOTAL];
        for (Row r : end.values()) {
            assertTrue(r.position() >= 0 && r.position() < TOTAL && !positions[r.position()], "position "
                    + r.position());
            positions[r.position()] = true;
        }
    }

    private Process start(Path db, int count, long sleepMillis) throws IOException {
        String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
        ProcessBuilder pb = new ProcessBuilder(java, "-Xmx256m", "-cp", System.getProperty("java.class.path"),
                StoreWriterProcess.class.getName(), db.toString(), RUN_KEY, Integer.toString(count),
                Long.toString(sleepMillis));
        pb.redirectOutput(dir.resolve("stdout").toFile());
        pb.redirectError(dir.resolve("stderr").toFile());
        return pb.start();
    }

    private String log(String name) {
        try {
            return Files.readString(dir.resolve(name));
        } catch (IOException e) {
            return "(cannot read " + name + ": " + e.getMessage() + ")";
        }
    }

    /** Polls with a read-only connection until at least {@link #KILL_AFTER} rows are committed; returns them. */
    private Map<Long, Row> waitForRows(Path db, Process child) throws InterruptedException {
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(WAIT_SECONDS);
        String last = "no database yet";
        while (System.nanoTime() < deadline) {
            if (!child.isAlive()) {
                fail("the child exited with " + child.exitValue() + " before " + KILL_AFTER + " rows were committed:\n"
                        + log("stderr"));
            }
            if (Files.exists(db)) {
                try {
                    Map<Long, Row> rows = readRows(db);
                    if (rows.size() >= KILL_AFTER) {
                        return rows;
                    }
                    last = rows.size() + " rows";
                } catch (SQLException e) {
                    last = e.getMessage();
                }
            }
            Thread.sleep(5);
        }
        fail("fewer than " + KILL_AFTER + " rows committed within " + WAIT_SECONDS + " s (last poll: " + last
                + ")\n" + log("stderr"));
        return null;
    }

    /** Every evaluation with its run link, read in one snapshot by a separate read-only connection. */
    private static Map<Long, Row> readRows(Path db) throws SQLException {
        SQLiteConfig config = new SQLiteConfig();
        config.setReadOnly(true);
        config.setBusyTimeout(5_000);
        Map<Long, Row> rows = new LinkedHashMap<>();
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db, config.toProperties());
             Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT e.id, e.set_hex, re.position, e.predicted, e.true_class_prob,"
                     + " e.accuracy FROM evaluations e LEFT JOIN run_evaluations re ON re.evaluation_id = e.id"
                     + " ORDER BY e.id")) {
            while (r.next()) {
                int position = r.getInt(3);
                if (r.wasNull()) {
                    fail("evaluation " + r.getLong(1) + " has no run link: a partial transaction is visible");
                }
                Row row = new Row(r.getLong(1), r.getString(2), position, r.getBytes(4), r.getBytes(5),
                        r.getDouble(6));
                assertEquals(4 * StoreFixtures.SAMPLES, row.predicted().length);
                assertEquals(4 * StoreFixtures.SAMPLES, row.probabilities().length);
                rows.put(row.id(), row);
            }
        }
        return rows;
    }
}
