package org.cruxset.scoring.store;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;

/**
 * The results store's schema as a list of steps: step 1 creates version 1, step v (v ≥ 2) migrates version v − 1 to
 * v. A new store runs every step; an older store runs the steps it lacks, all in one transaction, so a file is
 * either migrated whole or left as it was. Later versions add a step here (and a section to {@code SCHEMA.md}); a
 * step never changes once released.
 */
final class StoreSchema {
    /** Version 1: runs, datasets, evaluations with their outcomes, and what each run paid. */
    private static final List<String> V1 = List.of(
            """
            CREATE TABLE schema_version (
              version INTEGER NOT NULL
            )""",
            """
            CREATE TABLE runs (
              id              INTEGER PRIMARY KEY,
              run_key         TEXT    NOT NULL UNIQUE,
              kind            TEXT    NOT NULL,
              config          TEXT    NOT NULL,
              model_hash      TEXT    NOT NULL,
              data_hash       TEXT    NOT NULL,
              preprocessing   TEXT    NOT NULL,
              lesion_mode     TEXT    NOT NULL,
              mode_seed       INTEGER NOT NULL,
              seed            INTEGER NOT NULL,
              cruxset_version TEXT    NOT NULL,
              jvm             TEXT    NOT NULL,
              os              TEXT    NOT NULL,
              arch            TEXT    NOT NULL,
              started_at      TEXT    NOT NULL,
              ended_at        TEXT,
              status          TEXT    NOT NULL CHECK (status IN ('running', 'finished'))
            )""",
            """
            CREATE TABLE datasets (
              data_hash     TEXT    PRIMARY KEY,
              samples       INTEGER NOT NULL,
              class_labels  TEXT,
              registered_at TEXT    NOT NULL
            )""",
            """
            CREATE TABLE dataset_samples (
              data_hash    TEXT    NOT NULL REFERENCES datasets (data_hash),
              sample_index INTEGER NOT NULL,
              sample_id    TEXT    NOT NULL,
              subject      TEXT    NOT NULL,
              label        TEXT    NOT NULL,
              label_index  INTEGER,
              PRIMARY KEY (data_hash, sample_index)
            ) WITHOUT ROWID""",
            """
            CREATE TABLE evaluations (
              id                 INTEGER PRIMARY KEY,
              model_hash         TEXT    NOT NULL,
              data_hash          TEXT    NOT NULL,
              preprocessing      TEXT    NOT NULL,
              lesion_mode        TEXT    NOT NULL,
              mode_seed          INTEGER NOT NULL,
              set_hex            TEXT    NOT NULL,
              universe           INTEGER NOT NULL,
              set_size           INTEGER NOT NULL,
              region_names       TEXT    NOT NULL,
              n                  INTEGER NOT NULL,
              correct            INTEGER NOT NULL,
              accuracy           REAL,
              balanced_accuracy  REAL,
              mean_true_prob     REAL,
              per_class_accuracy TEXT    NOT NULL,
              chance             REAL,
              wilson_low         REAL,
              wilson_high        REAL,
              p_value            REAL,
              wall_seconds       REAL    NOT NULL,
              predicted          BLOB    NOT NULL,
              true_class_prob    BLOB    NOT NULL,
              created_at         TEXT    NOT NULL,
              created_by_run     INTEGER NOT NULL REFERENCES runs (id),
              UNIQUE (model_hash, data_hash, preprocessing, lesion_mode, mode_seed, set_hex)
            )""",
            """
            CREATE TABLE run_evaluations (
              run_id        INTEGER NOT NULL REFERENCES runs (id),
              evaluation_id INTEGER NOT NULL REFERENCES evaluations (id),
              cost          REAL    NOT NULL CHECK (cost >= 0),
              reused        INTEGER NOT NULL CHECK (reused IN (0, 1)),
              position      INTEGER NOT NULL,
              PRIMARY KEY (run_id, evaluation_id),
              UNIQUE (run_id, position)
            ) WITHOUT ROWID""");

