package org.cruxset.scoring.store;

import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.sql.Types;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Collection;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.Outcomes;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionMode;
import org.sqlite.SQLiteConfig;

/**
 * The results of one output folder in one SQLite file: runs, the datasets they scored, every evaluation (scores and
 * per-sample outcomes) stored once under its {@link EvaluationKey}, and which run paid for which evaluation.
 *
 * <p>Schema version 2 (the DDL is {@link #SCHEMA}, built step by step by {@link StoreSchema}, which migrates older
 * stores when they are opened; {@code SCHEMA.md} beside this class documents every column):
 * <ul>
 *   <li>{@code schema_version(version)}: one row; a file without it is not a store, a higher version is refused.</li>
 *   <li>{@code runs}: one row per command, unique {@code run_key}, its kind, full config, evaluation identity
 *       (model and data hash, preprocessing, lesion mode and seed), seed, provenance, start and end times and
 *       status ({@code running} until {@link #finish(Run)}, then {@code finished}).</li>
 *   <li>{@code datasets} and {@code dataset_samples}: the scored samples of a data hash, in scoring order, with id,
 *       subject, label and (when registered with the model's classes) class index, so per-sample outcomes can be
 *       joined to sample ids.</li>
 *   <li>{@code evaluations}: one row per unique key (model, data, preprocessing, mode, mode seed, set), with the set
 *       as hex and as region names, every {@link SetScore} field, wall time, and the outcomes as two little-endian
 *       BLOBs ({@code predicted}: int32 per sample; {@code true_class_prob}: float32 per sample, raw bits).</li>
 *   <li>{@code run_evaluations}: what each run paid, primary key (run, evaluation) so a run pays for a set once,
 *       with cost, whether the evaluation already existed ({@code reused}) and the order within the run.</li>
 *   <li>{@code part_splits} and {@code part_subjects}: how held-out subjects were split into a search part and a
 *       confirmation part (seed, fraction, the data hash of each part, each subject's part); {@code runs.split_id}
 *       names the split a run scored under (NULL for runs of version-1 stores, which scored all held-out samples).</li>
 * </ul>
 * Score doubles are SQLite REALs (IEEE 754 binary64) and read back bit for bit, with two exceptions imposed by
 * SQLite: NaN is stored as NULL (and read back as {@link Double#NaN}), and -0.0 reads back as 0.0. Outcome
 * probabilities are raw float32 bits and always read back exactly.
 *
 * <p>Durability: WAL journal with {@code synchronous=NORMAL}. A commit appends the transaction to the WAL file with
 * a write system call before {@link #record} returns, so every committed transaction survives the process being
 * killed (kill -9, out of memory, a crash); fsync happens only at checkpoints, so an operating-system crash or power
 * loss can lose the last few committed transactions, but never leaves a half-written one or a corrupt file. Losing
 * them costs only decoding those sets again on resume (an evaluation and its charge to the run commit together), so
 * we do not pay an fsync per commit ({@code FULL}). Foreign keys are enforced, a busy timeout of 30 s lets another
 * process share the file, and every write is one {@code BEGIN IMMEDIATE} transaction.
 *
 * <p>Thread safety: one JDBC connection, every method (including those of {@link Run}) runs under one lock, so a
 * store may be shared by threads; calls are serialised.
 */
public final class ResultsStore implements AutoCloseable {
    /** The schema version this code writes and reads (older stores are migrated when opened). */
    public static final int SCHEMA_VERSION = StoreSchema.VERSION;

    /** The page size of new stores, in bytes. */
    public static final int PAGE_SIZE = 16384;

    /** Milliseconds a statement waits for another connection's lock before failing. */
    public static final int BUSY_TIMEOUT_MS = 30_000;

    /** The DDL of every schema step, one statement per element, in order (see {@code SCHEMA.md}). */
    public static final List<String> SCHEMA = StoreSchema.allStatements();

    private static final String RUNNING = "running";
    private static final String FINISHED = "finished";
    private static final int CHUNK = 500;
    private static final String KEY_WHERE = "model_hash = ? AND data_hash = ? AND preprocessing = ? AND lesion_mode = ?"
            + " AND mode_seed = ?";
    private static final String EVALUATION_COLUMNS = "id, model_hash, data_hash, preprocessing, lesion_mode, mode_seed,"
            + " set_hex, universe, n, correct, accuracy, balanced_accuracy, mean_true_prob, per_class_accuracy, chance,"
            + " wilson_low, wilson_high, p_value, wall_seconds, predicted, true_class_prob";

    private final Path file;
    private final Object lock = new Object();
    private Connection connection;

    private ResultsStore(Path file, Connection connection) {
        this.file = file;
        this.connection = connection;
    }

    /** Opens the store in {@code dbFile}, creating the file (and its folder) with the current schema when absent. */
    public static ResultsStore open(Path dbFile) {
        Path file = dbFile.toAbsolutePath().normalize();
        try {
            Path parent = file.getParent();
            if (parent != null) {
                Files.createDirectories(parent);
            }
        } catch (IOException e) {
            throw new StoreException(file, "cannot create the folder of the results store: " + e.getMessage(), e);
        }
        if (Files.isDirectory(file)) {
            throw new StoreException(file, "is a folder; expected a results store file (e.g. results.sqlite)");
        }
        Connection c = connect(file, false);
        try {
            Integer version = StoreSchema.readVersion(c, file);
            try (Statement s = c.createStatement()) {
                if (version == null) {
                    // Evaluation rows with outcomes take 1-4 KB; with 4 KB pages a row over half a page fills one
                    // alone. 16 KB pages hold several, about halving the file (set before the first table exists).
                    s.execute("PRAGMA page_size = " + PAGE_SIZE);
                }
                // A file system without shared memory keeps the old journal; commits stay durable against a
                // killed process in rollback-journal mode as well, so the store still opens.
                try (ResultSet r = s.executeQuery("PRAGMA journal_mode = WAL")) {
                    r.next();
                }
                s.execute("PRAGMA synchronous = NORMAL");
                s.execute("PRAGMA foreign_keys = ON");
            }
            StoreSchema.createOrMigrate(c, file);
            StoreSchema.readVersion(c, file);
            return new ResultsStore(file, c);
        } catch (SQLException e) {
            closeQuietly(c);
            throw new StoreException(file, "cannot open the results store: " + e.getMessage(), e);
        } catch (RuntimeException e) {
            closeQuietly(c);
            throw e;
        }
    }

    /** A read-only connection to an existing store after checking its schema version (for exports). */
    static Connection openReadOnly(Path dbFile) {
        Path file = dbFile.toAbsolutePath().normalize();
        if (!Files.isRegularFile(file)) {
            throw new StoreException(file, "results store not found");
        }
        Connection c = connect(file, true);
        try {
            if (StoreSchema.readVersion(c, file) == null) {
                throw new StoreException(file, "is not a Cruxset results store: the database is empty"
                        + " (expected a schema_version table with version " + SCHEMA_VERSION + ")");
            }
            return c;
        } catch (RuntimeException e) {
            closeQuietly(c);
            throw e;
        }
    }

    private static Connection connect(Path file, boolean readOnly) {
        SQLiteConfig config = new SQLiteConfig();
        config.setBusyTimeout(BUSY_TIMEOUT_MS);
        config.setReadOnly(readOnly);
        try {
            return DriverManager.getConnection("jdbc:sqlite:" + file, config.toProperties());
        } catch (SQLException e) {
            throw new StoreException(file, "cannot open the results store: " + e.getMessage(), e);
        }
    }

    /** The database file. */
    public Path file() {
        return file;
    }

