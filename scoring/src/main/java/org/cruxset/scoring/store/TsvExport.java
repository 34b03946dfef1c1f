package org.cruxset.scoring.store;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.AtomicMoveNotSupportedException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.sql.Connection;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.cruxset.scoring.eval.Outcomes;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Writes the tables of a results store as UTF-8 tab-separated files with a header row, for reading from Python
 * ({@code pandas.read_csv(f, sep="\t")}, {@code csv.reader(f, delimiter="\t")}) or R ({@code read.delim(f)}):
 * {@code runs.tsv}, {@code evaluations.tsv}, {@code run_evaluations.tsv}, {@code outcomes.tsv} (one row per
 * evaluation and sample), {@code datasets.tsv} (one row per registered sample), {@code part_splits.tsv} (one row per
 * split of held-out subjects into a search and a confirmation part) and {@code part_subjects.tsv} (each subject's
 * part). A store of an older schema version is exported as it is, without migrating it: what it lacks (e.g. the
 * splits of a version-1 store) is written as empty fields or header-only files.
 *
 * <p>A NULL (and a NaN score) is an empty field; doubles are written by {@link Double#toString(double)}, which parses
 * back to the same double; true-class probabilities (float32 in the store) are written as the exact double value of
 * the float, so they parse back to the same value as float32 or float64; infinities are {@code inf}/{@code -inf}. A
 * field holding a tab, line break or double quote is quoted CSV-style ({@code "..."} with inner quotes doubled), which
 * both readers above undo. Each file is written beside its final name and moved into place, and all of them come from
 * one read transaction, so they agree with each other even while a run is writing to the store.
 */
public final class TsvExport {
    /** The files written, in writing order. */
    public static final List<String> FILES = List.of("runs.tsv", "evaluations.tsv", "run_evaluations.tsv",
            "outcomes.tsv", "datasets.tsv", "part_splits.tsv", "part_subjects.tsv", "searches.tsv", "search_trace.tsv",
            "search_front.tsv", "search_results.tsv", "certificates.tsv", "certificate_subsets.tsv",
            "partial_evaluations.tsv", "run_partials.tsv", "surrogate_fits.tsv", "search_skips.tsv");

    /** The search tables of schema version 3, each exported whole, ordered by these columns. */
    private static final List<String[]> SEARCH_TABLES = List.of(
            new String[] {"searches", "run_id"},
            new String[] {"search_trace", "run_id, position"},
            new String[] {"search_front", "run_id, set_size"},
            new String[] {"search_results", "run_id, rank"},
            new String[] {"certificates", "id"},
            new String[] {"certificate_subsets", "certificate_id, evaluation_id"});

    private TsvExport() {
    }

    /** Writes the TSV views of the store in {@code dbFile} into {@code outDir} (created when absent). */
    public static void export(Path dbFile, Path outDir) {
        Path file = dbFile.toAbsolutePath().normalize();
        try {
            Files.createDirectories(outDir);
        } catch (IOException e) {
            throw new UncheckedIOException("cannot create the export folder " + outDir + ": " + e.getMessage(), e);
        }
        try (Connection c = ResultsStore.openReadOnly(file); Statement s = c.createStatement()) {
            s.execute("BEGIN");
            try {
                int version = StoreSchema.readVersion(c, file);
                Map<String, Dataset> datasets = readDatasets(c);
                writeRuns(c, version, outDir.resolve("runs.tsv"));
                writeEvaluations(c, outDir.resolve("evaluations.tsv"));
                writeRunEvaluations(c, version, outDir.resolve("run_evaluations.tsv"));
                writeOutcomes(c, file, datasets, outDir.resolve("outcomes.tsv"));
                writeDatasets(datasets, outDir.resolve("datasets.tsv"));
                writeSplits(c, version, outDir.resolve("part_splits.tsv"), outDir.resolve("part_subjects.tsv"));
                for (String[] t : SEARCH_TABLES) {
                    writeWhole(c, version >= 3, t[0], t[1], outDir.resolve(t[0] + ".tsv"));
                }
                // Racing (version 4): partial outcomes are written as space-separated values in race order.
                writeWhole(c, version >= 4, "partial_evaluations", "id", outDir.resolve("partial_evaluations.tsv"));
                writeWhole(c, version >= 4, "run_partials", "run_id, partial_id", outDir.resolve("run_partials.tsv"));
                // Surrogates (version 5): each fit with its quality, and the sets a screen skipped.
                writeWhole(c, version >= 5, "surrogate_fits", "run_id, purpose, fit", outDir.resolve("surrogate_fits.tsv"));
                writeWhole(c, version >= 5, "search_skips", "run_id, position", outDir.resolve("search_skips.tsv"));
            } finally {
                s.execute("ROLLBACK");
            }
        } catch (SQLException e) {
            throw new ResultsStore.StoreException(file, "cannot export to " + outDir + ": " + e.getMessage(), e);
        }
    }

    private record Dataset(String hash, List<String> ids, List<String> subjects, List<String> labels,
                           List<Integer> labelIndex, List<String> classLabels) {
    }

    private static Map<String, Dataset> readDatasets(Connection c) throws SQLException {
        Map<String, Dataset> out = new HashMap<>();
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT data_hash, class_labels FROM datasets ORDER BY data_hash")) {
            while (r.next()) {
                out.put(r.getString(1), new Dataset(r.getString(1), new ArrayList<>(), new ArrayList<>(),
                        new ArrayList<>(), new ArrayList<>(), parseJsonStrings(r.getString(2))));
            }
        }
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT data_hash, sample_id, subject, label, label_index"
                     + " FROM dataset_samples ORDER BY data_hash, sample_index")) {
            while (r.next()) {
                Dataset d = out.get(r.getString(1));
                d.ids().add(r.getString(2));
                d.subjects().add(r.getString(3));
                d.labels().add(r.getString(4));
                int index = r.getInt(5);
                d.labelIndex().add(r.wasNull() ? null : index);
            }
        }
        return out;
    }

    private static void writeRuns(Connection c, int version, Path out) throws SQLException {
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT id, run_key, kind, status, started_at, ended_at, model_hash,"
                     + " data_hash, preprocessing, lesion_mode, mode_seed, seed,"
                     + " (SELECT count(*) FROM run_evaluations re WHERE re.run_id = runs.id),"
                     + " (SELECT total(cost) FROM (SELECT cost FROM run_evaluations re WHERE re.run_id = runs.id"
                     + " ORDER BY position))" + (version >= 4
                             ? " + (SELECT total(cost) FROM run_partials rp WHERE rp.run_id = runs.id)," : ",")
                     + " cruxset_version, jvm, os, arch, config, " + (version >= 2 ? "split_id" : "NULL")
                     + " FROM runs ORDER BY id");
             Table t = new Table(out, "id", "run_key", "kind", "status", "started_at", "ended_at", "model_hash",
                     "data_hash", "preprocessing", "lesion_mode", "mode_seed", "seed", "evaluations", "spent",
                     "cruxset_version", "jvm", "os", "arch", "config", "split_id")) {
            while (r.next()) {
                t.integer(r.getLong(1)).text(r.getString(2)).text(r.getString(3)).text(r.getString(4))
                        .text(r.getString(5)).text(r.getString(6)).text(r.getString(7)).text(r.getString(8))
                        .text(r.getString(9)).text(r.getString(10)).integer(r.getLong(11)).integer(r.getLong(12))
                        .integer(r.getLong(13)).real(ResultsStore.getReal(r, 14)).text(r.getString(15))
                        .text(r.getString(16)).text(r.getString(17)).text(r.getString(18)).text(r.getString(19))
                        .text(r.getString(20)).end();
            }
            t.commit();
        }
    }

    /** Writes every column of {@code table} (header only when the store's version lacks the table). */
    private static void writeWhole(Connection c, boolean present, String table, String orderBy, Path out)
            throws SQLException {
        List<String> columns = new ArrayList<>();
        List<String> types = new ArrayList<>();
        String ddl = null;
        for (String statement : ResultsStore.SCHEMA) {
            if (statement.startsWith("CREATE TABLE " + table + " (")) {
                ddl = statement;
            }
        }
        for (String line : ddl.split("\n")) {
            String t = line.trim();
            String[] w = t.split("\\s+");
            if (w.length >= 2 && !t.startsWith("CREATE") && !t.startsWith("PRIMARY") && !t.startsWith("UNIQUE")
                    && !t.startsWith(")")) {
                columns.add(w[0]);
                types.add(w[1].replace(",", ""));
            }
        }
        try (Table t = new Table(out, columns.toArray(String[]::new))) {
            if (present) {
                try (Statement s = c.createStatement();
                     ResultSet r = s.executeQuery("SELECT " + String.join(", ", columns) + " FROM " + table
                             + " ORDER BY " + orderBy)) {
                    while (r.next()) {
                        for (int i = 0; i < columns.size(); i++) {
                            switch (types.get(i)) {
                                case "REAL" -> t.real(ResultsStore.getReal(r, i + 1));
                                case "BLOB" -> t.text(blobValues(r.getBytes(i + 1), columns.get(i).equals("predicted")));
                                default -> t.text(r.getString(i + 1));
                            }
                        }
                        t.end();
                    }
                }
            }
            t.commit();
        }
    }

    /**
     * An outcome BLOB as space-separated values: little-endian int32 class indices ({@code integers}), else
     * little-endian float32 probabilities written as the exact double value of each float.
     */
    private static String blobValues(byte[] blob, boolean integers) {
        if (blob == null) {
            return null;
        }
        java.nio.ByteBuffer b = java.nio.ByteBuffer.wrap(blob).order(java.nio.ByteOrder.LITTLE_ENDIAN);
        StringBuilder sb = new StringBuilder();
        while (b.remaining() >= 4) {
            if (sb.length() > 0) {
                sb.append(' ');
            }
            int bits = b.getInt();
            sb.append(integers ? Integer.toString(bits) : Double.toString(Float.intBitsToFloat(bits)));
        }
        return sb.toString();
    }

    private static void writeSplits(Connection c, int version, Path splits, Path subjects) throws SQLException {
        try (Table t = new Table(splits, "id", "split_seed", "confirm_fraction", "search_hash", "confirm_hash",
                "search_subjects", "confirmation_subjects", "created_at")) {
            if (version >= 2) {
                try (Statement s = c.createStatement();
                     ResultSet r = s.executeQuery("SELECT id, split_seed, confirm_fraction, search_hash, confirm_hash,"
                             + " (SELECT count(*) FROM part_subjects p WHERE p.split_id = part_splits.id"
                             + " AND p.part = 'search'),"
                             + " (SELECT count(*) FROM part_subjects p WHERE p.split_id = part_splits.id"
                             + " AND p.part = 'confirmation'),"
                             + " created_at FROM part_splits ORDER BY id")) {
                    while (r.next()) {
                        t.integer(r.getLong(1)).integer(r.getLong(2)).real(r.getDouble(3)).text(r.getString(4))
                                .text(r.getString(5)).integer(r.getLong(6)).integer(r.getLong(7)).text(r.getString(8))
                                .end();
                    }
                }
            }
            t.commit();
        }
        try (Table t = new Table(subjects, "split_id", "subject", "part")) {
            if (version >= 2) {
                try (Statement s = c.createStatement();
                     ResultSet r = s.executeQuery("SELECT split_id, subject, part FROM part_subjects"
                             + " ORDER BY split_id, part DESC, subject")) {
                    while (r.next()) {
                        t.integer(r.getLong(1)).text(r.getString(2)).text(r.getString(3)).end();
                    }
                }
            }
            t.commit();
        }
    }

    private static void writeEvaluations(Connection c, Path out) throws SQLException {
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT id, model_hash, data_hash, preprocessing, lesion_mode, mode_seed,"
                     + " set_hex, universe, set_size, region_names, n, correct, accuracy, balanced_accuracy,"
                     + " mean_true_prob, per_class_accuracy, chance, wilson_low, wilson_high, p_value, wall_seconds,"
                     + " created_at, created_by_run FROM evaluations ORDER BY id");
             Table t = new Table(out, "id", "model_hash", "data_hash", "preprocessing", "lesion_mode", "mode_seed",
                     "set_hex", "universe", "set_size", "set_positions", "region_names", "n", "correct", "accuracy",
                     "balanced_accuracy", "mean_true_prob", "per_class_accuracy", "chance", "wilson_low",
                     "wilson_high", "p_value", "wall_seconds", "created_at", "created_by_run")) {
            while (r.next()) {
                RegionSet set = EvaluationKey.parseSetHex(r.getString(7), r.getInt(8));
                StringBuilder positions = new StringBuilder();
                for (int p : set.positions()) {
                    positions.append(positions.length() == 0 ? "" : ",").append(p);
                }
                t.integer(r.getLong(1)).text(r.getString(2)).text(r.getString(3)).text(r.getString(4))
                        .text(r.getString(5)).integer(r.getLong(6)).text(r.getString(7)).integer(r.getLong(8))
                        .integer(r.getLong(9)).text(positions.toString()).text(r.getString(10))
                        .integer(r.getLong(11)).integer(r.getLong(12));
                for (int col = 13; col <= 15; col++) {
                    t.real(ResultsStore.getReal(r, col));
                }
                t.text(r.getString(16));
                for (int col = 17; col <= 21; col++) {
                    t.real(ResultsStore.getReal(r, col));
                }
                t.text(r.getString(22)).integer(r.getLong(23)).end();
            }
            t.commit();
        }
    }

    private static void writeRunEvaluations(Connection c, int version, Path out) throws SQLException {
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT run_id, position, evaluation_id, cost, reused, "
                     + (version >= 3 ? "spent_after" : "NULL") + " FROM run_evaluations ORDER BY run_id, position");
             Table t = new Table(out, "run_id", "position", "evaluation_id", "cost", "reused", "spent_after")) {
            while (r.next()) {
                t.integer(r.getLong(1)).integer(r.getLong(2)).integer(r.getLong(3)).real(r.getDouble(4))
                        .integer(r.getLong(5)).real(ResultsStore.getReal(r, 6)).end();
            }
            t.commit();
        }
    }

    private static void writeOutcomes(Connection c, Path file, Map<String, Dataset> datasets, Path out)
            throws SQLException {
        try (Statement s = c.createStatement();
             ResultSet r = s.executeQuery("SELECT id, data_hash, n, predicted, true_class_prob FROM evaluations"
                     + " ORDER BY id");
             Table t = new Table(out, "evaluation_id", "sample_index", "sample_id", "subject", "label", "label_index",
                     "predicted", "predicted_label", "true_class_probability", "correct")) {
            while (r.next()) {
                long id = r.getLong(1);
                int n = r.getInt(3);
                Outcomes o = ResultsStore.decodeOutcomes(file, id, n, r.getBytes(4), r.getBytes(5));
                Dataset d = datasets.get(r.getString(2));
                boolean known = d != null && d.ids().size() == n;
                for (int i = 0; i < n; i++) {
                    Integer label = known ? d.labelIndex().get(i) : null;
                    int predicted = o.predicted(i);
                    List<String> classes = known ? d.classLabels() : null;
                    t.integer(id).integer(i).text(known ? d.ids().get(i) : null)
                            .text(known ? d.subjects().get(i) : null).text(known ? d.labels().get(i) : null)
                            .text(label == null ? null : label.toString()).integer(predicted)
                            .text(classes != null && predicted >= 0 && predicted < classes.size()
                                    ? classes.get(predicted) : null)
                            .real(o.trueClassProbability(i))
                            .text(label == null ? null : predicted == label ? "1" : "0").end();
                }
            }
            t.commit();
        }
    }

    private static void writeDatasets(Map<String, Dataset> datasets, Path out) {
        List<String> hashes = new ArrayList<>(datasets.keySet());
        hashes.sort(null);
        try (Table t = new Table(out, "data_hash", "sample_index", "sample_id", "subject", "label", "label_index")) {
            for (String h : hashes) {
                Dataset d = datasets.get(h);
                for (int i = 0; i < d.ids().size(); i++) {
                    Integer label = d.labelIndex().get(i);
                    t.text(h).integer(i).text(d.ids().get(i)).text(d.subjects().get(i)).text(d.labels().get(i))
                            .text(label == null ? null : label.toString()).end();
                }
            }
            t.commit();
        }
    }

    /** Parses the JSON array of strings written by the store (or NULL). */
    static List<String> parseJsonStrings(String json) {
        if (json == null) {
            return null;
        }
        List<String> out = new ArrayList<>();
        int i = json.indexOf('[') + 1;
        while (i < json.length()) {
            char ch = json.charAt(i);
            if (ch == '"') {
                StringBuilder sb = new StringBuilder();
                i++;
                while (json.charAt(i) != '"') {
                    char x = json.charAt(i++);
                    if (x == '\\') {
                        char e = json.charAt(i++);
                        if (e == 'u') {
                            sb.append((char) Integer.parseInt(json.substring(i, i + 4), 16));
                            i += 4;
                        } else {
                            sb.append(e);
                        }
                    } else {
                        sb.append(x);
                    }
                }
                out.add(sb.toString());
            }
            i++;
        }
        return out;
    }

    /** Formats one field: empty for null, CSV-style quotes when it holds a tab, line break or double quote. */
    static String field(String value) {
        if (value == null) {
            return "";
        }
        boolean quote = false;
        for (int i = 0; i < value.length() && !quote; i++) {
            char ch = value.charAt(i);
            quote = ch == '\t' || ch == '\n' || ch == '\r' || ch == '"';
        }
        return quote ? '"' + value.replace("\"", "\"\"") + '"' : value;
    }

    /** Formats a double so it parses back to the same value; NaN is empty. */
    static String real(double v) {
        if (Double.isNaN(v)) {
            return "";
        }
        if (Double.isInfinite(v)) {
            return v > 0 ? "inf" : "-inf";
        }
        return Double.toString(v);
    }

    /** One TSV file being written next to its final name. */
    private static final class Table implements AutoCloseable {
        private final Path target;
        private final Path temp;
        private final BufferedWriter w;
        private boolean first = true;
        private boolean committed;

        Table(Path target, String... header) {
            this.target = target;
            this.temp = target.resolveSibling("." + target.getFileName() + ".tmp");
            try {
                this.w = Files.newBufferedWriter(temp, StandardCharsets.UTF_8);
                for (String h : header) {
                    text(h);
                }
                end();
            } catch (IOException e) {
                throw new UncheckedIOException("cannot write " + temp + ": " + e.getMessage(), e);
            }
        }

        Table text(String value) {
            return raw(field(value));
        }

        Table integer(long value) {
            return raw(Long.toString(value));
        }

        Table real(double value) {
            return raw(TsvExport.real(value));
        }

        private Table raw(String s) {
            try {
                if (!first) {
                    w.write('\t');
                }
                w.write(s);
                first = false;
                return this;
            } catch (IOException e) {
                throw new UncheckedIOException("cannot write " + temp + ": " + e.getMessage(), e);
            }
        }

        void end() {
            try {
                w.write('\n');
                first = true;
            } catch (IOException e) {
                throw new UncheckedIOException("cannot write " + temp + ": " + e.getMessage(), e);
            }
        }

        /** Closes the file and moves it to its final name. */
        void commit() {
            try {
                w.close();
                try {
                    Files.move(temp, target, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
                } catch (AtomicMoveNotSupportedException e) {
                    Files.move(temp, target, StandardCopyOption.REPLACE_EXISTING);
                }
                committed = true;
            } catch (IOException e) {
                throw new UncheckedIOException("cannot write " + target + ": " + e.getMessage(), e);
            }
        }

        @Override
        public void close() {
            if (!committed) {
                try {
                    w.close();
                    Files.deleteIfExists(temp);
                } catch (IOException ignored) {
                    // The export already failed; that error is the one reported.
                }
            }
        }
    }
}
