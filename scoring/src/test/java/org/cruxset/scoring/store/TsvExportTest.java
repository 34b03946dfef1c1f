package org.cruxset.scoring.store;

import static org.cruxset.scoring.store.StoreFixtures.assertBits;
import static org.cruxset.scoring.store.StoreFixtures.fresh;
import static org.cruxset.scoring.store.StoreFixtures.key;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.stream.Stream;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.eval.Outcomes;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.testing.ExternalTools;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class TsvExportTest {
    private static final String CONFIG = "{\"strategy\": \"greedy\",\t\"note\": \"say \\\"hi\\\"\"}\nsecond line";
    private static final String ODD_ID = "sub-0 \"quoted\"\tand tab";
    private static final String UNREGISTERED = "ee".repeat(32);

    @TempDir
    Path dir;
    private Path db;
    private Path out;
    private EvaluationKey unregisteredKey;

    @BeforeEach
    void fill() {
        db = dir.resolve("results.sqlite");
        out = dir.resolve("tsv");
        List<String> ids = new ArrayList<>(StoreFixtures.sampleIds());
        ids.set(0, ODD_ID);
        try (ResultsStore store = ResultsStore.open(db)) {
            store.registerDataset(StoreFixtures.DATA, ids, StoreFixtures.subjects(), StoreFixtures.CLASS_LABELS,
                    StoreFixtures.LABELS);
            ResultsStore.Run first = store.beginOrResume(new ResultsStore.RunInfo("first", "search", CONFIG,
                    StoreFixtures.MODEL, StoreFixtures.DATA, StoreFixtures.PREPROCESSING, LesionMode.NOISE, 7, 42,
                    Provenance.current()));
            store.record(first, List.of(fresh(0), fresh(1), fresh(2), fresh(3), fresh(4)), List.of(), 1.0);
            ResultsStore.Run second = store.beginOrResume(StoreFixtures.runInfo("second"));
            store.record(second, List.of(fresh(5)), List.of(key(0), key(1)), 1.0);
            unregisteredKey = new EvaluationKey(StoreFixtures.MODEL, UNREGISTERED, "none", LesionMode.ZERO, 0,
                    StoreFixtures.set(9));
            Outcomes o = StoreFixtures.outcomes(9);
            store.record(second, List.of(new ResultsStore.NewEvaluation(unregisteredKey, "", StoreFixtures.score(o),
                    o, 0.5)), List.of(), 0.5);
            store.finish(second);
        }
        TsvExport.export(db, out);
    }

    @Test
    void writesEveryFileWithAHeaderAndNoLeftovers() throws IOException {
        try (Stream<Path> files = Files.list(out)) {
            assertEquals(TsvExport.FILES.stream().sorted().toList(),
                    files.map(p -> p.getFileName().toString()).sorted().toList());
        }
        assertEquals(List.of("evaluation_id", "sample_index", "sample_id", "subject", "label", "label_index",
                "predicted", "predicted_label", "true_class_probability", "correct"), read("outcomes.tsv").get(0));
        assertEquals(List.of("run_id", "position", "evaluation_id", "cost", "reused", "spent_after"),
                read("run_evaluations.tsv").get(0));
        assertEquals(List.of("data_hash", "sample_index", "sample_id", "subject", "label", "label_index"),
                read("datasets.tsv").get(0));
        for (String f : TsvExport.FILES) {
            assertFalse(Files.readString(out.resolve(f)).contains("\\N"), f + " writes NULL as an empty field");
        }
    }

    @Test
    void runsKeepTheirConfigAndShowWhatTheySpent() throws IOException {
        List<Map<String, String>> runs = rows("runs.tsv");
        assertEquals(2, runs.size());
        Map<String, String> first = runs.get(0);
        assertEquals("first", first.get("run_key"));
        assertEquals(CONFIG, first.get("config"), "tabs, quotes and line breaks survive quoting");
        assertEquals("running", first.get("status"));
        assertEquals("", first.get("ended_at"));
        assertEquals("5", first.get("evaluations"));
        assertEquals("5.0", first.get("spent"));
        assertEquals("noise", first.get("lesion_mode"));
        assertEquals("7", first.get("mode_seed"));
        assertEquals("42", first.get("seed"));
        Map<String, String> second = runs.get(1);
        assertEquals("finished", second.get("status"));
        assertFalse(second.get("ended_at").isEmpty());
        assertEquals("4", second.get("evaluations"));
        assertEquals("3.5", second.get("spent"));
        assertEquals(System.getProperty("os.arch"), second.get("arch"));
    }

    @Test
    void evaluationsCarryEveryScoreColumnExactly() throws IOException {
        List<Map<String, String>> evals = rows("evaluations.tsv");
        assertEquals(7, evals.size());
        assertEquals(List.of("id", "model_hash", "data_hash", "preprocessing", "lesion_mode", "mode_seed", "set_hex",
                "universe", "set_size", "set_positions", "region_names", "n", "correct", "accuracy",
                "balanced_accuracy", "mean_true_prob", "per_class_accuracy", "chance", "wilson_low", "wilson_high",
                "p_value", "wall_seconds", "created_at", "created_by_run"), read("evaluations.tsv").get(0));
        for (int i = 0; i < 6; i++) {
            Map<String, String> row = evals.get(i);
            ResultsStore.NewEvaluation e = fresh(i);
            SetScore s = e.score();
            assertEquals(Integer.toString(i + 1), row.get("id"));
            assertEquals(e.key().setHex(), row.get("set_hex"));
            assertEquals(joined(e.key().set().positions()), row.get("set_positions"));
            assertEquals(e.regionNames(), row.get("region_names"));
            assertEquals(Integer.toString(s.correct()), row.get("correct"));
            assertBits(s.accuracy(), Double.parseDouble(row.get("accuracy")), "accuracy");
            assertBits(s.balancedAccuracy(), Double.parseDouble(row.get("balanced_accuracy")), "balanced");
            assertBits(s.meanTrueClassProbability(), Double.parseDouble(row.get("mean_true_prob")), "mean");
            assertBits(s.chance(), Double.parseDouble(row.get("chance")), "chance");
            assertBits(s.wilsonLow(), Double.parseDouble(row.get("wilson_low")), "low");
            assertBits(s.wilsonHigh(), Double.parseDouble(row.get("wilson_high")), "high");
            assertBits(s.pValue(), Double.parseDouble(row.get("p_value")), "p");
            assertBits(e.wallSeconds(), Double.parseDouble(row.get("wall_seconds")), "wall");
            assertEquals(ResultsStore.jsonDoubles(s.perClassAccuracy()), row.get("per_class_accuracy"));
            assertTrue(row.get("per_class_accuracy").endsWith(",null]"));
            assertEquals(i < 5 ? "1" : "2", row.get("created_by_run"));
        }
    }

    @Test
    void runEvaluationsShowCostReuseAndOrder() throws IOException {
        List<Map<String, String>> links = rows("run_evaluations.tsv");
        assertEquals(9, links.size());
        List<String> second = new ArrayList<>();
        for (Map<String, String> l : links) {
            if (l.get("run_id").equals("2")) {
                second.add(l.get("position") + ":" + l.get("evaluation_id") + ":" + l.get("cost") + ":"
                        + l.get("reused") + ":" + l.get("spent_after"));
            }
        }
        assertEquals(List.of("0:6:1.0:0:1.0", "1:1:1.0:1:2.0", "2:2:1.0:1:3.0", "3:7:0.5:0:3.5"), second,
                "spent_after is the run's budget spent once each link was made");
    }

    @Test
    void outcomesJoinSamplesAndRoundTripProbabilities() throws IOException {
        List<Map<String, String>> rows = rows("outcomes.tsv");
        assertEquals(7 * StoreFixtures.SAMPLES, rows.size());
        Map<String, List<Map<String, String>>> byEval = new HashMap<>();
        for (Map<String, String> r : rows) {
            byEval.computeIfAbsent(r.get("evaluation_id"), k -> new ArrayList<>()).add(r);
        }
        for (int i = 0; i < 6; i++) {
            Outcomes o = StoreFixtures.outcomes(i);
            List<Map<String, String>> ev = byEval.get(Integer.toString(i + 1));
            for (int s = 0; s < StoreFixtures.SAMPLES; s++) {
                Map<String, String> r = ev.get(s);
                assertEquals(Integer.toString(s), r.get("sample_index"));
                assertEquals(s == 0 ? ODD_ID : StoreFixtures.sampleIds().get(s), r.get("sample_id"));
                assertEquals(StoreFixtures.subjects().get(s), r.get("subject"));
                int y = StoreFixtures.LABELS[s];
                assertEquals(StoreFixtures.CLASS_LABELS.get(y), r.get("label"));
                assertEquals(Integer.toString(y), r.get("label_index"));
                assertEquals(Integer.toString(o.predicted(s)), r.get("predicted"));
                assertEquals(StoreFixtures.CLASS_LABELS.get(o.predicted(s)), r.get("predicted_label"));
                double p = Double.parseDouble(r.get("true_class_probability"));
                assertEquals((double) o.trueClassProbability(s), p, 0.0, "the exact value of the float");
                assertEquals(Float.floatToRawIntBits(o.trueClassProbability(s)),
                        Float.floatToRawIntBits(Float.parseFloat(r.get("true_class_probability"))));
                assertEquals(o.predicted(s) == y ? "1" : "0", r.get("correct"));
            }
        }
        Map<String, String> unknown = byEval.get("7").get(4);
        assertEquals("", unknown.get("sample_id"), "an unregistered dataset leaves the sample columns empty");
        assertEquals("", unknown.get("correct"));
        assertEquals(Integer.toString(StoreFixtures.outcomes(9).predicted(4)), unknown.get("predicted"));
    }

    @Test
    void datasetsListEverySample() throws IOException {
        List<Map<String, String>> rows = rows("datasets.tsv");
        assertEquals(StoreFixtures.SAMPLES, rows.size());
        assertEquals(ODD_ID, rows.get(0).get("sample_id"));
        assertEquals(StoreFixtures.DATA, rows.get(29).get("data_hash"));
        assertEquals("2", rows.get(29).get("label_index"));
        assertEquals("memory", rows.get(29).get("label"));
    }

    @Test
    void pythonsCsvModuleReadsTheFiles() throws IOException {
        Path python = ExternalTools.requirePython();
        String script = """
                import csv, json, struct, sys
                out = {}
                with open(sys.argv[1] + "/runs.tsv", newline="", encoding="utf-8") as f:
                    out["config"] = list(csv.DictReader(f, delimiter="\\t"))[0]["config"]
                with open(sys.argv[1] + "/evaluations.tsv", newline="", encoding="utf-8") as f:
                    out["accuracy"] = [float(r["accuracy"]) for r in csv.DictReader(f, delimiter="\\t")]
                with open(sys.argv[1] + "/outcomes.tsv", newline="", encoding="utf-8") as f:
                    rows = list(csv.DictReader(f, delimiter="\\t"))
                out["first_id"] = rows[0]["sample_id"]
                out["bits"] = [struct.unpack("<i", struct.pack("<f", float(r["true_class_probability"])))[0]
                               for r in rows if r["evaluation_id"] == "1"]
                print(json.dumps(out))
                """;
        String json = ExternalTools.runPython(python, dir, script, out.toString());
        assertTrue(json.contains(jsonString(CONFIG)), json);
        assertTrue(json.contains(jsonString(ODD_ID)), json);
        String acc = json.substring(json.indexOf("\"accuracy\": [") + 13);
        String[] accs = acc.substring(0, acc.indexOf(']')).split(", ");
        assertEquals(7, accs.length);
        for (int i = 0; i < 6; i++) {
            assertBits(fresh(i).score().accuracy(), Double.parseDouble(accs[i]), "accuracy " + i);
        }
        String bits = json.substring(json.indexOf("\"bits\": [") + 9);
        String[] b = bits.substring(0, bits.indexOf(']')).split(", ");
        Outcomes o = StoreFixtures.outcomes(0);
        for (int s = 0; s < StoreFixtures.SAMPLES; s++) {
            assertEquals(Float.floatToRawIntBits(o.trueClassProbability(s)), Integer.parseInt(b[s]), "sample " + s);
        }
    }

    @Test
    void aMissingStoreIsReportedByName() {
        Path missing = dir.resolve("nothing-here.sqlite");
        ResultsStore.StoreException e = assertThrows(ResultsStore.StoreException.class,
                () -> TsvExport.export(missing, dir.resolve("x")));
        assertTrue(e.getMessage().contains(missing.toString()) && e.getMessage().contains("not found"),
                e.getMessage());
        assertFalse(Files.exists(missing), "exporting does not create a store");
    }

    @Test
    void formatsFieldsAndNumbers() {
        assertEquals("", TsvExport.field(null));
        assertEquals("plain text", TsvExport.field("plain text"));
        assertEquals("\"a\tb\"", TsvExport.field("a\tb"));
        assertEquals("\"say \"\"hi\"\"\"", TsvExport.field("say \"hi\""));
        assertEquals("", TsvExport.real(Double.NaN));
        assertEquals("inf", TsvExport.real(Double.POSITIVE_INFINITY));
        assertEquals("1.0E-300", TsvExport.real(1e-300));
    }

    private static String jsonString(String s) {
        return "\"" + s.replace("\\", "\\\\").replace("\"", "\\\"").replace("\t", "\\t").replace("\n", "\\n") + "\"";
    }

    private static String joined(int[] p) {
        StringBuilder sb = new StringBuilder();
        for (int x : p) {
            sb.append(sb.length() == 0 ? "" : ",").append(x);
        }
        return sb.toString();
    }

    private List<Map<String, String>> rows(String file) throws IOException {
        List<List<String>> all = read(file);
        List<String> header = all.get(0);
        List<Map<String, String>> out = new ArrayList<>();
        for (List<String> r : all.subList(1, all.size())) {
            assertEquals(header.size(), r.size(), file + ": every row has as many fields as the header");
            Map<String, String> m = new HashMap<>();
            for (int i = 0; i < header.size(); i++) {
                m.put(header.get(i), r.get(i));
            }
            out.add(m);
        }
        return out;
    }

    /** Reads a TSV file with CSV-style quoting (the dialect the export writes). */
    private List<List<String>> read(String file) throws IOException {
        String text = Files.readString(out.resolve(file), StandardCharsets.UTF_8);
        List<List<String>> rows = new ArrayList<>();
        List<String> row = new ArrayList<>();
        StringBuilder field = new StringBuilder();
        int i = 0;
        while (i < text.length()) {
            char ch = text.charAt(i);
            if (ch == '"' && field.length() == 0) {
                i++;
                while (true) {
                    char q = text.charAt(i++);
                    if (q == '"') {
                        if (i < text.length() && text.charAt(i) == '"') {
                            field.append('"');
                            i++;
                        } else {
                            break;
                        }
                    } else {
                        field.append(q);
                    }
                }
                continue;
            }
            if (ch == '\t') {
                row.add(field.toString());
                field.setLength(0);
            } else if (ch == '\n') {
                row.add(field.toString());
                field.setLength(0);
                rows.add(row);
                row = new ArrayList<>();
            } else {
                field.append(ch);
            }
            i++;
        }
        assertTrue(row.isEmpty() && field.length() == 0, file + " ends with a line break");
        return rows;
    }
}