    /**
     * Returns the run with {@code info.runKey()} as it was left (resumed; it must have the same kind, hashes,
     * preprocessing, mode and seeds, and keeps its first config), or starts a new one.
     */
    public Run beginOrResume(RunInfo info) {
        Objects.requireNonNull(info, "info");
        synchronized (lock) {
            return inTransaction("begin or resume run '" + info.runKey() + "'", c -> {
                Provenance p = info.provenance();
                int inserted;
                try (PreparedStatement ps = c.prepareStatement("INSERT INTO runs (run_key, kind, config, model_hash,"
                        + " data_hash, preprocessing, lesion_mode, mode_seed, seed, cruxset_version, jvm, os, arch,"
                        + " started_at, status, split_id) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)"
                        + " ON CONFLICT (run_key) DO NOTHING")) {
                    ps.setString(1, info.runKey());
                    ps.setString(2, info.kind());
                    ps.setString(3, info.config());
                    ps.setString(4, info.modelHash());
                    ps.setString(5, info.dataHash());
                    ps.setString(6, info.preprocessing());
                    ps.setString(7, info.mode().label());
                    ps.setLong(8, info.modeSeed());
                    ps.setLong(9, info.seed());
                    ps.setString(10, p.cruxsetVersion());
                    ps.setString(11, p.jvm());
                    ps.setString(12, p.os());
                    ps.setString(13, p.arch());
                    ps.setString(14, now());
                    ps.setString(15, RUNNING);
                    if (info.splitId() == null) {
                        ps.setNull(16, Types.INTEGER);
                    } else {
                        ps.setLong(16, info.splitId());
                    }
                    inserted = ps.executeUpdate();
                }
                long id;
                boolean finished;
                try (PreparedStatement ps = c.prepareStatement("SELECT id, kind, model_hash, data_hash, preprocessing,"
                        + " lesion_mode, mode_seed, seed, status, split_id FROM runs WHERE run_key = ?")) {
                    ps.setString(1, info.runKey());
                    try (ResultSet r = ps.executeQuery()) {
                        r.next();
                        id = r.getLong(1);
                        List<String> differ = new ArrayList<>();
                        compare(differ, "kind", r.getString(2), info.kind());
                        compare(differ, "model_hash", r.getString(3), info.modelHash());
                        compare(differ, "data_hash", r.getString(4), info.dataHash());
                        compare(differ, "preprocessing", r.getString(5), info.preprocessing());
                        compare(differ, "lesion_mode", r.getString(6), info.mode().label());
                        compare(differ, "mode_seed", Long.toString(r.getLong(7)), Long.toString(info.modeSeed()));
                        compare(differ, "seed", Long.toString(r.getLong(8)), Long.toString(info.seed()));
                        long split = r.getLong(10);
                        compare(differ, "split_id", r.wasNull() ? "NULL" : Long.toString(split),
                                info.splitId() == null ? "NULL" : Long.toString(info.splitId()));
                        if (!differ.isEmpty()) {
                            throw new StoreException(file, "run '" + info.runKey() + "' (id " + id + ") exists with "
                                    + "other settings: " + String.join("; ", differ)
                                    + "; a run key must name one command");
                        }
                        finished = FINISHED.equals(r.getString(9));
                    }
                }
                Run run = new Run(id, info.runKey(), inserted == 0, finished);
                if (run.resumed) {
                    loadPaid(c, run);
                }
                return run;
            });
        }
    }

    private static void compare(List<String> differ, String column, String stored, String given) {
        if (!stored.equals(given)) {
            differ.add(column + " is '" + stored + "' in the store, '" + given + "' now");
        }
    }

    private void loadPaid(Connection c, Run run) throws SQLException {
        try (PreparedStatement ps = c.prepareStatement(
                "SELECT count(*), total(cost) FROM (SELECT cost FROM run_evaluations WHERE run_id = ? ORDER BY position)")) {
            ps.setLong(1, run.id);
            try (ResultSet r = ps.executeQuery()) {
                r.next();
                run.count = r.getInt(1);
                run.spent = r.getDouble(2);
            }
        }
        try (PreparedStatement ps = c.prepareStatement("SELECT total(cost) FROM run_partials WHERE run_id = ?")) {
            ps.setLong(1, run.id);
            try (ResultSet r = ps.executeQuery()) {
                r.next();
                run.spent += r.getDouble(1);
            }
        }
    }

    /**
     * Registers the scored samples of {@code dataHash} in scoring order with their label names; registering the same
     * samples again does nothing, different ones fail.
     */
    public void registerDataset(String dataHash, List<String> sampleIds, List<String> subjects, List<String> labels) {
        register(dataHash, sampleIds, subjects, labels, null, null);
    }

    /**
     * Registers the scored samples of {@code dataHash} with the model's class names and each sample's class index,
     * so exports can tell whether each prediction was correct; idempotent like the other overload.
     */
    public void registerDataset(String dataHash, List<String> sampleIds, List<String> subjects,
                                List<String> classLabels, int[] labels) {
        List<String> names = new ArrayList<>(labels.length);
        for (int s = 0; s < labels.length; s++) {
            if (labels[s] < 0 || labels[s] >= classLabels.size()) {
                throw new IllegalArgumentException("dataset " + dataHash + ": sample " + s + " has class index "
                        + labels[s] + ", expected 0 to " + (classLabels.size() - 1));
            }
            names.add(classLabels.get(labels[s]));
        }
        register(dataHash, sampleIds, subjects, names, List.copyOf(classLabels), labels.clone());
    }

    /** Registers the samples of {@code inputs} under {@code dataHash}, with the model's classes. */
    public void registerDataset(String dataHash, ModelInputs inputs) {
        registerDataset(dataHash, inputs.sampleIds(), inputs.subjects(), inputs.classLabels(), inputs.labels());
    }

    private void register(String dataHash, List<String> sampleIds, List<String> subjects, List<String> labels,
                          List<String> classLabels, int[] labelIndex) {
        Objects.requireNonNull(dataHash, "dataHash");
        int n = sampleIds.size();
        if (subjects.size() != n || labels.size() != n) {
            throw new IllegalArgumentException("dataset " + dataHash + ": sampleIds, subjects and labels must have "
                    + "equal lengths, found " + n + ", " + subjects.size() + ", " + labels.size());
        }
        String classes = classLabels == null ? null : jsonStrings(classLabels);
        synchronized (lock) {
            inTransaction("register dataset " + dataHash, c -> {
                try (PreparedStatement ps = c.prepareStatement(
                        "SELECT samples, class_labels FROM datasets WHERE data_hash = ?")) {
                    ps.setString(1, dataHash);
                    try (ResultSet r = ps.executeQuery()) {
                        if (r.next()) {
                            checkSameDataset(c, dataHash, r.getInt(1), r.getString(2), sampleIds, subjects, labels,
                                    classes, labelIndex);
                            return null;
                        }
                    }
                }
                try (PreparedStatement ps = c.prepareStatement("INSERT INTO datasets (data_hash, samples, class_labels,"
                        + " registered_at) VALUES (?, ?, ?, ?)")) {
                    ps.setString(1, dataHash);
                    ps.setInt(2, n);
                    ps.setString(3, classes);
                    ps.setString(4, now());
                    ps.executeUpdate();
                }
                try (PreparedStatement ps = c.prepareStatement("INSERT INTO dataset_samples (data_hash, sample_index,"
                        + " sample_id, subject, label, label_index) VALUES (?, ?, ?, ?, ?, ?)")) {
                    for (int s = 0; s < n; s++) {
                        ps.setString(1, dataHash);
                        ps.setInt(2, s);
                        ps.setString(3, sampleIds.get(s));
                        ps.setString(4, subjects.get(s));
                        ps.setString(5, labels.get(s));
                        if (labelIndex == null) {
                            ps.setNull(6, Types.INTEGER);
                        } else {
                            ps.setInt(6, labelIndex[s]);
                        }
                        ps.addBatch();
                    }
                    ps.executeBatch();
                }
                return null;
            });
        }
    }

