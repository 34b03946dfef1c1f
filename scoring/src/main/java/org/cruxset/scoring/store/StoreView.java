package org.cruxset.scoring.store;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.SetScore;

/**
 * A read-only snapshot of what a results store says about one scoring context, for reports: the intact decoder on
 * both parts with its confusion matrix, and every search run with its anytime trace, front and reported sets. Reads
 * without migrating and without a decoder, so a report can be rebuilt at any time.
 */
public final class StoreView {
    /** One evaluation row's scores. */
    public record Eval(long id, int setSize, String regionNames, int n, int correct, double accuracy,
                       double meanTrueProb, double chance, double wilsonLow, double wilsonHigh, double pValue) {
        /** The row as a score (per-class accuracies and balanced accuracy are not read). */
        public SetScore score() {
            return new SetScore(n, correct, accuracy, Double.NaN, meanTrueProb, new double[0], chance, wilsonLow,
                    wilsonHigh, pValue);
        }
    }

    /** A point of a run's anytime trace: after {@code charged} sets the best set of {@code size} improved, to {@code accuracy}. */
    public record TracePoint(double charged, int size, boolean critical, double accuracy) {
    }

    /** A reported set: its search-part and confirmation-part scores and its certificate. */
    public record Reported(int rank, Eval search, Eval confirm, Boolean confirmCritical, String certificate,
                           Boolean certificateHolds) {
    }

    /** One search run in the context. */
    public record SearchRun(long runId, String kind, String label, long seed, String strategy, String criterion,
                            Double budget, String status, Integer bestSize, double charged, List<TracePoint> trace,
                            List<Eval> front, List<Boolean> frontCritical, List<Reported> reported) {
    }

    /**
     * What the report shows: the context it chose, the intact scores, the confusion matrix of the intact decoder on
     * the search part (rows: true class, columns: predicted; {@code null} without class indices) and the searches.
     */
    public record Snapshot(Path file, String modelHash, String searchHash, String confirmHash, String lesionMode,
                           String preprocessing, Eval intact, Eval intactConfirm, List<String> classes,
                           int[][] confusion, List<SearchRun> searches, int runs) {
    }

    private StoreView() {
    }

    /**
     * Reads the context of the latest run that searched (else the latest run of any kind) in {@code dbFile}.
     *
     * @throws ResultsStore.StoreException naming the file when it is missing, not a store, or holds no run
     */
    public static Snapshot read(Path dbFile) {
        Path file = dbFile.toAbsolutePath().normalize();
        try (Connection c = ResultsStore.openReadOnly(file); Statement s = c.createStatement()) {
            s.execute("BEGIN");
            try {
                int version = StoreSchema.readVersion(c, file);
                return read(c, file, version);
            } finally {
                s.execute("ROLLBACK");
            }
        } catch (SQLException e) {
            throw new ResultsStore.StoreException(file, "cannot read for the report: " + e.getMessage(), e);
        }
    }

    private static Snapshot read(Connection c, Path file, int version) throws SQLException {
        String pick = version >= 3
                ? "SELECT r.id FROM runs r LEFT JOIN searches s ON s.run_id = r.id ORDER BY (s.run_id IS NOT NULL) DESC, r.id DESC LIMIT 1"
                : "SELECT id FROM runs ORDER BY id DESC LIMIT 1";
        long latest;
        try (Statement s = c.createStatement(); ResultSet r = s.executeQuery(pick)) {
            if (!r.next()) {
                throw new ResultsStore.StoreException(file, "holds no run yet: run score, search or compare with this "
                        + "--out first");
            }
            latest = r.getLong(1);
        }
        String model;
        String data;
        String pre;
        String mode;
        long modeSeed;
        Long split = null;
        try (PreparedStatement p = c.prepareStatement("SELECT model_hash, data_hash, preprocessing, lesion_mode, "
                + "mode_seed" + (version >= 2 ? ", split_id" : "") + " FROM runs WHERE id = ?")) {
            p.setLong(1, latest);
            try (ResultSet r = p.executeQuery()) {
                r.next();
                model = r.getString(1);
                data = r.getString(2);
                pre = r.getString(3);
                mode = r.getString(4);
                modeSeed = r.getLong(5);
                if (version >= 2) {
                    long v = r.getLong(6);
                    split = r.wasNull() ? null : v;
                }
            }
        }
        String confirmHash = null;
        if (split != null) {
            try (PreparedStatement p = c.prepareStatement("SELECT confirm_hash FROM part_splits WHERE id = ?")) {
                p.setLong(1, split);
                try (ResultSet r = p.executeQuery()) {
                    confirmHash = r.next() ? r.getString(1) : null;
                }
            }
        }
        Key key = new Key(model, pre, mode, modeSeed);
        Eval intact = intact(c, key, data);
        Eval intactConfirm = confirmHash == null ? null : intact(c, key, confirmHash);
        List<String> classes = classes(c, data);
        int[][] confusion = intact == null ? null : confusion(c, intact.id(), data, classes.size());
        List<SearchRun> searches = version >= 3 ? searches(c, key, data, intactConfirm) : List.of();
        int runs;
        try (PreparedStatement p = c.prepareStatement("SELECT count(*) FROM runs WHERE model_hash = ? AND data_hash = ?"
                + " AND preprocessing = ? AND lesion_mode = ? AND mode_seed = ?")) {
            key.bind(p, 1, data);
            try (ResultSet r = p.executeQuery()) {
                r.next();
                runs = r.getInt(1);
            }
        }
        return new Snapshot(file, model, data, confirmHash, mode, pre, intact, intactConfirm, classes, confusion,
                searches, runs);
    }

