package org.cruxset.scoring.store;

import static org.cruxset.scoring.store.StoreFixtures.assertBits;
import static org.cruxset.scoring.store.StoreFixtures.assertSameOutcomes;
import static org.cruxset.scoring.store.StoreFixtures.assertSameScore;
import static org.cruxset.scoring.store.StoreFixtures.fresh;
import static org.cruxset.scoring.store.StoreFixtures.key;
import static org.cruxset.scoring.store.StoreFixtures.runInfo;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.TimeUnit;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.eval.Outcomes;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class ResultsStoreTest {
    @TempDir
    Path dir;

    private Path db() {
        return dir.resolve("out").resolve("results.sqlite");
    }

    @Test
    void scoresAndOutcomesRoundTripBitExactly() {
        // Awkward floats: zero, negative zero, the smallest subnormal, one, 0.1 and a NaN with a payload.
        float nanWithPayload = Float.intBitsToFloat(0x7fc01234);
        float[] special = {0f, -0f, Float.MIN_VALUE, 1f, 0.1f, nanWithPayload, Math.nextDown(1f)};
        int n = special.length;
        int[] pred = {0, 1, 2, 0, 1, 2, Integer.MAX_VALUE};
        Outcomes odd = new Outcomes(pred, special);
        int[] labels = {0, 1, 2, 0, 1, 2, 0};
        SetScore oddScore = SetScore.of(new Outcomes(new int[] {0, 1, 2, 0, 1, 2, 1}, special), labels, 4);
        assertTrue(Double.isNaN(oddScore.meanTrueClassProbability()), "the NaN probability makes the mean NaN");
        EvaluationKey oddKey = new EvaluationKey(StoreFixtures.MODEL, StoreFixtures.DATA, "none", LesionMode.ZERO, 99,
                RegionSet.of(StoreFixtures.UNIVERSE, 0, 63, 64, 99));
        assertEquals(0, oddKey.modeSeed());
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("round-trip"));
            List<ResultsStore.NewEvaluation> news = new ArrayList<>();
            for (int i = 0; i < 20; i++) {
                news.add(fresh(i));
            }
            news.add(new ResultsStore.NewEvaluation(oddKey, "a,b,c,d", oddScore, odd, 1.0 / 3));
            store.record(run, news, List.of(), 1.0);
        }
        try (ResultsStore store = ResultsStore.open(db())) {
            List<EvaluationKey> keys = new ArrayList<>();
            for (int i = 0; i < 20; i++) {
                keys.add(key(i));
            }
            keys.add(oddKey);
            keys.add(key(500));
            Map<EvaluationKey, ResultsStore.Stored> found = store.lookup(keys);
            assertEquals(21, found.size(), "an unknown key is left out");
            for (int i = 0; i < 20; i++) {
                ResultsStore.Stored s = found.get(key(i));
                ResultsStore.NewEvaluation e = fresh(i);
                assertEquals(e.key(), s.key());
                assertSameScore(e.score(), s.score(), "set " + i);
                assertSameOutcomes(e.outcomes(), s.outcomes(), "set " + i);
                assertEquals(e.outcomes(), s.outcomes());
                assertBits(e.wallSeconds(), s.wallSeconds(), "wall seconds");
            }
            ResultsStore.Stored s = found.get(oddKey);
            assertSameScore(oddScore, s.score(), "odd set");
            assertSameOutcomes(odd, s.outcomes(), "odd set");
            assertEquals(n, s.outcomes().size());
            assertArrayEquals(pred, s.outcomes().predicted());
            assertBits(1.0 / 3, s.wallSeconds(), "wall seconds");
            assertTrue(Double.isNaN(s.score().perClassAccuracy()[3]), "class without samples stays NaN");
        }
    }

    @Test
    void blobsAreLittleEndianInt32AndFloat32() throws SQLException {
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("blobs"));
            store.record(run, List.of(fresh(3)), List.of(), 1.0);
        }
        Outcomes o = StoreFixtures.outcomes(3);
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db());
             Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT predicted, true_class_prob, set_hex, set_size, region_names,"
                     + " per_class_accuracy, typeof(mean_true_prob) FROM evaluations")) {
            assertTrue(r.next());
            byte[] p = r.getBytes(1);
            byte[] q = r.getBytes(2);
            assertEquals(4 * StoreFixtures.SAMPLES, p.length);
            assertEquals(4 * StoreFixtures.SAMPLES, q.length);
            for (int i = 0; i < StoreFixtures.SAMPLES; i++) {
                int pi = (p[4 * i] & 0xff) | (p[4 * i + 1] & 0xff) << 8 | (p[4 * i + 2] & 0xff) << 16
                        | (p[4 * i + 3] & 0xff) << 24;
                int qi = (q[4 * i] & 0xff) | (q[4 * i + 1] & 0xff) << 8 | (q[4 * i + 2] & 0xff) << 16
                        | (q[4 * i + 3] & 0xff) << 24;
                assertEquals(o.predicted(i), pi);
                assertEquals(Float.floatToRawIntBits(o.trueClassProbability(i)), qi);
            }
            assertEquals(key(3).setHex(), r.getString(3));
            assertEquals(key(3).set().size(), r.getInt(4));
            assertEquals(StoreFixtures.regionNames(key(3).set()), r.getString(5));
            assertTrue(r.getString(6).endsWith(",null]"), r.getString(6));
            assertEquals("real", r.getString(7));
        }
    }

    @Test
    void recordingTheSameKeyTwiceKeepsOneRowAndTheFirstScores() {
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("twice"));
            store.record(run, List.of(fresh(1), fresh(1)), List.of(), 1.0);
            assertEquals(1, store.countEvaluations());
            Outcomes other = StoreFixtures.outcomes(2);
            ResultsStore.NewEvaluation again = new ResultsStore.NewEvaluation(key(1), "x", StoreFixtures.score(other),
                    other, 9.0);
            store.record(run, List.of(again), List.of(key(1)), 1.0);
            assertEquals(1, store.countEvaluations());
            assertEquals(1, store.countRunEvaluations(run.id()));
            assertEquals(1, run.count());
            assertBits(1.0, run.spent(), "spent");
            ResultsStore.Stored s = store.lookup(List.of(key(1))).get(key(1));
            assertSameOutcomes(StoreFixtures.outcomes(1), s.outcomes(), "first write wins");

            ResultsStore.Run second = store.beginOrResume(runInfo("twice-other-run"));
            store.record(second, List.of(fresh(1)), List.of(), 1.0);
            assertEquals(1, store.countEvaluations(), "another run scoring the same key adds no evaluation row");
            assertEquals(1, store.countRunEvaluations(second.id()));
        }
    }

    @Test
    void aRunIsChargedOnceAndAnotherRunIsChargedForReuse() throws SQLException {
        long firstId;
        long secondId;
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run first = store.beginOrResume(runInfo("first"));
            firstId = first.id();
            store.record(first, List.of(fresh(0), fresh(1), fresh(2)), List.of(), 1.0);
            assertBits(3.0, first.spent(), "first run");
            store.record(first, List.of(fresh(0)), List.of(key(1), key(2)), 1.0);
            store.record(first, List.of(), List.of(key(2), key(2)), 1.0);
            assertBits(3.0, first.spent(), "re-recording what the run paid for is free");
            assertEquals(3, first.count());
            assertTrue(first.paid(key(2)));
            assertFalse(first.paid(key(3)));

            ResultsStore.Run second = store.beginOrResume(runInfo("second"));
            secondId = second.id();
            assertFalse(second.paid(key(0)));
            store.record(second, List.of(fresh(3)), List.of(key(0), key(1), key(2)), 1.0);
            assertBits(4.0, second.spent(), "reused evaluations are charged to the run that reuses them");
            assertEquals(4, store.countEvaluations());
            assertEquals(4, store.countRunEvaluations(secondId));
            assertEquals(3, store.countRunEvaluations(firstId));

            ResultsStore.Run partial = store.beginOrResume(runInfo("partial"));
            store.record(partial, List.of(), List.of(key(0), key(1), key(2)), 0.25);
            assertBits(0.75, partial.spent(), "fractional costs");

            IllegalArgumentException missing = assertThrows(IllegalArgumentException.class,
                    () -> store.record(second, List.of(fresh(4)), List.of(key(77)), 1.0));
            assertTrue(missing.getMessage().contains("is not in the results store"), missing.getMessage());
            assertEquals(4, store.countEvaluations(), "the failed record rolled back its new evaluation too");
            assertBits(4.0, second.spent(), "a failed record charges nothing");
            assertEquals(4, second.count());
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db());
             Statement s = c.createStatement()) {
            assertEquals(List.of("0:0", "1:0", "2:0"), links(s, firstId), "first run: position:reused");
            assertEquals(List.of("0:0", "1:1", "2:1", "3:1"), links(s, secondId), "second run: fresh first");
        }
    }

    private static List<String> links(Statement s, long runId) throws SQLException {
        List<String> out = new ArrayList<>();
        try (ResultSet r = s.executeQuery("SELECT position, reused, cost FROM run_evaluations WHERE run_id = " + runId
                + " ORDER BY position")) {
            while (r.next()) {
                assertEquals(1.0, r.getDouble(3));
                out.add(r.getInt(1) + ":" + r.getInt(2));
            }
        }
        return out;
    }

    @Test
    void reopeningResumesARunWithItsSpentBudget() {
        long id;
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("resume-me"));
            assertFalse(run.resumed());
            id = run.id();
            for (int i = 0; i < 5; i++) {
                store.record(run, List.of(fresh(i)), List.of(), i == 4 ? 0.5 : 1.0);
            }
            assertBits(4.5, run.spent(), "before closing");
        }
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("resume-me"));
            assertTrue(run.resumed());
            assertFalse(run.finished());
            assertEquals(id, run.id());
            assertEquals("resume-me", run.runKey());
            assertBits(4.5, run.spent(), "after reopening");
            assertEquals(5, run.count());
            for (int i = 0; i < 5; i++) {
                assertTrue(run.paid(key(i)), "paid " + i);
            }
            assertFalse(run.paid(key(5)));
            store.record(run, List.of(fresh(4), fresh(5)), List.of(), 1.0);
            assertBits(5.5, run.spent(), "only the new set is charged");
            store.finish(run);
            assertTrue(run.finished());

            ResultsStore.Run other = store.beginOrResume(runInfo("another-key"));
            assertFalse(other.resumed());
            assertNotEquals(id, other.id());
            assertEquals(0, other.count());
        }
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("resume-me"));
            assertTrue(run.resumed());
            assertTrue(run.finished());
            assertBits(5.5, run.spent(), "after finishing");
        }
    }

    @Test
    void resumingWithOtherSettingsFailsNamingThem() {
        try (ResultsStore store = ResultsStore.open(db())) {
            store.beginOrResume(runInfo("k"));
            ResultsStore.RunInfo changed = new ResultsStore.RunInfo("k", "search", "{}", StoreFixtures.MODEL,
                    "ff".repeat(32), StoreFixtures.PREPROCESSING, LesionMode.NOISE, 7, 43, Provenance.current());
            ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class,
                    () -> store.beginOrResume(changed));
            assertTrue(e.getMessage().startsWith(db().toAbsolutePath().toString()), e.getMessage());
            assertTrue(e.getMessage().contains("data_hash") && e.getMessage().contains("seed is '42'"),
                    e.getMessage());
        }
    }

    @Test
    void registeringADatasetIsIdempotentAndRefusesOtherSamples() throws SQLException {
        List<String> labelNames = new ArrayList<>();
        for (int y : StoreFixtures.LABELS) {
            labelNames.add(StoreFixtures.CLASS_LABELS.get(y));
        }
        try (ResultsStore store = ResultsStore.open(db())) {
            store.registerDataset(StoreFixtures.DATA, StoreFixtures.sampleIds(), StoreFixtures.subjects(), labelNames);
            store.registerDataset(StoreFixtures.DATA, StoreFixtures.sampleIds(), StoreFixtures.subjects(), labelNames);
            StoreFixtures.registerDataset(store);
            StoreFixtures.registerDataset(store);
            List<String> ids = new ArrayList<>(StoreFixtures.sampleIds());
            ids.set(5, "someone-else");
            ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class,
                    () -> store.registerDataset(StoreFixtures.DATA, ids, StoreFixtures.subjects(), labelNames));
            assertTrue(e.getMessage().contains("sample 5") && e.getMessage().contains("someone-else"), e.getMessage());
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db());
             Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT count(*), count(label_index), sum(label_index)"
                     + " FROM dataset_samples")) {
            assertTrue(r.next());
            assertEquals(StoreFixtures.SAMPLES, r.getInt(1));
            assertEquals(StoreFixtures.SAMPLES, r.getInt(2), "class indices were added by the second overload");
            assertEquals(30, r.getInt(3));
        }
    }

    @Test
    void lookupBatchesManyKeysOverSeveralGroups() {
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("many"));
            List<ResultsStore.NewEvaluation> news = new ArrayList<>();
            List<EvaluationKey> keys = new ArrayList<>();
            for (int i = 0; i < 1300; i++) {
                news.add(fresh(i));
                keys.add(key(i));
                EvaluationKey zero = new EvaluationKey(StoreFixtures.MODEL, StoreFixtures.DATA, "none",
                        LesionMode.ZERO, 0, StoreFixtures.set(i));
                if (i % 2 == 0) {
                    Outcomes o = StoreFixtures.outcomes(i);
                    news.add(new ResultsStore.NewEvaluation(zero, "", StoreFixtures.score(o), o, 0));
                }
                keys.add(zero);
            }
            store.record(run, news, List.of(), 1.0);
            assertEquals(1950, store.countEvaluations());
            Map<EvaluationKey, ResultsStore.Stored> found = store.lookup(keys);
            assertEquals(1950, found.size());
            assertSameOutcomes(StoreFixtures.outcomes(1299), found.get(key(1299)).outcomes(), "last");
            assertBits(1950.0, run.spent(), "spent");
        }
    }

    @Test
    void threadsShareOneStore() throws Exception {
        try (ResultsStore store = ResultsStore.open(db())) {
            ResultsStore.Run run = store.beginOrResume(runInfo("threads"));
            ExecutorService pool = Executors.newFixedThreadPool(4);
            try {
                List<Future<?>> done = new ArrayList<>();
                for (int t = 0; t < 4; t++) {
                    int offset = t * 25;
                    done.add(pool.submit(() -> {
                        for (int i = offset; i < offset + 50; i++) {
                            store.record(run, List.of(fresh(i)), List.of(), 1.0);
                            store.lookup(List.of(key(i)));
                        }
                        return null;
                    }));
                }
                for (Future<?> f : done) {
                    f.get(60, TimeUnit.SECONDS);
                }
            } finally {
                pool.shutdownNow();
            }
            assertEquals(125, store.countEvaluations(), "overlapping ranges 0-49, 25-74, 50-99, 75-124");
            assertEquals(125, run.count());
            assertBits(125.0, run.spent(), "each set charged once");
        }
    }

    @Test
    void aNewerSchemaVersionIsRefused() throws SQLException {
        try (ResultsStore store = ResultsStore.open(db())) {
            store.beginOrResume(runInfo("old"));
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db());
             Statement s = c.createStatement()) {
            s.execute("UPDATE schema_version SET version = " + (ResultsStore.SCHEMA_VERSION + 1));
        }
        ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class, () -> ResultsStore.open(db()));
        assertEquals(db().toAbsolutePath(), e.file());
        assertTrue(e.getMessage().startsWith(db().toAbsolutePath() + ": "), e.getMessage());
        assertTrue(e.getMessage().contains("newer Cruxset")
                && e.getMessage().contains("schema version " + (ResultsStore.SCHEMA_VERSION + 1))
                && e.getMessage().contains("schema version " + ResultsStore.SCHEMA_VERSION), e.getMessage());
        ResultsStore.StoreException export = assertThrows(ResultsStore.StoreException.class,
                () -> TsvExport.export(db(), dir.resolve("export")));
        assertTrue(export.getMessage().contains("newer Cruxset"), export.getMessage());
    }

    @Test
    void anotherSqliteDatabaseIsRefusedAndLeftUntouched() throws SQLException, IOException {
        Path other = dir.resolve("other.db");
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + other);
             Statement s = c.createStatement()) {
            s.execute("CREATE TABLE measurements (x REAL)");
            s.execute("INSERT INTO measurements VALUES (1.5)");
        }
        byte[] before = Files.readAllBytes(other);
        ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class,
                () -> ResultsStore.open(other));
        assertTrue(e.getMessage().contains(other.toString()) && e.getMessage().contains("not a Cruxset results store")
                && e.getMessage().contains("no schema_version table") && e.getMessage().contains("measurements"),
                e.getMessage());
        assertArrayEquals(before, Files.readAllBytes(other), "the foreign database was not changed (e.g. to WAL)");
        assertFalse(Files.exists(dir.resolve("other.db-wal")));
    }

    @Test
    void aFileThatIsNotSqliteIsRefused() throws IOException {
        Path text = dir.resolve("notes.sqlite");
        Files.writeString(text, "id\tvalue\n".repeat(200));
        ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class, () -> ResultsStore.open(text));
        assertTrue(e.getMessage().contains(text.toString()) && e.getMessage().contains("not a Cruxset results store")
                && e.getMessage().contains("SQLite"), e.getMessage());
        assertEquals("id\tvalue\n".repeat(200), Files.readString(text));

        ResultsStore.StoreException folder = assertThrows(ResultsStore.StoreException.class,
                () -> ResultsStore.open(dir));
        assertTrue(folder.getMessage().contains("is a folder"), folder.getMessage());
    }

    @Test
    void theStoreUsesWalAndEnforcesForeignKeys() throws SQLException {
        try (ResultsStore store = ResultsStore.open(db())) {
            store.beginOrResume(runInfo("pragmas"));
            try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db());
                 Statement s = c.createStatement()) {
                try (ResultSet r = s.executeQuery("PRAGMA journal_mode")) {
                    assertEquals("wal", r.getString(1));
                }
                try (ResultSet r = s.executeQuery("PRAGMA page_size")) {
                    assertEquals(ResultsStore.PAGE_SIZE, r.getInt(1), "new stores use large pages");
                }
                try (ResultSet r = s.executeQuery("SELECT version FROM schema_version")) {
                    assertEquals(ResultsStore.SCHEMA_VERSION, r.getInt(1));
                }
            }
        }
        assertFalse(Files.exists(Path.of(db() + "-wal")), "closing the last connection folds the log back");
    }

    @Test
    void schemaMarkdownHoldsTheDdl() throws IOException {
        String md;
        try (InputStream in = ResultsStore.class.getResourceAsStream("SCHEMA.md")) {
            md = new String(in.readAllBytes(), StandardCharsets.UTF_8);
        }
        List<String> blocks = new ArrayList<>();
        for (int at = md.indexOf("```sql\n"); at >= 0; at = md.indexOf("```sql\n", at + 1)) {
            blocks.add(md.substring(at + 7, md.indexOf("```", at + 7)));
        }
        assertEquals(StoreSchema.STEPS.size(), blocks.size(), "one sql block per schema version");
        for (int v = 0; v < blocks.size(); v++) {
            assertEquals(String.join(";\n\n", StoreSchema.STEPS.get(v)) + ";\n", blocks.get(v),
                    "SCHEMA.md must show exactly the statements of version " + (v + 1));
            assertTrue(md.contains("### Version " + (v + 1)), "a heading for version " + (v + 1));
        }
        assertTrue(md.contains("# Results store schema (version " + ResultsStore.SCHEMA_VERSION + ")"));
    }
}