    /** Fails unless the stored samples match; adds the class indices when the stored dataset lacks them. */
    private void checkSameDataset(Connection c, String dataHash, int storedN, String storedClasses,
                                  List<String> sampleIds, List<String> subjects, List<String> labels,
                                  String classes, int[] labelIndex) throws SQLException {
        String what = "dataset " + dataHash + " is registered with other samples: ";
        if (storedN != sampleIds.size()) {
            throw new StoreException(file, what + storedN + " samples in the store, " + sampleIds.size() + " now");
        }
        if (storedClasses != null && classes != null && !storedClasses.equals(classes)) {
            throw new StoreException(file, what + "classes " + storedClasses + " in the store, " + classes + " now");
        }
        try (PreparedStatement ps = c.prepareStatement("SELECT sample_index, sample_id, subject, label, label_index"
                + " FROM dataset_samples WHERE data_hash = ? ORDER BY sample_index")) {
            ps.setString(1, dataHash);
            try (ResultSet r = ps.executeQuery()) {
                int s = 0;
                while (r.next()) {
                    int index = r.getInt(5);
                    boolean indexDiffers = !r.wasNull() && labelIndex != null && index != labelIndex[s];
                    if (r.getInt(1) != s || !r.getString(2).equals(sampleIds.get(s))
                            || !r.getString(3).equals(subjects.get(s)) || !r.getString(4).equals(labels.get(s))
                            || indexDiffers) {
                        throw new StoreException(file, what + "sample " + s + " is " + r.getString(2) + " (subject "
                                + r.getString(3) + ", label " + r.getString(4) + ") in the store, " + sampleIds.get(s)
                                + " (subject " + subjects.get(s) + ", label " + labels.get(s) + ") now");
                    }
                    s++;
                }
                if (s != storedN) {
                    throw new StoreException(file, "dataset " + dataHash + " lists " + storedN + " samples but "
                            + s + " sample rows are stored");
                }
            }
        }
        if (storedClasses == null && classes != null) {
            try (PreparedStatement ps = c.prepareStatement("UPDATE datasets SET class_labels = ? WHERE data_hash = ?")) {
                ps.setString(1, classes);
                ps.setString(2, dataHash);
                ps.executeUpdate();
            }
            try (PreparedStatement ps = c.prepareStatement(
                    "UPDATE dataset_samples SET label_index = ? WHERE data_hash = ? AND sample_index = ?")) {
                for (int s = 0; s < storedN; s++) {
                    ps.setInt(1, labelIndex[s]);
                    ps.setString(2, dataHash);
                    ps.setInt(3, s);
                    ps.addBatch();
                }
                ps.executeBatch();
            }
        }
    }

    /**
     * Records how held-out subjects were split into parts (both parts' datasets must be registered first) and
     * returns the split's id; recording the same split again returns the same id, and one with the same part data,
     * seed and fraction but other subjects fails.
     */
    public long registerSplit(PartSplit split) {
        Objects.requireNonNull(split, "split");
        synchronized (lock) {
            return inTransaction("record the split of held-out subjects (seed " + split.seed() + ")", c -> {
                try (PreparedStatement ps = c.prepareStatement("SELECT id FROM part_splits WHERE search_hash = ?"
                        + " AND confirm_hash IS ? AND split_seed = ? AND confirm_fraction = ?")) {
                    ps.setString(1, split.searchHash());
                    ps.setString(2, split.confirmationHash());
                    ps.setLong(3, split.seed());
                    ps.setDouble(4, split.confirmFraction());
                    try (ResultSet r = ps.executeQuery()) {
                        if (r.next()) {
                            long id = r.getLong(1);
                            PartSplit stored = readSplit(c, id);
                            if (!stored.equals(split)) {
                                throw new StoreException(file, "split " + id + " (seed " + split.seed()
                                        + ") is stored with other subjects: " + stored + " in the store, " + split
                                        + " now");
                            }
                            return id;
                        }
                    }
                }
                long id;
                try (PreparedStatement ps = c.prepareStatement("INSERT INTO part_splits (split_seed,"
                        + " confirm_fraction, search_hash, confirm_hash, created_at) VALUES (?, ?, ?, ?, ?)",
                        Statement.RETURN_GENERATED_KEYS)) {
                    ps.setLong(1, split.seed());
                    ps.setDouble(2, split.confirmFraction());
                    ps.setString(3, split.searchHash());
                    ps.setString(4, split.confirmationHash());
                    ps.setString(5, now());
                    ps.executeUpdate();
                    try (ResultSet k = ps.getGeneratedKeys()) {
                        k.next();
                        id = k.getLong(1);
                    }
                }
                try (PreparedStatement ps = c.prepareStatement(
                        "INSERT INTO part_subjects (split_id, subject, part) VALUES (?, ?, ?)")) {
                    for (String subject : split.searchSubjects()) {
                        ps.setLong(1, id);
                        ps.setString(2, subject);
                        ps.setString(3, PartSplit.SEARCH);
                        ps.addBatch();
                    }
                    for (String subject : split.confirmationSubjects()) {
                        ps.setLong(1, id);
                        ps.setString(2, subject);
                        ps.setString(3, PartSplit.CONFIRMATION);
                        ps.addBatch();
                    }
                    ps.executeBatch();
                }
                return id;
            });
        }
    }

    /** The split with row id {@code id}, or empty when there is none. */
    public java.util.Optional<PartSplit> split(long id) {
        synchronized (lock) {
            requireOpen();
            try {
                return java.util.Optional.ofNullable(readSplit(connection, id));
            } catch (SQLException e) {
                throw new StoreException(file, "cannot read split " + id + ": " + e.getMessage(), e);
            }
        }
    }

    /** The split a run scored under, or empty for a run without one (e.g. made by a version-1 store). */
    public java.util.Optional<PartSplit> splitOfRun(long runId) {
        synchronized (lock) {
            requireOpen();
            try (PreparedStatement ps = connection.prepareStatement("SELECT split_id FROM runs WHERE id = ?")) {
                ps.setLong(1, runId);
                try (ResultSet r = ps.executeQuery()) {
                    if (!r.next()) {
                        throw new StoreException(file, "no run with id " + runId);
                    }
                    long id = r.getLong(1);
                    return r.wasNull() ? java.util.Optional.empty() : java.util.Optional.ofNullable(readSplit(connection, id));
                }
            } catch (SQLException e) {
                throw new StoreException(file, "cannot read the split of run " + runId + ": " + e.getMessage(), e);
            }
        }
    }

    private PartSplit readSplit(Connection c, long id) throws SQLException {
        long seed;
        double fraction;
        String search;
        String confirm;
        try (PreparedStatement ps = c.prepareStatement("SELECT split_seed, confirm_fraction, search_hash,"
                + " confirm_hash FROM part_splits WHERE id = ?")) {
            ps.setLong(1, id);
            try (ResultSet r = ps.executeQuery()) {
                if (!r.next()) {
                    return null;
                }
                seed = r.getLong(1);
                fraction = r.getDouble(2);
                search = r.getString(3);
                confirm = r.getString(4);
            }
        }
        List<String> searchSubjects = new ArrayList<>();
        List<String> confirmSubjects = new ArrayList<>();
        try (PreparedStatement ps = c.prepareStatement(
                "SELECT subject, part FROM part_subjects WHERE split_id = ? ORDER BY subject")) {
            ps.setLong(1, id);
            try (ResultSet r = ps.executeQuery()) {
                while (r.next()) {
                    (PartSplit.SEARCH.equals(r.getString(2)) ? searchSubjects : confirmSubjects).add(r.getString(1));
                }
            }
        }
        return new PartSplit(seed, fraction, search, confirm, searchSubjects, confirmSubjects);
    }