    /** Version 2: the split of held-out subjects into a search part and a confirmation part, and each run's split. */
    private static final List<String> V2 = List.of(
            """
            CREATE TABLE part_splits (
              id               INTEGER PRIMARY KEY,
              split_seed       INTEGER NOT NULL,
              confirm_fraction REAL    NOT NULL CHECK (confirm_fraction >= 0 AND confirm_fraction < 1),
              search_hash      TEXT    NOT NULL REFERENCES datasets (data_hash),
              confirm_hash     TEXT    REFERENCES datasets (data_hash),
              created_at       TEXT    NOT NULL,
              UNIQUE (search_hash, confirm_hash, split_seed, confirm_fraction)
            )""",
            """
            CREATE TABLE part_subjects (
              split_id INTEGER NOT NULL REFERENCES part_splits (id),
              subject  TEXT    NOT NULL,
              part     TEXT    NOT NULL CHECK (part IN ('search', 'confirmation')),
              PRIMARY KEY (split_id, subject)
            ) WITHOUT ROWID""",
            "ALTER TABLE runs ADD COLUMN split_id INTEGER REFERENCES part_splits (id)");

    /**
     * Version 3: searches (one row per search run, with its budget, time and where it stopped), their anytime traces,
     * fronts, reported sets, and certificates (irreducibility: every one-region-smaller subset scored; exhaustive: no
     * critical set up to a size within a pool).
     */
    private static final List<String> V3 = List.of(
            """
            CREATE TABLE searches (
              run_id             INTEGER PRIMARY KEY REFERENCES runs (id),
              strategy           TEXT    NOT NULL,
              settings           TEXT    NOT NULL,
              criterion          TEXT    NOT NULL,
              budget             REAL,
              time_limit_seconds REAL,
              deadline           TEXT,
              elapsed_seconds    REAL    NOT NULL,
              status             TEXT    NOT NULL CHECK (status IN ('running', 'finished', 'budget', 'time')),
              best_size          INTEGER
            )""",
            """
            CREATE TABLE search_trace (
              run_id          INTEGER NOT NULL REFERENCES runs (id),
              position        INTEGER NOT NULL,
              sets_charged    REAL    NOT NULL,
              elapsed_seconds REAL    NOT NULL,
              evaluation_id   INTEGER NOT NULL REFERENCES evaluations (id),
              set_size        INTEGER NOT NULL,
              critical        INTEGER NOT NULL CHECK (critical IN (0, 1)),
              PRIMARY KEY (run_id, position)
            ) WITHOUT ROWID""",
            """
            CREATE TABLE search_front (
              run_id        INTEGER NOT NULL REFERENCES runs (id),
              set_size      INTEGER NOT NULL,
              evaluation_id INTEGER NOT NULL REFERENCES evaluations (id),
              critical      INTEGER NOT NULL CHECK (critical IN (0, 1)),
              PRIMARY KEY (run_id, set_size)
            ) WITHOUT ROWID""",
            """
            CREATE TABLE certificates (
              id            INTEGER PRIMARY KEY,
              run_id        INTEGER NOT NULL REFERENCES runs (id),
              kind          TEXT    NOT NULL CHECK (kind IN ('irreducible', 'exhaustive')),
              evaluation_id INTEGER REFERENCES evaluations (id),
              pool_hex      TEXT,
              max_size      INTEGER,
              holds         INTEGER NOT NULL CHECK (holds IN (0, 1))
            )""",
            """
            CREATE TABLE certificate_subsets (
              certificate_id INTEGER NOT NULL REFERENCES certificates (id),
              evaluation_id  INTEGER NOT NULL REFERENCES evaluations (id),
              PRIMARY KEY (certificate_id, evaluation_id)
            ) WITHOUT ROWID""",
            "ALTER TABLE run_evaluations ADD COLUMN spent_after REAL",
            """
            CREATE TABLE search_results (
              run_id                INTEGER NOT NULL REFERENCES runs (id),
              rank                  INTEGER NOT NULL,
              evaluation_id         INTEGER NOT NULL REFERENCES evaluations (id),
              confirm_evaluation_id INTEGER REFERENCES evaluations (id),
              certificate_id        INTEGER REFERENCES certificates (id),
              PRIMARY KEY (run_id, rank)
            ) WITHOUT ROWID""");

