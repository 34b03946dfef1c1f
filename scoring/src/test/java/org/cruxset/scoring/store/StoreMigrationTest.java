package org.cruxset.scoring.store;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.InputStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.ResultSetMetaData;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.lesion.LesionMode;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Migration of stores written by earlier versions, and the split of held-out subjects into parts. The fixture
 * {@code store-v1.sqlite} was written by Cruxset's version-1 code ({@code cruxset score} on the earlier bundled demo:
 * two runs, six evaluations of 60 samples each, zero and noise modes); {@code store-v2.sqlite} by the version-2 code
 * ({@code cruxset score} on today's demo: a run with a search and a confirmation part, and one with {@code --confirm 0};
 * eight evaluations).
 */
class StoreMigrationTest {
    @TempDir
    Path dir;

    private Path v1Copy() throws IOException {
        return copy("store-v1.sqlite");
    }

    private Path copy(String fixture) throws IOException {
        Path db = dir.resolve("results.sqlite");
        try (InputStream in = StoreMigrationTest.class.getResourceAsStream(fixture)) {
            Files.copy(in, db);
        }
        return db;
    }

    /** Every row of {@code table} as text, ordered by the given columns; BLOBs as their bytes. */
    private static List<String> rows(Connection c, String table, String orderBy, String... columns) throws SQLException {
        List<String> out = new ArrayList<>();
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT " + String.join(", ", columns) + " FROM " + table + " ORDER BY " + orderBy)) {
            ResultSetMetaData md = r.getMetaData();
            while (r.next()) {
                StringBuilder sb = new StringBuilder();
                for (int i = 1; i <= md.getColumnCount(); i++) {
                    Object v = r.getObject(i);
                    sb.append(v instanceof byte[] b ? Arrays.toString(b) : String.valueOf(v)).append('|');
                }
                out.add(sb.toString());
            }
        }
        return out;
    }

    private static int version(Connection c) throws SQLException {
        try (Statement s = c.createStatement(); ResultSet r = s.executeQuery("SELECT version FROM schema_version")) {
            return r.getInt(1);
        }
    }

    private static final String[] EVALUATION_COLUMNS = {"id", "model_hash", "data_hash", "preprocessing", "lesion_mode",
        "mode_seed", "set_hex", "universe", "set_size", "region_names", "n", "correct", "accuracy", "balanced_accuracy",
        "mean_true_prob", "per_class_accuracy", "chance", "wilson_low", "wilson_high", "p_value", "wall_seconds",
        "predicted", "true_class_prob", "created_at", "created_by_run"};
    private static final String[] RUN_COLUMNS = {"id", "run_key", "kind", "config", "model_hash", "data_hash",
        "preprocessing", "lesion_mode", "mode_seed", "seed", "cruxset_version", "jvm", "os", "arch", "started_at",
        "ended_at", "status"};

    @Test
    void aVersionOneStoreIsMigratedKeepingEveryEvaluationOutcomeAndCharge() throws Exception {
        Path db = v1Copy();
        List<String> evaluations;
        List<String> charges;
        List<String> runs;
        List<String> samples;
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db)) {
            assertEquals(1, version(c), "the fixture is a version-1 store");
            evaluations = rows(c, "evaluations", "id", EVALUATION_COLUMNS);
            charges = rows(c, "run_evaluations", "run_id, position", "run_id", "evaluation_id", "cost", "reused", "position");
            runs = rows(c, "runs", "id", RUN_COLUMNS);
            samples = rows(c, "dataset_samples", "data_hash, sample_index", "data_hash", "sample_index", "sample_id",
                    "subject", "label", "label_index");
        }
        assertEquals(6, evaluations.size());
        assertEquals(2, runs.size());

        try (ResultsStore store = ResultsStore.open(db)) {
            assertEquals(6, store.countEvaluations());
            assertTrue(store.splitOfRun(1).isEmpty(), "a version-1 run scored without a split");
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db)) {
            assertEquals(ResultsStore.SCHEMA_VERSION, version(c));
            assertEquals(evaluations, rows(c, "evaluations", "id", EVALUATION_COLUMNS), "every evaluation and its outcomes, bit for bit");
            assertEquals(charges, rows(c, "run_evaluations", "run_id, position", "run_id", "evaluation_id", "cost", "reused",
                    "position"));
            assertEquals(runs, rows(c, "runs", "id", RUN_COLUMNS));
            assertEquals(samples, rows(c, "dataset_samples", "data_hash, sample_index", "data_hash", "sample_index",
                    "sample_id", "subject", "label", "label_index"));
            assertEquals(List.of("null|", "null|"), rows(c, "runs", "id", "split_id"));
        }

        // The old runs resume with their spent budget, and the migrated store takes new work.
        try (ResultsStore store = ResultsStore.open(db);
             Connection c = DriverManager.getConnection("jdbc:sqlite:" + db)) {
            List<String> run1 = rows(c, "runs", "id", "run_key", "kind", "model_hash", "data_hash", "preprocessing",
                    "lesion_mode", "mode_seed", "seed");
            String[] f = run1.get(0).split("\\|");
            ResultsStore.Run resumed = store.beginOrResume(new ResultsStore.RunInfo(f[0], f[1], "again", f[2], f[3], f[4],
                    LesionMode.parse(f[5]), Long.parseLong(f[6]), Long.parseLong(f[7]), Provenance.current()));
            assertTrue(resumed.resumed());
            assertEquals(3.0, resumed.spent(), 0.0);
            assertEquals(3, resumed.count());
        }
    }

    @Test
    void aVersionTwoStoreIsMigratedKeepingEvaluationsChargesAndSplits() throws Exception {
        Path db = copy("store-v2.sqlite");
        List<String> evaluations;
        List<String> charges;
        List<String> splits;
        List<String> subjects;
        List<String> runs;
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db)) {
            assertEquals(2, version(c), "the fixture is a version-2 store");
            evaluations = rows(c, "evaluations", "id", EVALUATION_COLUMNS);
            charges = rows(c, "run_evaluations", "run_id, position", "run_id", "evaluation_id", "cost", "reused", "position");
            splits = rows(c, "part_splits", "id", "id", "split_seed", "confirm_fraction", "search_hash", "confirm_hash");
            subjects = rows(c, "part_subjects", "split_id, subject", "split_id", "subject", "part");
            runs = rows(c, "runs", "id", "id", "run_key", "split_id", "data_hash");
        }
        assertEquals(8, evaluations.size());
        try (ResultsStore store = ResultsStore.open(db)) {
            PartSplit first = store.splitOfRun(1).orElseThrow();
            assertEquals(0.5, first.confirmFraction(), 0.0);
            assertEquals(18, first.confirmationSubjects().size());
            assertTrue(store.splitOfRun(2).orElseThrow().confirmationSubjects().isEmpty(), "--confirm 0");
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db)) {
            assertEquals(ResultsStore.SCHEMA_VERSION, version(c));
            assertEquals(evaluations, rows(c, "evaluations", "id", EVALUATION_COLUMNS));
            assertEquals(charges, rows(c, "run_evaluations", "run_id, position", "run_id", "evaluation_id", "cost",
                    "reused", "position"));
            assertEquals(splits, rows(c, "part_splits", "id", "id", "split_seed", "confirm_fraction", "search_hash",
                    "confirm_hash"));
            assertEquals(subjects, rows(c, "part_subjects", "split_id, subject", "split_id", "subject", "part"));
            assertEquals(runs, rows(c, "runs", "id", "id", "run_key", "split_id", "data_hash"));
            assertEquals(List.of("0|"), rows(c, "(SELECT count(*) AS n FROM run_evaluations WHERE spent_after IS NOT NULL)",
                    "n", "n"), "links made before version 3 have no spent_after");
            assertEquals(List.of("0|"), rows(c, "(SELECT count(*) AS n FROM searches)", "n", "n"));
        }
    }

    @Test
    void freshAndMigratedStoresHaveTheSameSchema() throws Exception {
        Path migrated = v1Copy();
        ResultsStore.open(migrated).close();
        Path fresh = dir.resolve("fresh.sqlite");
        ResultsStore.open(fresh).close();
        assertEquals(schema(fresh), schema(migrated));
    }

    private static Map<String, String> schema(Path db) throws SQLException {
        Map<String, String> out = new TreeMap<>();
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT name, sql FROM sqlite_schema WHERE sql IS NOT NULL")) {
            while (r.next()) {
                out.put(r.getString(1), r.getString(2).replaceAll("\\s+", " "));
            }
        }
        return out;
    }

    @Test
    void aFailedMigrationLeavesTheStoreAsItWas() throws Exception {
        Path db = v1Copy();
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db); Statement s = c.createStatement()) {
            // A table in the way makes the second statement of the migration fail after the first succeeded.
            s.execute("CREATE TABLE part_subjects (x INTEGER)");
        }
        ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class, () -> ResultsStore.open(db));
        assertTrue(e.getMessage().startsWith(db.toAbsolutePath() + ": "), e.getMessage());
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             Statement s = c.createStatement()) {
            assertEquals(1, version(c), "the version is unchanged");
            try (ResultSet r = s.executeQuery("SELECT count(*) FROM sqlite_schema WHERE name = 'part_splits'")) {
                assertEquals(0, r.getInt(1), "the first migration statement was rolled back");
            }
            try (ResultSet r = s.executeQuery("SELECT count(*) FROM pragma_table_info('runs') WHERE name = 'split_id'")) {
                assertEquals(0, r.getInt(1));
            }
        }
    }

    @Test
    void exportReadsAVersionOneStoreWithoutMigratingIt() throws Exception {
        Path db = v1Copy();
        byte[] before = Files.readAllBytes(db);
        Path out = dir.resolve("export");
        TsvExport.export(db, out);
        List<String> runs = Files.readAllLines(out.resolve("runs.tsv"));
        assertEquals(3, runs.size());
        assertTrue(runs.get(0).endsWith("\tsplit_id"), runs.get(0));
        assertTrue(runs.get(1).endsWith("\t"), "no split for a version-1 run: " + runs.get(1));
        assertEquals(1, Files.readAllLines(out.resolve("part_splits.tsv")).size(), "header only");
        assertEquals(1 + 6 * 60, Files.readAllLines(out.resolve("outcomes.tsv")).size());
        assertArrayEquals(before, Files.readAllBytes(db), "export does not migrate");
    }

    private static PartSplit split(String confirmHash, List<String> search, List<String> confirm) {
        return new PartSplit(7, confirmHash == null ? 0 : 0.5, StoreFixtures.DATA, confirmHash, search, confirm);
    }

    @Test
    void aSplitIsRecordedOnceWithItsSubjectsAndNamedByItsRuns() throws Exception {
        Path db = dir.resolve("results.sqlite");
        String confirmHash = "c0".repeat(32);
        try (ResultsStore store = ResultsStore.open(db)) {
            StoreFixtures.registerDataset(store);
            store.registerDataset(confirmHash, List.of("x-1", "x-2"), List.of("sub-90", "sub-91"), List.of("rest", "motor"));
            List<String> search = new ArrayList<>();
            for (int s = 0; s < 10; s++) {
                search.add("sub-" + s);
            }
            PartSplit split = split(confirmHash, search, List.of("sub-91", "sub-90"));
            long id = store.registerSplit(split);
            assertEquals(id, store.registerSplit(split), "registering again returns the same split");
            assertEquals(List.of("sub-90", "sub-91"), store.split(id).orElseThrow().confirmationSubjects());
            assertEquals(split, store.split(id).orElseThrow());

            ResultsStore.StoreException other = assertThrows(ResultsStore.StoreException.class,
                    () -> store.registerSplit(split(confirmHash, search.subList(0, 9), List.of("sub-90", "sub-91", "sub-9"))));
            assertTrue(other.getMessage().contains("other subjects"), other.getMessage());

            long none = store.registerSplit(split(null, search, List.of()));
            assertNotEquals(id, none);
            assertEquals(none, store.registerSplit(split(null, search, List.of())), "a split without a confirmation part too");
            assertFalse(store.split(none).orElseThrow().hasConfirmation());

            ResultsStore.RunInfo base = StoreFixtures.runInfo("with-split");
            ResultsStore.Run run = store.beginOrResume(withSplit(base, id));
            assertEquals(split, store.splitOfRun(run.id()).orElseThrow());
            ResultsStore.StoreException changed = assertThrows(ResultsStore.StoreException.class,
                    () -> store.beginOrResume(withSplit(base, none)));
            assertTrue(changed.getMessage().contains("split_id"), changed.getMessage());
        }
        Path out = dir.resolve("export");
        TsvExport.export(db, out);
        List<String> splits = Files.readAllLines(out.resolve("part_splits.tsv"));
        assertEquals(3, splits.size());
        assertTrue(splits.get(1).startsWith("1\t7\t0.5\t" + StoreFixtures.DATA + "\t" + confirmHash + "\t10\t2\t"), splits.get(1));
        List<String> subjects = Files.readAllLines(out.resolve("part_subjects.tsv"));
        assertEquals("split_id\tsubject\tpart", subjects.get(0));
        assertEquals("1\tsub-0\tsearch", subjects.get(1));
        assertTrue(subjects.contains("1\tsub-90\tconfirmation"), subjects.toString());
        assertEquals(1 + 12 + 10, subjects.size());
    }

    private static ResultsStore.RunInfo withSplit(ResultsStore.RunInfo r, long splitId) {
        return new ResultsStore.RunInfo(r.runKey(), r.kind(), r.config(), r.modelHash(), r.dataHash(), r.preprocessing(),
                r.mode(), r.modeSeed(), r.seed(), r.provenance(), splitId);
    }

    @Test
    void aSplitRejectsASubjectInBothParts() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> split("c0".repeat(32), List.of("sub-1", "sub-2"), List.of("sub-2")));
        assertTrue(e.getMessage().contains("sub-2"), e.getMessage());
        assertNull(split(null, List.of("sub-1"), List.of()).confirmationHash());
    }
}