    private record Key(String model, String preprocessing, String mode, long modeSeed) {
        void bind(PreparedStatement p, int from, String data) throws SQLException {
            p.setString(from, model);
            p.setString(from + 1, data);
            p.setString(from + 2, preprocessing);
            p.setString(from + 3, mode);
            p.setLong(from + 4, modeSeed);
        }
    }

    private static final String EVAL_COLUMNS = "e.id, e.set_size, e.region_names, e.n, e.correct, e.accuracy, "
            + "e.mean_true_prob, e.chance, e.wilson_low, e.wilson_high, e.p_value";

    private static Eval eval(ResultSet r, int from) throws SQLException {
        return new Eval(r.getLong(from), r.getInt(from + 1), r.getString(from + 2), r.getInt(from + 3),
                r.getInt(from + 4), ResultsStore.getReal(r, from + 5), ResultsStore.getReal(r, from + 6),
                ResultsStore.getReal(r, from + 7), ResultsStore.getReal(r, from + 8), ResultsStore.getReal(r, from + 9),
                ResultsStore.getReal(r, from + 10));
    }

    private static Eval intact(Connection c, Key key, String data) throws SQLException {
        try (PreparedStatement p = c.prepareStatement("SELECT " + EVAL_COLUMNS + " FROM evaluations e WHERE "
                + "e.model_hash = ? AND e.data_hash = ? AND e.preprocessing = ? AND e.lesion_mode = ? AND "
                + "e.mode_seed = ? AND e.set_size = 0")) {
            key.bind(p, 1, data);
            try (ResultSet r = p.executeQuery()) {
                return r.next() ? eval(r, 1) : null;
            }
        }
    }

    private static List<String> classes(Connection c, String data) throws SQLException {
        try (PreparedStatement p = c.prepareStatement("SELECT class_labels FROM datasets WHERE data_hash = ?")) {
            p.setString(1, data);
            try (ResultSet r = p.executeQuery()) {
                String json = r.next() ? r.getString(1) : null;
                return json == null ? List.of() : TsvExport.parseJsonStrings(json);
            }
        }
    }

    private static int[][] confusion(Connection c, long evaluation, String data, int classes) throws SQLException {
        if (classes == 0) {
            return null;
        }
        List<Integer> truth = new ArrayList<>();
        try (PreparedStatement p = c.prepareStatement("SELECT label_index FROM dataset_samples WHERE data_hash = ? "
                + "ORDER BY sample_index")) {
            p.setString(1, data);
            try (ResultSet r = p.executeQuery()) {
                while (r.next()) {
                    int v = r.getInt(1);
                    if (r.wasNull()) {
                        return null;
                    }
                    truth.add(v);
                }
            }
        }
        byte[] predicted;
        try (PreparedStatement p = c.prepareStatement("SELECT predicted FROM evaluations WHERE id = ?")) {
            p.setLong(1, evaluation);
            try (ResultSet r = p.executeQuery()) {
                predicted = r.next() ? r.getBytes(1) : null;
            }
        }
        if (predicted == null || predicted.length != 4 * truth.size()) {
            return null;
        }
        ByteBuffer b = ByteBuffer.wrap(predicted).order(ByteOrder.LITTLE_ENDIAN);
        int[][] m = new int[classes][classes];
        for (int t : truth) {
            int q = b.getInt();
            if (t >= 0 && t < classes && q >= 0 && q < classes) {
                m[t][q]++;
            }
        }
        return m;
    }

    private static List<SearchRun> searches(Connection c, Key key, String data, Eval intactConfirm)
            throws SQLException {
        List<SearchRun> out = new ArrayList<>();
        try (PreparedStatement p = c.prepareStatement("SELECT r.id, r.kind, r.config, r.seed, s.strategy, s.criterion,"
                + " s.budget, s.status, s.best_size FROM runs r JOIN searches s ON s.run_id = r.id WHERE"
                + " r.model_hash = ? AND r.data_hash = ? AND r.preprocessing = ? AND r.lesion_mode = ?"
                + " AND r.mode_seed = ? ORDER BY r.id")) {
            key.bind(p, 1, data);
            try (ResultSet r = p.executeQuery()) {
                while (r.next()) {
                    long id = r.getLong(1);
                    String kind = r.getString(2);
                    String config = r.getString(3);
                    String strategy = r.getString(5);
                    double budget = r.getDouble(7);
                    Double b = r.wasNull() ? null : budget;
                    int best = r.getInt(9);
                    Integer bestSize = r.wasNull() ? null : best;
                    out.add(new SearchRun(id, kind, label(kind, config, strategy), r.getLong(4), strategy,
                            r.getString(6), b, r.getString(8), bestSize, 0, List.of(), List.of(), List.of(), List.of()));
                }
            }
        }
        List<SearchRun> full = new ArrayList<>();
        for (SearchRun s : out) {
            full.add(complete(c, s, intactConfirm));
        }
        return full;
    }

