package org.cruxset.scoring.store;

import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.sql.Types;
import java.time.Instant;
import java.util.ArrayList;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Objects;

/**
 * What a search run keeps in the results store besides its evaluations (schema version 3): its settings, budget,
 * time and status ({@code searches}), its anytime trace, its final front and reported sets, and certificates. All
 * sets are named by their {@link EvaluationKey}s, which must already be stored. A resumed search finds its row again;
 * trace entries are numbered, and an entry at a position already stored is ignored, so a replay that regenerates
 * the same trace writes nothing twice.
 */
public final class SearchRecords {
    // A certificate recorded again by a resumed run's replay is found, not duplicated.
    /** Statuses of a search: still running, finished by itself, or stopped by its budget or its time. */
    public static final List<String> STATUSES = List.of("running", "finished", "budget", "time");

    private final ResultsStore store;
    private final ResultsStore.Run run;

    /** The records of {@code run}'s search in {@code store}. */
    public SearchRecords(ResultsStore store, ResultsStore.Run run) {
        this.store = Objects.requireNonNull(store, "store");
        this.run = Objects.requireNonNull(run, "run");
    }

    /** A search's settings: strategy, its settings as one line, the criterion label, budget, time limit, deadline. */
    public record SearchInfo(String strategy, String settings, String criterion, Double budget, Double timeLimitSeconds,
                             Instant deadline) {
        public SearchInfo {
            Objects.requireNonNull(strategy, "strategy");
            Objects.requireNonNull(settings, "settings");
            Objects.requireNonNull(criterion, "criterion");
        }
    }

    /** Where a search stands: status, search time spent over all sessions, deadline, and trace entries stored. */
    public record SearchState(String status, double elapsedSeconds, Double timeLimitSeconds, Instant deadline,
                              int traceLength) {
    }

    /** One improvement of the front: after {@code setsCharged} scored sets, {@code key} became the best at its size. */
    public record TraceEntry(int position, double setsCharged, double elapsedSeconds, EvaluationKey key, int size,
                             boolean critical) {
    }

    /** The best set found at one size. */
    public record FrontEntry(EvaluationKey key, int size, boolean critical) {
    }

    /** A reported set: its rank, its search-part key, its confirmation-part key (nullable), its certificate (nullable). */
    public record ResultEntry(int rank, EvaluationKey key, EvaluationKey confirmKey, Long certificateId) {
    }

    /**
     * A certificate. {@code irreducible}: {@code set} is critical and none of {@code subsets} (every one-region-smaller
     * subset) is. {@code exhaustive}: no set of size at most {@code maxSize} within the pool {@code poolHex} is
     * critical ({@code set} and {@code subsets} empty).
     */
    public record Certificate(String kind, EvaluationKey set, String poolHex, Integer maxSize, boolean holds,
                              List<EvaluationKey> subsets) {
        public Certificate {
            if (!kind.equals("irreducible") && !kind.equals("exhaustive")) {
                throw new IllegalArgumentException("certificate kind must be irreducible or exhaustive, found " + kind);
            }
            subsets = List.copyOf(subsets);
        }
    }