    /** The keys among {@code keys} that {@code run} has already paid for (see {@link #lookup(Run, Collection)}). */
    public Set<EvaluationKey> paidAmong(Run run, Collection<EvaluationKey> keys) {
        Objects.requireNonNull(run, "run");
        Set<EvaluationKey> out = new HashSet<>();
        for (Stored st : lookup(run, keys).values()) {
            if (st.paid()) {
                out.add(st.key());
            }
        }
        return out;
    }

    /** The stored evaluations among {@code keys} (absent keys are left out), found with batched queries. */
    public Map<EvaluationKey, Stored> lookup(Collection<EvaluationKey> keys) {
        return lookup(null, keys);
    }

    /** A stored evaluation's set and counts, for training a model of the score on earlier runs' results. */
    public record EarlierScore(String setHex, int universe, int n, int correct, double meanTrueProbability) {
    }

    /**
     * The evaluations of the scoring context of {@code template} (same model, data, preprocessing, lesion mode and mode
     * seed; its set is ignored) that runs begun before {@code run} created before {@code run} began, in the order they
     * were stored: the same list at every resume of {@code run}, whatever later runs add.
     */
    public List<EarlierScore> earlierScores(Run run, EvaluationKey template) {
        synchronized (lock) {
            return inTransaction("read earlier evaluations for run " + run.id(), c -> {
                List<EarlierScore> out = new ArrayList<>();
                try (PreparedStatement ps = c.prepareStatement("SELECT e.set_hex, e.universe, e.n, e.correct, "
                        + "e.mean_true_prob FROM evaluations e WHERE e.model_hash = ? AND e.data_hash = ? AND "
                        + "e.preprocessing = ? AND e.lesion_mode = ? AND e.mode_seed = ? AND e.created_by_run < ? AND "
                        + "e.created_at <= (SELECT started_at FROM runs WHERE id = ?) ORDER BY e.id")) {
                    ps.setString(1, template.modelHash());
                    ps.setString(2, template.dataHash());
                    ps.setString(3, template.preprocessing());
                    ps.setString(4, template.mode().label());
                    ps.setLong(5, template.modeSeed());
                    ps.setLong(6, run.id());
                    ps.setLong(7, run.id());
                    try (ResultSet r = ps.executeQuery()) {
                        while (r.next()) {
                            double p = r.getDouble(5);
                            out.add(new EarlierScore(r.getString(1), r.getInt(2), r.getInt(3), r.getInt(4),
                                    r.wasNull() ? Double.NaN : p));
                        }
                    }
                }
                return out;
            });
        }
    }

    /** An exhaustive certificate of an earlier run: no set of at most {@code maxSize} regions within the pool is critical. */
    public record ExhaustiveCertificate(long runId, String poolHex, int maxSize) {
    }

    /**
     * The exhaustive certificates that holding runs begun before {@code run} recorded in the scoring context of
     * {@code template} (a run that scored a set on the same model, data, preprocessing, lesion mode and mode seed) under
     * the criterion labelled {@code criterion}: a certificate holds only for the criterion it was made with.
     */
    public List<ExhaustiveCertificate> exhaustiveCertificates(Run run, EvaluationKey template, String criterion) {
        synchronized (lock) {
            return inTransaction("read exhaustive certificates for run " + run.id(), c -> {
                List<ExhaustiveCertificate> out = new ArrayList<>();
                try (PreparedStatement ps = c.prepareStatement("SELECT ce.run_id, ce.pool_hex, ce.max_size FROM "
                        + "certificates ce JOIN searches s ON s.run_id = ce.run_id WHERE ce.kind = 'exhaustive' AND "
                        + "ce.holds = 1 AND ce.run_id < ? AND s.criterion = ? AND EXISTS (SELECT 1 FROM "
                        + "run_evaluations re JOIN evaluations e ON e.id = re.evaluation_id WHERE re.run_id = ce.run_id "
                        + "AND e.model_hash = ? AND e.data_hash = ? AND e.preprocessing = ? AND e.lesion_mode = ? AND "
                        + "e.mode_seed = ?) ORDER BY ce.id")) {
                    ps.setLong(1, run.id());
                    ps.setString(2, criterion);
                    ps.setString(3, template.modelHash());
                    ps.setString(4, template.dataHash());
                    ps.setString(5, template.preprocessing());
                    ps.setString(6, template.mode().label());
                    ps.setLong(7, template.modeSeed());
                    try (ResultSet r = ps.executeQuery()) {
                        while (r.next()) {
                            out.add(new ExhaustiveCertificate(r.getLong(1), r.getString(2), r.getInt(3)));
                        }
                    }
                }
                return out;
            });
        }
    }

    /**
     * The stored evaluations among {@code keys}, each with {@code run}'s budget spent once it paid for it
     * ({@link Stored#spentWhenPaid()}; NaN when {@code run} is null or has not paid for it), in one batched query
     * per chunk: what the scorer needs to tell a replay from a reuse.
     */
    public Map<EvaluationKey, Stored> lookup(Run run, Collection<EvaluationKey> keys) {
        Map<EvaluationKey, Stored> out = new HashMap<>();
        if (keys.isEmpty()) {
            return out;
        }
        synchronized (lock) {
            requireOpen();
            try {
                forEachChunk(keys, (group, chunk) -> {
                    Map<String, EvaluationKey> byHex = new HashMap<>();
                    for (EvaluationKey k : chunk) {
                        byHex.put(k.setHex(), k);
                    }
                    String sql = "SELECT " + EVALUATION_COLUMNS + ", coalesce(re.spent_after, re.position + 1)"
                            + " FROM evaluations LEFT JOIN run_evaluations re ON re.evaluation_id = evaluations.id"
                            + " AND re.run_id = ? WHERE " + KEY_WHERE + " AND set_hex IN ("
                            + placeholders(chunk.size()) + ")";
                    try (PreparedStatement ps = connection.prepareStatement(sql)) {
                        ps.setLong(1, run == null ? -1 : run.id);
                        int i = bindGroup(ps, group, 1);
                        for (EvaluationKey k : chunk) {
                            ps.setString(++i, k.setHex());
                        }
                        try (ResultSet r = ps.executeQuery()) {
                            while (r.next()) {
                                EvaluationKey k = byHex.get(r.getString(7));
                                if (r.getInt(8) != k.set().universe()) {
                                    throw new StoreException(file, "evaluation " + r.getLong(1) + " has set "
                                            + r.getString(7) + " over " + r.getInt(8) + " regions, but it was looked "
                                            + "up over " + k.set().universe() + " regions");
                                }
                                out.put(k, readStored(r, k, getReal(r, 22)));
                            }
                        }
                    }
                });
            } catch (SQLException e) {
                throw new StoreException(file, "cannot look up " + keys.size() + " evaluations: " + e.getMessage(), e);
            }
        }
        return out;
    }