    /**
     * Version 4: partial evaluations of raced sets (the outcomes of the first samples, in a seeded order of the
     * scored samples, scored in chunks) and what each run paid for them, so that a raced set is completed later
     * without scoring a sample twice and a run may pay for one set in several parts.
     */
    private static final List<String> V4 = List.of(
            """
            CREATE TABLE partial_evaluations (
              id              INTEGER PRIMARY KEY,
              model_hash      TEXT    NOT NULL,
              data_hash       TEXT    NOT NULL,
              preprocessing   TEXT    NOT NULL,
              lesion_mode     TEXT    NOT NULL,
              mode_seed       INTEGER NOT NULL,
              set_hex         TEXT    NOT NULL,
              universe        INTEGER NOT NULL,
              order_seed      INTEGER NOT NULL,
              chunk           INTEGER NOT NULL CHECK (chunk >= 1),
              samples_done    INTEGER NOT NULL CHECK (samples_done >= 1),
              predicted       BLOB    NOT NULL,
              true_class_prob BLOB    NOT NULL,
              created_by_run  INTEGER NOT NULL REFERENCES runs (id),
              updated_at      TEXT    NOT NULL,
              UNIQUE (model_hash, data_hash, preprocessing, lesion_mode, mode_seed, set_hex, order_seed, chunk)
            )""",
            """
            CREATE TABLE run_partials (
              run_id       INTEGER NOT NULL REFERENCES runs (id),
              partial_id   INTEGER NOT NULL REFERENCES partial_evaluations (id),
              samples_paid INTEGER NOT NULL CHECK (samples_paid >= 1),
              cost         REAL    NOT NULL CHECK (cost >= 0),
              spent_after  TEXT    NOT NULL,
              PRIMARY KEY (run_id, partial_id)
            ) WITHOUT ROWID""");

    /**
     * Version 5: surrogate models fitted by a search (each fit's training size, model, seconds, and how it predicted
     * the batch scored after it) and the sets a screened search skipped without a decoder call (the prediction they
     * got, why, and for the seeded share spot-checked with the decoder, what the check found).
     */
    private static final List<String> V5 = List.of(
            """
            CREATE TABLE surrogate_fits (
              run_id        INTEGER NOT NULL REFERENCES runs (id),
              purpose       TEXT    NOT NULL CHECK (purpose IN ('surrogate', 'screen')),
              fit           INTEGER NOT NULL CHECK (fit >= 1),
              training_sets INTEGER NOT NULL,
              model         TEXT    NOT NULL,
              seconds       REAL    NOT NULL,
              next_sets     INTEGER,
              r2            REAL,
              spearman      REAL,
              coverage      REAL,
              PRIMARY KEY (run_id, purpose, fit)
            ) WITHOUT ROWID""",
            """
            CREATE TABLE search_skips (
              run_id           INTEGER NOT NULL REFERENCES runs (id),
              position         INTEGER NOT NULL,
              set_hex          TEXT    NOT NULL,
              universe         INTEGER NOT NULL,
              set_size         INTEGER NOT NULL,
              predicted        REAL    NOT NULL,
              predicted_sd     REAL    NOT NULL,
              bound            REAL    NOT NULL,
              reason           TEXT    NOT NULL,
              spot_checked     INTEGER NOT NULL CHECK (spot_checked IN (0, 1)),
              checked_value    REAL,
              checked_critical INTEGER CHECK (checked_critical IN (0, 1)),
              PRIMARY KEY (run_id, position)
            ) WITHOUT ROWID""");