    /** A compare run is labelled by the strategy as compare named it (e.g. {@code genetic~race}). */
    static String label(String kind, String config, String strategy) {
        if ("compare".equals(kind) && config != null && config.startsWith("compare ")) {
            String rest = config.substring("compare ".length());
            int sp = rest.indexOf(' ');
            return sp < 0 ? rest : rest.substring(0, sp);
        }
        return strategy;
    }

    private static SearchRun complete(Connection c, SearchRun s, Eval intactConfirm) throws SQLException {
        double charged = 0;
        try (PreparedStatement p = c.prepareStatement("SELECT (SELECT total(cost) FROM run_evaluations WHERE run_id = ?)"
                + " + coalesce((SELECT total(cost) FROM run_partials WHERE run_id = ?), 0)")) {
            p.setLong(1, s.runId());
            p.setLong(2, s.runId());
            try (ResultSet r = p.executeQuery()) {
                charged = r.next() ? r.getDouble(1) : 0;
            }
        } catch (SQLException e) {
            // A version-3 store has no run_partials.
            try (PreparedStatement p = c.prepareStatement("SELECT total(cost) FROM run_evaluations WHERE run_id = ?")) {
                p.setLong(1, s.runId());
                try (ResultSet r = p.executeQuery()) {
                    charged = r.next() ? r.getDouble(1) : 0;
                }
            }
        }
        List<TracePoint> trace = new ArrayList<>();
        try (PreparedStatement p = c.prepareStatement("SELECT t.sets_charged, t.set_size, t.critical, e.correct, e.n "
                + "FROM search_trace t JOIN evaluations e ON e.id = t.evaluation_id WHERE t.run_id = ? "
                + "ORDER BY t.position")) {
            p.setLong(1, s.runId());
            try (ResultSet r = p.executeQuery()) {
                while (r.next()) {
                    trace.add(new TracePoint(r.getDouble(1), r.getInt(2), r.getInt(3) == 1,
                            (double) r.getInt(4) / r.getInt(5)));
                }
            }
        }
        List<Eval> front = new ArrayList<>();
        List<Boolean> frontCritical = new ArrayList<>();
        try (PreparedStatement p = c.prepareStatement("SELECT " + EVAL_COLUMNS + ", f.critical FROM search_front f "
                + "JOIN evaluations e ON e.id = f.evaluation_id WHERE f.run_id = ? ORDER BY f.set_size")) {
            p.setLong(1, s.runId());
            try (ResultSet r = p.executeQuery()) {
                while (r.next()) {
                    front.add(eval(r, 1));
                    frontCritical.add(r.getInt(12) == 1);
                }
            }
        }
        CollapseCriterion criterion = CollapseCriterion.parse(s.criterion());
        List<Reported> reported = new ArrayList<>();
        try (PreparedStatement p = c.prepareStatement("SELECT sr.rank, " + EVAL_COLUMNS + ", sr.confirm_evaluation_id,"
                + " ce.kind, ce.holds FROM search_results sr JOIN evaluations e ON e.id = sr.evaluation_id"
                + " LEFT JOIN certificates ce ON ce.id = sr.certificate_id WHERE sr.run_id = ? ORDER BY sr.rank")) {
            p.setLong(1, s.runId());
            try (ResultSet r = p.executeQuery()) {
                while (r.next()) {
                    Eval search = eval(r, 2);
                    long confirmId = r.getLong(13);
                    Long cid = r.wasNull() ? null : confirmId;
                    String kind = r.getString(14);
                    int holds = r.getInt(15);
                    Boolean h = r.wasNull() ? null : holds == 1;
                    Eval confirm = cid == null ? null : byId(c, cid);
                    Boolean confirmCritical = confirm == null || intactConfirm == null ? null
                            : confirm.correct() <= criterion.criticalCount(confirm.n(), intactConfirm.chance(),
                                    intactConfirm.score());
                    reported.add(new Reported(r.getInt(1), search, confirm, confirmCritical, kind, h));
                }
            }
        }
        return new SearchRun(s.runId(), s.kind(), s.label(), s.seed(), s.strategy(), s.criterion(), s.budget(),
                s.status(), s.bestSize(), charged, List.copyOf(trace), List.copyOf(front), List.copyOf(frontCritical),
                List.copyOf(reported));
    }

    private static Eval byId(Connection c, long id) throws SQLException {
        try (PreparedStatement p = c.prepareStatement("SELECT " + EVAL_COLUMNS + " FROM evaluations e WHERE e.id = ?")) {
            p.setLong(1, id);
            try (ResultSet r = p.executeQuery()) {
                return r.next() ? eval(r, 1) : null;
            }
        }
    }
}