    /**
     * Stores {@code fresh} evaluations (an existing row with the same key is kept) and charges {@code run}
     * {@code costEach} for each fresh and reused evaluation it has not paid for yet, all in one transaction; links
     * are numbered fresh ones first, then reused ones, each in list order.
     */
    public void record(Run run, List<NewEvaluation> fresh, List<EvaluationKey> reusedKeys, double costEach) {
        Objects.requireNonNull(run, "run");
        if (!(costEach >= 0) || Double.isInfinite(costEach)) {
            throw new IllegalArgumentException("costEach must be finite and at least 0, found " + costEach);
        }
        if (run.store() != this) {
            throw new IllegalArgumentException("run " + run.id + " belongs to another results store");
        }
        if (fresh.isEmpty() && reusedKeys.isEmpty()) {
            return;
        }
        synchronized (lock) {
            inTransaction("record " + fresh.size() + " new and " + reusedKeys.size() + " reused evaluations for run "
                    + run.id, c -> {
                Map<EvaluationKey, Boolean> links = new LinkedHashMap<>();
                String createdAt = now();
                try (PreparedStatement ins = c.prepareStatement("INSERT INTO evaluations (model_hash, data_hash,"
                        + " preprocessing, lesion_mode, mode_seed, set_hex, universe, set_size, region_names, n,"
                        + " correct, accuracy, balanced_accuracy, mean_true_prob, per_class_accuracy, chance,"
                        + " wilson_low, wilson_high, p_value, wall_seconds, predicted, true_class_prob, created_at,"
                        + " created_by_run) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?,"
                        + " ?, ?) ON CONFLICT DO NOTHING")) {
                    for (NewEvaluation e : fresh) {
                        bindNew(ins, e, createdAt, run.id);
                        int inserted = ins.executeUpdate();
                        links.merge(e.key(), inserted == 0, Boolean::logicalAnd);
                    }
                }
                for (EvaluationKey k : reusedKeys) {
                    links.putIfAbsent(k, Boolean.TRUE);
                }
                Map<EvaluationKey, Long> ids = ids(c, links.keySet());
                List<EvaluationKey> charged = new ArrayList<>();
                int position;
                try (PreparedStatement ps = c.prepareStatement(
                        "SELECT coalesce(max(position) + 1, 0) FROM run_evaluations WHERE run_id = ?")) {
                    ps.setLong(1, run.id);
                    try (ResultSet r = ps.executeQuery()) {
                        r.next();
                        position = r.getInt(1);
                    }
                }
                double spentSoFar = run.spent;
                try (PreparedStatement link = c.prepareStatement("INSERT INTO run_evaluations (run_id, evaluation_id,"
                        + " cost, reused, position, spent_after) VALUES (?, ?, ?, ?, ?, ?) ON CONFLICT (run_id,"
                        + " evaluation_id) DO NOTHING")) {
                    for (Map.Entry<EvaluationKey, Boolean> e : links.entrySet()) {
                        Long id = ids.get(e.getKey());
                        if (id == null) {
                            throw new IllegalArgumentException("reused evaluation " + describe(e.getKey())
                                    + " is not in the results store " + file);
                        }
                        link.setLong(1, run.id);
                        link.setLong(2, id);
                        link.setDouble(3, costEach);
                        link.setInt(4, e.getValue() ? 1 : 0);
                        link.setInt(5, position);
                        link.setDouble(6, spentSoFar + costEach);
                        if (link.executeUpdate() == 1) {
                            position++;
                            spentSoFar += costEach;
                            charged.add(e.getKey());
                        }
                    }
                }
                return charged;
            }, charged -> {
                for (int i = 0; i < charged.size(); i++) {
                    run.add(costEach);
                }
            });
        }
    }

    Map<EvaluationKey, Long> ids(Connection c, Collection<EvaluationKey> keys) throws SQLException {
        Map<EvaluationKey, Long> ids = new HashMap<>();
        forEachChunk(keys, (group, chunk) -> {
            Map<String, EvaluationKey> byHex = new HashMap<>();
            for (EvaluationKey k : chunk) {
                byHex.put(k.setHex(), k);
            }
            try (PreparedStatement ps = c.prepareStatement("SELECT id, set_hex FROM evaluations WHERE " + KEY_WHERE
                    + " AND set_hex IN (" + placeholders(chunk.size()) + ")")) {
                int i = bindGroup(ps, group);
                for (EvaluationKey k : chunk) {
                    ps.setString(++i, k.setHex());
                }
                try (ResultSet r = ps.executeQuery()) {
                    while (r.next()) {
                        ids.put(byHex.get(r.getString(2)), r.getLong(1));
                    }
                }
            }
        });
        return ids;
    }

    /**
     * The partial evaluations among {@code keys} in the sample order ({@code orderSeed}, {@code chunk}), each with the
     * prefix {@code run} has paid for (0 when none), in batched queries.
     */
    public Map<EvaluationKey, Partial> partials(Run run, Collection<EvaluationKey> keys, long orderSeed, int chunk) {
        Objects.requireNonNull(run, "run");
        Map<EvaluationKey, Partial> out = new HashMap<>();
        if (keys.isEmpty()) {
            return out;
        }
        synchronized (lock) {
            requireOpen();
            try {
                forEachChunk(keys, (group, part) -> {
                    Map<String, EvaluationKey> byHex = new HashMap<>();
                    for (EvaluationKey k : part) {
                        byHex.put(k.setHex(), k);
                    }
                    String sql = "SELECT p.id, p.set_hex, p.samples_done, p.predicted, p.true_class_prob,"
                            + " coalesce(rp.samples_paid, 0), rp.spent_after FROM partial_evaluations p LEFT JOIN run_partials rp"
                            + " ON rp.partial_id = p.id AND rp.run_id = ? WHERE " + KEY_WHERE.replace("model_hash",
                            "p.model_hash").replace("data_hash", "p.data_hash").replace("preprocessing",
                            "p.preprocessing").replace("lesion_mode", "p.lesion_mode").replace("mode_seed",
                            "p.mode_seed") + " AND p.order_seed = ? AND p.chunk = ? AND p.set_hex IN ("
                            + placeholders(part.size()) + ")";
                    try (PreparedStatement ps = connection.prepareStatement(sql)) {
                        ps.setLong(1, run.id);
                        int i = bindGroup(ps, group, 1);
                        ps.setLong(++i, orderSeed);
                        ps.setInt(++i, chunk);
                        for (EvaluationKey k : part) {
                            ps.setString(++i, k.setHex());
                        }
                        try (ResultSet r = ps.executeQuery()) {
                            while (r.next()) {
                                EvaluationKey k = byHex.get(r.getString(2));
                                Outcomes o = decodeOutcomes(file, r.getLong(1), r.getInt(3), r.getBytes(4),
                                        r.getBytes(5));
                                out.put(k, new Partial(k, orderSeed, chunk, o, r.getInt(6),
                                        parseSpent(r.getString(7))));
                            }
                        }
                    }
                });
            } catch (SQLException e) {
                throw new StoreException(file, "cannot look up " + keys.size() + " partial evaluations: "
                        + e.getMessage(), e);
            }
        }
        return out;
    }