    /** Step v − 1 brings a store to version v. */
    static final List<List<String>> STEPS = List.of(V1, V2, V3, V4, V5);

    /** The version this code writes and reads. */
    static final int VERSION = STEPS.size();

    /** The tables of the current version, for messages about files that are not stores. */
    static final String TABLES = "schema_version, runs, datasets, dataset_samples, evaluations, run_evaluations, "
            + "part_splits, part_subjects, searches, search_trace, search_front, certificates, certificate_subsets, "
            + "search_results, partial_evaluations, run_partials, surrogate_fits, search_skips";

    private StoreSchema() {
    }

    /** Every statement of every step, in order. */
    static List<String> allStatements() {
        List<String> out = new ArrayList<>();
        for (List<String> step : STEPS) {
            out.addAll(step);
        }
        return List.copyOf(out);
    }

    /** The version in the file, or null when the database is empty; fails naming the file when it is not a store. */
    static Integer readVersion(Connection c, Path file) {
        List<String> tables = new ArrayList<>();
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT name FROM sqlite_schema WHERE type = 'table' ORDER BY name")) {
            while (r.next()) {
                tables.add(r.getString(1));
            }
        } catch (SQLException e) {
            throw new ResultsStore.StoreException(file, "is not a Cruxset results store: cannot read it as an SQLite "
                    + "database (" + e.getMessage() + ")", e);
        }
        if (tables.isEmpty()) {
            return null;
        }
        if (!tables.contains("schema_version")) {
            throw new ResultsStore.StoreException(file, "is not a Cruxset results store: it has no schema_version table"
                    + " (found tables " + String.join(", ", tables) + "; expected " + TABLES + ")");
        }
        List<Long> versions = new ArrayList<>();
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT version FROM schema_version")) {
            while (r.next()) {
                versions.add(r.getLong(1));
            }
        } catch (SQLException e) {
            throw new ResultsStore.StoreException(file, "cannot read the schema_version table: " + e.getMessage(), e);
        }
        if (versions.size() != 1) {
            throw new ResultsStore.StoreException(file, "is not a readable Cruxset results store: schema_version must "
                    + "hold one row, found " + versions.size() + " " + versions);
        }
        long v = versions.get(0);
        if (v > VERSION) {
            throw new ResultsStore.StoreException(file, "was written by a newer Cruxset: store schema version " + v
                    + ", this version reads schema version " + VERSION + " or older; use that newer Cruxset, or "
                    + "give this command another output folder");
        }
        if (v < 1) {
            throw new ResultsStore.StoreException(file, "is not a readable Cruxset results store: schema version " + v
                    + ", expected 1 to " + VERSION);
        }
        return (int) v;
    }

    /**
     * Creates the schema in an empty database or migrates an older one to {@link #VERSION}, in one immediate
     * transaction (re-reading the version inside it, so two processes opening the same file do not both migrate).
     * Returns the version found before, 0 for a new store.
     */
    static int createOrMigrate(Connection c, Path file) throws SQLException {
        try (Statement s = c.createStatement()) {
            s.execute("BEGIN IMMEDIATE");
            int from;
            try {
                Integer found = readVersion(c, file);
                from = found == null ? 0 : found;
                for (int step = from; step < VERSION; step++) {
                    for (String ddl : STEPS.get(step)) {
                        s.execute(ddl);
                    }
                }
                if (from < VERSION) {
                    s.execute("DELETE FROM schema_version");
                    s.execute("INSERT INTO schema_version (version) VALUES (" + VERSION + ")");
                }
                s.execute("COMMIT");
            } catch (SQLException | RuntimeException e) {
                try {
                    s.execute("ROLLBACK");
                } catch (SQLException ignored) {
                    // SQLite already rolled back.
                }
                throw e;
            }
            return from;
        }
    }
}