    /** Starts the search's row, or finds it again when the run was resumed (its first settings are kept). */
    public SearchState begin(SearchInfo info) {
        return store.inTransaction("begin search of run " + run.id(), c -> {
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO searches (run_id, strategy, settings, criterion,"
                    + " budget, time_limit_seconds, deadline, elapsed_seconds, status) VALUES (?, ?, ?, ?, ?, ?, ?, 0,"
                    + " 'running') ON CONFLICT (run_id) DO NOTHING")) {
                ps.setLong(1, run.id());
                ps.setString(2, info.strategy());
                ps.setString(3, info.settings());
                ps.setString(4, info.criterion());
                setDouble(ps, 5, info.budget());
                setDouble(ps, 6, info.timeLimitSeconds());
                ps.setString(7, info.deadline() == null ? null : info.deadline().toString());
                ps.executeUpdate();
            }
            return state(c);
        });
    }

    private SearchState state(Connection c) throws SQLException {
        try (PreparedStatement ps = c.prepareStatement("SELECT status, elapsed_seconds, time_limit_seconds, deadline,"
                + " (SELECT count(*) FROM search_trace t WHERE t.run_id = s.run_id) FROM searches s WHERE run_id = ?")) {
            ps.setLong(1, run.id());
            try (ResultSet r = ps.executeQuery()) {
                r.next();
                double limit = r.getDouble(3);
                Double timeLimit = r.wasNull() ? null : limit;
                String deadline = r.getString(4);
                return new SearchState(r.getString(1), r.getDouble(2), timeLimit,
                        deadline == null ? null : Instant.parse(deadline), r.getInt(5));
            }
        }
    }

    /** Appends trace entries (an entry at a position already stored is ignored) and records the time spent. */
    public void progress(List<TraceEntry> entries, double elapsedSeconds) {
        store.inTransaction("record the trace of run " + run.id(), c -> {
            if (!entries.isEmpty()) {
                List<EvaluationKey> keys = new ArrayList<>();
                for (TraceEntry e : entries) {
                    keys.add(e.key());
                }
                Map<EvaluationKey, Long> ids = store.ids(c, new LinkedHashSet<>(keys));
                try (PreparedStatement ps = c.prepareStatement("INSERT INTO search_trace (run_id, position, sets_charged,"
                        + " elapsed_seconds, evaluation_id, set_size, critical) VALUES (?, ?, ?, ?, ?, ?, ?)"
                        + " ON CONFLICT DO NOTHING")) {
                    for (TraceEntry e : entries) {
                        ps.setLong(1, run.id());
                        ps.setInt(2, e.position());
                        ps.setDouble(3, e.setsCharged());
                        ps.setDouble(4, e.elapsedSeconds());
                        ps.setLong(5, id(ids, e.key()));
                        ps.setInt(6, e.size());
                        ps.setInt(7, e.critical() ? 1 : 0);
                        ps.addBatch();
                    }
                    ps.executeBatch();
                }
            }
            try (PreparedStatement ps = c.prepareStatement("UPDATE searches SET elapsed_seconds = ? WHERE run_id = ?")) {
                ps.setDouble(1, elapsedSeconds);
                ps.setLong(2, run.id());
                ps.executeUpdate();
            }
            return null;
        });
    }

    /**
     * One set a screened search skipped: where in the run's skips, the set, the surrogate's prediction, its sd and
     * the bound the decision used, the reason, and for a spot-checked skip the decoder's value and verdict.
     */
    public record Skip(int position, String setHex, int universe, int size, double predicted, double sd, double bound,
                       String reason, boolean spotChecked, Double checkedValue, Boolean checkedCritical) {
    }

    /**
     * Records a surrogate fit (the first record of a fit number wins: a resumed run's replay refits and writes
     * nothing twice).
     */
    public void surrogateFit(String purpose, int fit, int trainingSets, String model, double seconds) {
        store.inTransaction("record a surrogate fit of run " + run.id(), c -> {
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO surrogate_fits (run_id, purpose, fit, "
                    + "training_sets, model, seconds) VALUES (?, ?, ?, ?, ?, ?) ON CONFLICT DO NOTHING")) {
                ps.setLong(1, run.id());
                ps.setString(2, purpose);
                ps.setInt(3, fit);
                ps.setInt(4, trainingSets);
                ps.setString(5, model);
                ps.setDouble(6, seconds);
                ps.executeUpdate();
            }
            return null;
        });
    }

    /** Records how fit {@code fit} predicted the {@code sets} sets scored after it. */
    public void surrogateQuality(String purpose, int fit, int sets, double r2, double spearman, double coverage) {
        store.inTransaction("record a surrogate's quality for run " + run.id(), c -> {
            try (PreparedStatement ps = c.prepareStatement("UPDATE surrogate_fits SET next_sets = ?, r2 = ?, "
                    + "spearman = ?, coverage = ? WHERE run_id = ? AND purpose = ? AND fit = ? AND next_sets IS NULL")) {
                ps.setInt(1, sets);
                setNullable(ps, 2, r2);
                setNullable(ps, 3, spearman);
                setNullable(ps, 4, coverage);
                ps.setLong(5, run.id());
                ps.setString(6, purpose);
                ps.setInt(7, fit);
                ps.executeUpdate();
            }
            return null;
        });
    }

    /** Appends skips (a skip at a position already stored is ignored). */
    public void skips(List<Skip> skips) {
        if (skips.isEmpty()) {
            return;
        }
        store.inTransaction("record the skips of run " + run.id(), c -> {
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO search_skips (run_id, position, set_hex, "
                    + "universe, set_size, predicted, predicted_sd, bound, reason, spot_checked, checked_value, "
                    + "checked_critical) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT DO NOTHING")) {
                for (Skip k : skips) {
                    ps.setLong(1, run.id());
                    ps.setInt(2, k.position());
                    ps.setString(3, k.setHex());
                    ps.setInt(4, k.universe());
                    ps.setInt(5, k.size());
                    ps.setDouble(6, k.predicted());
                    ps.setDouble(7, k.sd());
                    ps.setDouble(8, k.bound());
                    ps.setString(9, k.reason());
                    ps.setInt(10, k.spotChecked() ? 1 : 0);
                    setNullable(ps, 11, k.checkedValue() == null ? Double.NaN : k.checkedValue());
                    if (k.checkedCritical() == null) {
                        ps.setNull(12, Types.INTEGER);
                    } else {
                        ps.setInt(12, k.checkedCritical() ? 1 : 0);
                    }
                    ps.addBatch();
                }
                ps.executeBatch();
            }
            return null;
        });
    }

    /** The skips of this run, in order. */
    public List<Skip> skips() {
        return store.inTransaction("read the skips of run " + run.id(), c -> {
            List<Skip> out = new ArrayList<>();
            try (PreparedStatement ps = c.prepareStatement("SELECT position, set_hex, universe, set_size, predicted, "
                    + "predicted_sd, bound, reason, spot_checked, checked_value, checked_critical FROM search_skips "
                    + "WHERE run_id = ? ORDER BY position")) {
                ps.setLong(1, run.id());
                try (ResultSet r = ps.executeQuery()) {
                    while (r.next()) {
                        double v = r.getDouble(10);
                        Double value = r.wasNull() ? null : v;
                        int k = r.getInt(11);
                        Boolean critical = r.wasNull() ? null : k == 1;
                        out.add(new Skip(r.getInt(1), r.getString(2), r.getInt(3), r.getInt(4), r.getDouble(5),
                                r.getDouble(6), r.getDouble(7), r.getString(8), r.getInt(9) == 1, value, critical));
                    }
                }
            }
            return out;
        });
    }

    private static void setNullable(PreparedStatement ps, int index, double v) throws SQLException {
        if (Double.isNaN(v)) {
            ps.setNull(index, Types.REAL);
        } else {
            ps.setDouble(index, v);
        }
    }

    /** Stores a certificate and returns its id. */
    public long certificate(Certificate cert) {
        return store.inTransaction("record a certificate of run " + run.id(), c -> {
            List<EvaluationKey> keys = new ArrayList<>(cert.subsets());
            if (cert.set() != null) {
                keys.add(cert.set());
            }
            Map<EvaluationKey, Long> ids = store.ids(c, new LinkedHashSet<>(keys));
            try (PreparedStatement ps = c.prepareStatement("SELECT id FROM certificates WHERE run_id = ? AND kind = ?"
                    + " AND evaluation_id IS ? AND pool_hex IS ? AND max_size IS ?")) {
                ps.setLong(1, run.id());
                ps.setString(2, cert.kind());
                ps.setObject(3, cert.set() == null ? null : id(ids, cert.set()));
                ps.setString(4, cert.poolHex());
                ps.setObject(5, cert.maxSize());
                try (ResultSet r = ps.executeQuery()) {
                    if (r.next()) {
                        return r.getLong(1);
                    }
                }
            }
            long id;
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO certificates (run_id, kind, evaluation_id,"
                    + " pool_hex, max_size, holds) VALUES (?, ?, ?, ?, ?, ?)", Statement.RETURN_GENERATED_KEYS)) {
                ps.setLong(1, run.id());
                ps.setString(2, cert.kind());
                if (cert.set() == null) {
                    ps.setNull(3, Types.INTEGER);
                } else {
                    ps.setLong(3, id(ids, cert.set()));
                }
                ps.setString(4, cert.poolHex());
                if (cert.maxSize() == null) {
                    ps.setNull(5, Types.INTEGER);
                } else {
                    ps.setInt(5, cert.maxSize());
                }
                ps.setInt(6, cert.holds() ? 1 : 0);
                ps.executeUpdate();
                try (ResultSet k = ps.getGeneratedKeys()) {
                    k.next();
                    id = k.getLong(1);
                }
            }
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO certificate_subsets (certificate_id,"
                    + " evaluation_id) VALUES (?, ?) ON CONFLICT DO NOTHING")) {
                for (EvaluationKey k : cert.subsets()) {
                    ps.setLong(1, id);
                    ps.setLong(2, id(ids, k));
                    ps.addBatch();
                }
                ps.executeBatch();
            }
            return id;
        });
    }

    /**
     * Ends the search: its status, time spent and best critical size (nullable), its front and reported sets
     * (replacing any written by an earlier session of the same run).
     */
    public void finish(String status, double elapsedSeconds, Integer bestSize, List<FrontEntry> front,
                       List<ResultEntry> results) {
        if (!STATUSES.contains(status)) {
            throw new IllegalArgumentException("search status must be one of " + STATUSES + ", found " + status);
        }
        store.inTransaction("finish the search of run " + run.id(), c -> {
            List<EvaluationKey> keys = new ArrayList<>();
            for (FrontEntry f : front) {
                keys.add(f.key());
            }
            for (ResultEntry r : results) {
                keys.add(r.key());
                if (r.confirmKey() != null) {
                    keys.add(r.confirmKey());
                }
            }
            Map<EvaluationKey, Long> ids = store.ids(c, new LinkedHashSet<>(keys));
            try (PreparedStatement ps = c.prepareStatement("UPDATE searches SET status = ?, elapsed_seconds = ?,"
                    + " best_size = ? WHERE run_id = ?")) {
                ps.setString(1, status);
                ps.setDouble(2, elapsedSeconds);
                if (bestSize == null) {
                    ps.setNull(3, Types.INTEGER);
                } else {
                    ps.setInt(3, bestSize);
                }
                ps.setLong(4, run.id());
                ps.executeUpdate();
            }
            for (String table : List.of("search_front", "search_results")) {
                try (PreparedStatement ps = c.prepareStatement("DELETE FROM " + table + " WHERE run_id = ?")) {
                    ps.setLong(1, run.id());
                    ps.executeUpdate();
                }
            }
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO search_front (run_id, set_size, evaluation_id,"
                    + " critical) VALUES (?, ?, ?, ?)")) {
                for (FrontEntry f : front) {
                    ps.setLong(1, run.id());
                    ps.setInt(2, f.size());
                    ps.setLong(3, id(ids, f.key()));
                    ps.setInt(4, f.critical() ? 1 : 0);
                    ps.addBatch();
                }
                ps.executeBatch();
            }
            try (PreparedStatement ps = c.prepareStatement("INSERT INTO search_results (run_id, rank, evaluation_id,"
                    + " confirm_evaluation_id, certificate_id) VALUES (?, ?, ?, ?, ?)")) {
                for (ResultEntry r : results) {
                    ps.setLong(1, run.id());
                    ps.setInt(2, r.rank());
                    ps.setLong(3, id(ids, r.key()));
                    if (r.confirmKey() == null) {
                        ps.setNull(4, Types.INTEGER);
                    } else {
                        ps.setLong(4, id(ids, r.confirmKey()));
                    }
                    if (r.certificateId() == null) {
                        ps.setNull(5, Types.INTEGER);
                    } else {
                        ps.setLong(5, r.certificateId());
                    }
                    ps.addBatch();
                }
                ps.executeBatch();
            }
            return null;
        });
    }

    /** The current state of the search (after {@link #begin}). */
    public SearchState state() {
        return store.inTransaction("read the search of run " + run.id(), this::state);
    }

    private long id(Map<EvaluationKey, Long> ids, EvaluationKey key) {
        Long id = ids.get(key);
        if (id == null) {
            throw new IllegalArgumentException("evaluation " + key.setHex() + " is not in the results store "
                    + store.file() + "; store a set before recording it in a search");
        }
        return id;
    }

    private static void setDouble(PreparedStatement ps, int i, Double v) throws SQLException {
        if (v == null) {
            ps.setNull(i, Types.REAL);
        } else {
            ps.setDouble(i, v);
        }
    }
}