    /**
     * Stores each update's outcomes (growing an existing partial evaluation, never shrinking it) and charges
     * {@code run} its cost for paying up to {@code samplesPaid} samples, all in one transaction: a killed run keeps
     * every committed chunk and pays for none twice.
     */
    public void recordPartials(Run run, List<PartialUpdate> updates) {
        Objects.requireNonNull(run, "run");
        if (run.store() != this) {
            throw new IllegalArgumentException("run " + run.id + " belongs to another results store");
        }
        if (updates.isEmpty()) {
            return;
        }
        synchronized (lock) {
            inTransaction("record " + updates.size() + " partial evaluations for run " + run.id, c -> {
                String at = now();
                double cost = 0;
                try (PreparedStatement ins = c.prepareStatement("INSERT INTO partial_evaluations (model_hash,"
                        + " data_hash, preprocessing, lesion_mode, mode_seed, set_hex, universe, order_seed, chunk,"
                        + " samples_done, predicted, true_class_prob, created_by_run, updated_at) VALUES (?, ?, ?, ?,"
                        + " ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT (model_hash, data_hash, preprocessing,"
                        + " lesion_mode, mode_seed, set_hex, order_seed, chunk) DO UPDATE SET samples_done ="
                        + " excluded.samples_done, predicted = excluded.predicted, true_class_prob ="
                        + " excluded.true_class_prob, updated_at = excluded.updated_at"
                        + " WHERE excluded.samples_done > partial_evaluations.samples_done");
                     PreparedStatement id = c.prepareStatement("SELECT id FROM partial_evaluations WHERE "
                        + KEY_WHERE + " AND set_hex = ? AND order_seed = ? AND chunk = ?");
                     PreparedStatement pay = c.prepareStatement("INSERT INTO run_partials (run_id, partial_id,"
                        + " samples_paid, cost, spent_after) VALUES (?, ?, ?, ?, ?) ON CONFLICT (run_id, partial_id)"
                        + " DO UPDATE SET samples_paid = excluded.samples_paid, cost = run_partials.cost"
                        + " + excluded.cost, spent_after = excluded.spent_after"
                        + " WHERE excluded.samples_paid > run_partials.samples_paid")) {
                    for (PartialUpdate u : updates) {
                        EvaluationKey k = u.key();
                        ins.setString(1, k.modelHash());
                        ins.setString(2, k.dataHash());
                        ins.setString(3, k.preprocessing());
                        ins.setString(4, k.mode().label());
                        ins.setLong(5, k.modeSeed());
                        ins.setString(6, k.setHex());
                        ins.setInt(7, k.set().universe());
                        ins.setLong(8, u.orderSeed());
                        ins.setInt(9, u.chunk());
                        ins.setInt(10, u.outcomes().size());
                        ins.setBytes(11, encodePredicted(u.outcomes()));
                        ins.setBytes(12, encodeProbabilities(u.outcomes()));
                        ins.setLong(13, run.id);
                        ins.setString(14, at);
                        ins.executeUpdate();
                        int i = bindGroup(id, k);
                        id.setString(++i, k.setHex());
                        id.setLong(++i, u.orderSeed());
                        id.setInt(++i, u.chunk());
                        long pid;
                        try (ResultSet r = id.executeQuery()) {
                            r.next();
                            pid = r.getLong(1);
                        }
                        pay.setLong(1, run.id);
                        pay.setLong(2, pid);
                        pay.setInt(3, u.samplesPaid());
                        pay.setDouble(4, u.cost());
                        pay.setString(5, joinSpent(u.spentAfter()));
                        if (pay.executeUpdate() == 1) {
                            cost += u.cost();
                        }
                    }
                }
                return cost;
            }, cost -> run.spent += cost);
        }
    }

    /** Budget snapshots as stored in {@code run_partials.spent_after}: space-separated doubles. */
    static String joinSpent(double[] spent) {
        StringBuilder sb = new StringBuilder();
        for (double v : spent) {
            sb.append(sb.length() == 0 ? "" : " ").append(v);
        }
        return sb.toString();
    }

    private double[] parseSpent(String text) {
        if (text == null || text.isBlank()) {
            return new double[0];
        }
        String[] parts = text.strip().split(" ");
        double[] out = new double[parts.length];
        for (int i = 0; i < parts.length; i++) {
            try {
                out[i] = Double.parseDouble(parts[i]);
            } catch (NumberFormatException e) {
                throw new StoreException(file, "run_partials.spent_after holds '" + parts[i] + "', expected numbers "
                        + "separated by spaces", e);
            }
        }
        return out;
    }

    /** Marks {@code run} finished now. */
    public void finish(Run run) {
        Objects.requireNonNull(run, "run");
        synchronized (lock) {
            inTransaction("finish run " + run.id, c -> {
                try (PreparedStatement ps = c.prepareStatement(
                        "UPDATE runs SET ended_at = ?, status = ? WHERE id = ?")) {
                    ps.setString(1, now());
                    ps.setString(2, FINISHED);
                    ps.setLong(3, run.id);
                    ps.executeUpdate();
                }
                return null;
            }, x -> run.finished = true);
        }
    }

    /** Number of stored evaluations. */
    public int countEvaluations() {
        return countWhere("SELECT count(*) FROM evaluations", null);
    }

    /** Number of evaluations run {@code runId} has paid for. */
    public int countRunEvaluations(long runId) {
        return countWhere("SELECT count(*) FROM run_evaluations WHERE run_id = ?", runId);
    }

    private int countWhere(String sql, Long arg) {
        synchronized (lock) {
            requireOpen();
            try (PreparedStatement ps = connection.prepareStatement(sql)) {
                if (arg != null) {
                    ps.setLong(1, arg);
                }
                try (ResultSet r = ps.executeQuery()) {
                    r.next();
                    return r.getInt(1);
                }
            } catch (SQLException e) {
                throw new StoreException(file, "cannot count rows: " + e.getMessage(), e);
            }
        }
    }

    /** Closes the connection; committed results are already on disk. */
    @Override
    public void close() {
        synchronized (lock) {
            if (connection != null) {
                try {
                    connection.close();
                } catch (SQLException e) {
                    throw new StoreException(file, "cannot close the results store: " + e.getMessage(), e);
                } finally {
                    connection = null;
                }
            }
        }
    }

    // ---- rows ----

    private static void bindNew(PreparedStatement ps, NewEvaluation e, String createdAt, long runId)
            throws SQLException {
        EvaluationKey k = e.key();
        SetScore s = e.score();
        ps.setString(1, k.modelHash());
        ps.setString(2, k.dataHash());
        ps.setString(3, k.preprocessing());
        ps.setString(4, k.mode().label());
        ps.setLong(5, k.modeSeed());
        ps.setString(6, k.setHex());
        ps.setInt(7, k.set().universe());
        ps.setInt(8, k.set().size());
        ps.setString(9, e.regionNames());
        ps.setInt(10, s.n());
        ps.setInt(11, s.correct());
        setReal(ps, 12, s.accuracy());
        setReal(ps, 13, s.balancedAccuracy());
        setReal(ps, 14, s.meanTrueClassProbability());
        ps.setString(15, jsonDoubles(s.perClassAccuracy()));
        setReal(ps, 16, s.chance());
        setReal(ps, 17, s.wilsonLow());
        setReal(ps, 18, s.wilsonHigh());
        setReal(ps, 19, s.pValue());
        ps.setDouble(20, e.wallSeconds());
        ps.setBytes(21, encodePredicted(e.outcomes()));
        ps.setBytes(22, encodeProbabilities(e.outcomes()));
        ps.setString(23, createdAt);
        ps.setLong(24, runId);
    }

    private Stored readStored(ResultSet r, EvaluationKey k, double spentWhenPaid) throws SQLException {
        long id = r.getLong(1);
        int n = r.getInt(9);
        SetScore score = new SetScore(n, r.getInt(10), getReal(r, 11), getReal(r, 12), getReal(r, 13),
                parseJsonDoubles(r.getString(14), id), getReal(r, 15), getReal(r, 16), getReal(r, 17),
                getReal(r, 18));
        Outcomes outcomes = decodeOutcomes(file, id, n, r.getBytes(20), r.getBytes(21));
        return new Stored(id, k, score, outcomes, r.getDouble(19), spentWhenPaid);
    }

    private static void setReal(PreparedStatement ps, int i, double v) throws SQLException {
        if (Double.isNaN(v)) {
            ps.setNull(i, Types.REAL);
        } else {
            ps.setDouble(i, v);
        }
    }

    /** A REAL column, NULL read as NaN. */
    static double getReal(ResultSet r, int i) throws SQLException {
        double v = r.getDouble(i);
        return r.wasNull() ? Double.NaN : v;
    }

    /** Predicted classes as int32 little-endian. */
    static byte[] encodePredicted(Outcomes o) {
        ByteBuffer b = ByteBuffer.allocate(4 * o.size()).order(ByteOrder.LITTLE_ENDIAN);
        for (int s = 0; s < o.size(); s++) {
            b.putInt(o.predicted(s));
        }
        return b.array();
    }

    /** True-class probabilities as float32 little-endian, raw bits. */
    static byte[] encodeProbabilities(Outcomes o) {
        ByteBuffer b = ByteBuffer.allocate(4 * o.size()).order(ByteOrder.LITTLE_ENDIAN);
        for (int s = 0; s < o.size(); s++) {
            b.putInt(Float.floatToRawIntBits(o.trueClassProbability(s)));
        }
        return b.array();
    }

    /** Decodes the two outcome BLOBs of evaluation {@code id}, checking they hold {@code n} values each. */
    static Outcomes decodeOutcomes(Path file, long id, int n, byte[] predicted, byte[] probabilities) {
        if (predicted == null || predicted.length != 4L * n || probabilities == null
                || probabilities.length != 4L * n) {
            throw new StoreException(file, "evaluation " + id + " has damaged outcomes: expected " + 4L * n
                    + " bytes in predicted and in true_class_prob for n = " + n + ", found "
                    + (predicted == null ? "NULL" : predicted.length) + " and "
                    + (probabilities == null ? "NULL" : probabilities.length));
        }
        ByteBuffer pb = ByteBuffer.wrap(predicted).order(ByteOrder.LITTLE_ENDIAN);
        ByteBuffer qb = ByteBuffer.wrap(probabilities).order(ByteOrder.LITTLE_ENDIAN);
        int[] pred = new int[n];
        float[] prob = new float[n];
        for (int s = 0; s < n; s++) {
            pred[s] = pb.getInt();
            prob[s] = Float.intBitsToFloat(qb.getInt());
        }
        return new Outcomes(pred, prob);
    }

    /** A JSON array of doubles, NaN as null, each written so it parses back to the same double. */
    static String jsonDoubles(double[] values) {
        StringBuilder sb = new StringBuilder("[");
        for (int i = 0; i < values.length; i++) {
            if (i > 0) {
                sb.append(',');
            }
            double v = values[i];
            if (Double.isNaN(v)) {
                sb.append("null");
            } else if (Double.isInfinite(v)) {
                throw new IllegalArgumentException("per-class accuracy must be finite or NaN, found " + v);
            } else {
                sb.append(v);
            }
        }
        return sb.append(']').toString();
    }

    private double[] parseJsonDoubles(String json, long id) {
        String t = json.strip();
        if (!t.startsWith("[") || !t.endsWith("]")) {
            throw new StoreException(file, "evaluation " + id + ": per_class_accuracy must be a JSON array, found "
                    + json);
        }
        String body = t.substring(1, t.length() - 1).strip();
        if (body.isEmpty()) {
            return new double[0];
        }
        String[] parts = body.split(",");
        double[] out = new double[parts.length];
        for (int i = 0; i < parts.length; i++) {
            String p = parts[i].strip();
            try {
                out[i] = p.equals("null") ? Double.NaN : Double.parseDouble(p);
            } catch (NumberFormatException e) {
                throw new StoreException(file, "evaluation " + id + ": per_class_accuracy holds '" + p
                        + "', expected a number or null", e);
            }
        }
        return out;
    }

    private static String jsonStrings(List<String> values) {
        StringBuilder sb = new StringBuilder("[");
        for (int i = 0; i < values.size(); i++) {
            if (i > 0) {
                sb.append(',');
            }
            sb.append('"');
            for (char ch : values.get(i).toCharArray()) {
                switch (ch) {
                    case '"' -> sb.append("\\\"");
                    case '\\' -> sb.append("\\\\");
                    default -> {
                        if (ch < 0x20) {
                            sb.append(String.format(Locale.ROOT, "\\u%04x", (int) ch));
                        } else {
                            sb.append(ch);
                        }
                    }
                }
            }
            sb.append('"');
        }
        return sb.append(']').toString();
    }

    private LesionMode parseMode(String label) {
        try {
            return LesionMode.parse(label);
        } catch (IllegalArgumentException e) {
            throw new StoreException(file, "unknown lesion mode in the store: " + e.getMessage(), e);
        }
    }

    private static String describe(EvaluationKey k) {
        return "set " + k.set() + " (" + k.setHex() + ", model " + k.modelHash() + ", data " + k.dataHash() + ", "
                + k.preprocessing() + ", " + k.mode().label() + " seed " + k.modeSeed() + ")";
    }

    static String now() {
        return Instant.now().toString();
    }

    // ---- chunked key queries ----

    private interface ChunkAction {
        void accept(EvaluationKey group, List<EvaluationKey> chunk) throws SQLException;
    }

    /** Groups keys by everything but the set, then hands out chunks of at most {@link #CHUNK} keys. */
    private static void forEachChunk(Collection<EvaluationKey> keys, ChunkAction action) throws SQLException {
        Map<List<Object>, List<EvaluationKey>> groups = new LinkedHashMap<>();
        for (EvaluationKey k : new LinkedHashSet<>(keys)) {
            groups.computeIfAbsent(List.of(k.modelHash(), k.dataHash(), k.preprocessing(), k.mode(), k.modeSeed()),
                    g -> new ArrayList<>()).add(k);
        }
        for (List<EvaluationKey> g : groups.values()) {
            Set<String> hexes = new HashSet<>();
            List<EvaluationKey> unique = new ArrayList<>();
            for (EvaluationKey k : g) {
                if (!hexes.add(k.setHex())) {
                    throw new IllegalArgumentException("two keys share set " + k.setHex() + " over different "
                            + "universes; the model hash must fix the universe");
                }
                unique.add(k);
            }
            for (int from = 0; from < unique.size(); from += CHUNK) {
                List<EvaluationKey> chunk = unique.subList(from, Math.min(unique.size(), from + CHUNK));
                action.accept(chunk.get(0), chunk);
            }
        }
    }

    private static int bindGroup(PreparedStatement ps, EvaluationKey g) throws SQLException {
        return bindGroup(ps, g, 0);
    }

    /** Binds the group's five key columns after {@code before} parameters; returns the last index bound. */
    private static int bindGroup(PreparedStatement ps, EvaluationKey g, int before) throws SQLException {
        ps.setString(before + 1, g.modelHash());
        ps.setString(before + 2, g.dataHash());
        ps.setString(before + 3, g.preprocessing());
        ps.setString(before + 4, g.mode().label());
        ps.setLong(before + 5, g.modeSeed());
        return before + 5;
    }

    private static String placeholders(int n) {
        return String.join(", ", java.util.Collections.nCopies(n, "?"));
    }

    // ---- transactions ----

    interface TxBody<T> {
        T run(Connection c) throws SQLException;
    }

    private interface AfterCommit<T> {
        void accept(T value);
    }

    <T> T inTransaction(String what, TxBody<T> body) {
        synchronized (lock) {
            return inTransaction(what, body, x -> {
            });
        }
    }

    /** Runs {@code body} in one {@code BEGIN IMMEDIATE} transaction, then {@code after} once it has committed. */
    private <T> T inTransaction(String what, TxBody<T> body, AfterCommit<T> after) {
        requireOpen();
        T value;
        try (Statement s = connection.createStatement()) {
            s.execute("BEGIN IMMEDIATE");
            try {
                value = body.run(connection);
                s.execute("COMMIT");
            } catch (SQLException | RuntimeException e) {
                rollbackQuietly(s);
                throw e;
            }
        } catch (SQLException e) {
            throw new StoreException(file, "cannot " + what + ": " + e.getMessage(), e);
        }
        after.accept(value);
        return value;
    }

    private static void rollbackQuietly(Statement s) {
        try {
            s.execute("ROLLBACK");
        } catch (SQLException ignored) {
            // The transaction was never started or SQLite already rolled it back.
        }
    }

    private static void closeQuietly(Connection c) {
        try {
            c.close();
        } catch (SQLException ignored) {
            // Opening already failed; that error is the one reported.
        }
    }

    private void requireOpen() {
        if (connection == null) {
            throw new IllegalStateException("the results store " + file + " is closed");
        }
    }

    // ---- values ----

    /** What a run is: its key (one per command), kind, full config, the evaluation identity it scores under, and seed. */
    public record RunInfo(String runKey, String kind, String config, String modelHash, String dataHash,
                          String preprocessing, LesionMode mode, long modeSeed, long seed, Provenance provenance,
                          Long splitId) {
        /** A run that scores without a recorded split of held-out subjects into parts. */
        public RunInfo(String runKey, String kind, String config, String modelHash, String dataHash,
                       String preprocessing, LesionMode mode, long modeSeed, long seed, Provenance provenance) {
            this(runKey, kind, config, modelHash, dataHash, preprocessing, mode, modeSeed, seed, provenance, null);
        }

        public RunInfo {
            Objects.requireNonNull(runKey, "runKey");
            Objects.requireNonNull(kind, "kind");
            Objects.requireNonNull(config, "config");
            Objects.requireNonNull(modelHash, "modelHash");
            Objects.requireNonNull(dataHash, "dataHash");
            Objects.requireNonNull(preprocessing, "preprocessing");
            Objects.requireNonNull(mode, "mode");
            Objects.requireNonNull(provenance, "provenance");
            if (runKey.isBlank()) {
                throw new IllegalArgumentException("runKey must not be blank");
            }
            if (!mode.isRandom()) {
                modeSeed = 0;
            }
        }
    }

    /**
     * An evaluation to store: its key, the set's region names comma-separated (for people reading the store), scores,
     * outcomes and wall time in seconds.
     */
    public record NewEvaluation(EvaluationKey key, String regionNames, SetScore score, Outcomes outcomes,
                                double wallSeconds) {
        public NewEvaluation {
            Objects.requireNonNull(key, "key");
            Objects.requireNonNull(regionNames, "regionNames");
            Objects.requireNonNull(score, "score");
            Objects.requireNonNull(outcomes, "outcomes");
            if (outcomes.size() != score.n()) {
                throw new IllegalArgumentException("the score is over " + score.n() + " samples but the outcomes "
                        + "hold " + outcomes.size());
            }
            if (!(wallSeconds >= 0) || Double.isInfinite(wallSeconds)) {
                throw new IllegalArgumentException("wallSeconds must be finite and at least 0, found " + wallSeconds);
            }
        }
    }

    /** A stored evaluation: its row id, key, scores, per-sample outcomes and the wall time it took. */
    public record Stored(long id, EvaluationKey key, SetScore score, Outcomes outcomes, double wallSeconds,
                         double spentWhenPaid) {
        public Stored {
            Objects.requireNonNull(key, "key");
            Objects.requireNonNull(score, "score");
            Objects.requireNonNull(outcomes, "outcomes");
        }

        /** Whether the run it was looked up for has paid for it. */
        public boolean paid() {
            return !Double.isNaN(spentWhenPaid);
        }
    }

    /**
     * A set scored on the first {@code outcomes.size()} samples of a race order ({@code orderSeed}, {@code chunk}):
     * their outcomes in that order, the prefix the run it was looked up for has paid for, and that run's budget spent
     * once it paid for each look (empty when it has paid for none).
     */
    public record Partial(EvaluationKey key, long orderSeed, int chunk, Outcomes outcomes, int samplesPaid,
                          double[] spentAfter) {
        public Partial {
            Objects.requireNonNull(key, "key");
            Objects.requireNonNull(outcomes, "outcomes");
        }
    }

    /**
     * A partial evaluation to store: the outcomes of the first {@code outcomes.size()} samples of the order, the
     * prefix the run has now paid for, what that payment costs (the samples newly paid, as a fraction of the part)
     * and the run's budget spent once it paid for each look so far.
     */
    public record PartialUpdate(EvaluationKey key, long orderSeed, int chunk, Outcomes outcomes, int samplesPaid,
                                double cost, double[] spentAfter) {
        public PartialUpdate {
            Objects.requireNonNull(key, "key");
            Objects.requireNonNull(outcomes, "outcomes");
            if (chunk < 1 || outcomes.size() < 1 || samplesPaid < 1 || samplesPaid > outcomes.size()) {
                throw new IllegalArgumentException("a partial update needs chunk >= 1 and 1 <= samplesPaid <= "
                        + "samples done, found chunk " + chunk + ", " + samplesPaid + " paid of "
                        + outcomes.size());
            }
            if (!(cost >= 0) || Double.isInfinite(cost)) {
                throw new IllegalArgumentException("cost must be finite and at least 0, found " + cost);
            }
        }
    }

    /** A run in this store and what it has paid for so far; read under the store's lock. */
    public final class Run {
        private final long id;
        private final String runKey;
        private final boolean resumed;
        private boolean finished;
        private int count;
        private double spent;

        private Run(long id, String runKey, boolean resumed, boolean finished) {
            this.id = id;
            this.runKey = runKey;
            this.resumed = resumed;
            this.finished = finished;
        }

        private ResultsStore store() {
            return ResultsStore.this;
        }

        private void add(double cost) {
            count++;
            spent += cost;
        }

        /** The row id in {@code runs}. */
        public long id() {
            return id;
        }

        /** The caller's key for the command. */
        public String runKey() {
            return runKey;
        }

        /** True when the run existed before {@link #beginOrResume} returned it. */
        public boolean resumed() {
            return resumed;
        }

        /** True when the run has been marked finished (by this session or an earlier one). */
        public boolean finished() {
            synchronized (lock) {
                return finished;
            }
        }

        /** The budget spent: the sum of the costs charged, in the order they were charged. */
        public double spent() {
            synchronized (lock) {
                return spent;
            }
        }

        /** Whether this run has already paid for {@code key} (one query; see {@link #paidAmong} for many). */
        public boolean paid(EvaluationKey key) {
            return paidAmong(this, List.of(key)).contains(key);
        }

        /** The number of evaluations this run has paid for. */
        public int count() {
            synchronized (lock) {
                return count;
            }
        }

        @Override
        public String toString() {
            return "run " + id + " '" + runKey + "'";
        }
    }

    /** A results store that cannot be opened, read or written; the message names the file. */
    public static final class StoreException extends RuntimeException {
        private static final long serialVersionUID = 1L;
        private final transient Path file;

        /** A problem with {@code file}. */
        public StoreException(Path file, String message) {
            super(file + ": " + message);
            this.file = file;
        }

        /** A problem with {@code file} caused by {@code cause}. */
        public StoreException(Path file, String message, Throwable cause) {
            super(file + ": " + message, cause);
            this.file = file;
        }

        /** The store file. */
        public Path file() {
            return file;
        }
    }
}
