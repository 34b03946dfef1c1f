package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.cruxset.scoring.simulate.TruthFile;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The score command on the bundled demo: criticality, the cache and clear refusals. */
class ScoreCommandTest {
    static final Path DEMO = Cli.root().resolve("demo-data");
    static final String MODEL = DEMO.resolve("model.onnx").toString();
    static final String COHORT = DEMO.resolve("cohort").toString();

    static String joined(List<String> names) {
        return String.join(",", names);
    }

    private static String rowOf(String out, String lesion) {
        for (String line : out.split("\n")) {
            if (line.startsWith(lesion + " ")) {
                return line;
            }
        }
        throw new AssertionError("no row for " + lesion + " in\n" + out);
    }

    @Test
    void aMinimalCriticalSetIsCriticalAndAsManyDecoysAreNot(@TempDir Path out) {
        Path truth = DEMO.resolve("cohort").resolve(TruthFile.NAME);
        List<String> critical = TruthFile.decoderMinimumSets(truth).get(0);
        List<String> decoys = TruthFile.decoys(truth).subList(0, critical.size());
        Cli.Run r = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", joined(critical),
                "--lesion", joined(decoys), "--out", out.toString(), "--threads", "2").requireSuccess();
        assertTrue(rowOf(r.out(), joined(critical)).endsWith("CRITICAL"), r.out());
        assertTrue(rowOf(r.out(), joined(decoys)).endsWith("no"), r.out());
        assertTrue(r.out().contains("not causal brain function"), r.out());
        assertTrue(r.out().contains("chance 0.167"), r.out());
    }

    @Test
    void aSecondIdenticalRunMakesNoDecoderCalls(@TempDir Path out) {
        String[] args = {"score", "--model", MODEL, "--cohort", COHORT, "--lesion", "network:ember",
            "--lesion", "arbor-01,arbor-02", "--mode", "noise", "--out", out.toString(), "--threads", "2"};
        Cli.Run first = Cli.run(args).requireSuccess();
        assertTrue(first.out().contains("Decoder calls: 3 set(s) decoded, 0 reused from the store, 0 already paid"), first.out());
        Cli.Run second = Cli.run(args).requireSuccess();
        assertTrue(second.out().contains("Decoder calls: 0 set(s) decoded, 0 reused from the store, 3 already paid"), second.out());
        // another command asking for a stored set reuses it: charged to its own budget, no decoder time
        Cli.Run other = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "arbor-01,arbor-02",
                "--mode", "noise", "--out", out.toString(), "--threads", "2").requireSuccess();
        assertTrue(other.out().contains("Decoder calls: 0 set(s) decoded, 2 reused from the store, 0 already paid"), other.out());
        assertEquals(table(first.out()), table(second.out()), "a replay gives the same table");
    }

    private static List<String> table(String out) {
        List<String> rows = new ArrayList<>();
        for (String line : out.split("\n")) {
            if (line.startsWith("(none") || line.startsWith("network:") || line.startsWith("arbor")) {
                rows.add(line);
            }
        }
        return rows;
    }

    @Test
    void emptyAllAndUnknownLesionsAreRefusedWithAReason(@TempDir Path out) {
        Cli.Run all = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion",
                "network:arbor,network:beacon,network:cinder,network:delta,network:ember,network:fjord,network:glade",
                "--out", out.toString());
        assertEquals(2, all.exit(), all.err());
        assertTrue(all.err().contains("lesions all 100 regions"), all.err());
        Cli.Run unknown = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-9", "--out", out.toString());
        assertEquals(2, unknown.exit(), unknown.err());
        assertTrue(unknown.err().contains("unknown region 'ember-9'") && unknown.err().contains("'ember-09'"), unknown.err());
        Cli.Run mode = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-09", "--mode", "blank",
                "--out", out.toString());
        assertEquals(2, mode.exit(), mode.err());
        assertTrue(mode.err().contains("zero, mean, noise, swap, phase"), mode.err());
    }

    @Test
    void exportWritesTsvViews(@TempDir Path out) throws Exception {
        Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-09", "--out", out.toString(),
                "--threads", "2").requireSuccess();
        Cli.run("export", "--out", out.toString()).requireSuccess();
        List<String> outcomes = Files.readAllLines(out.resolve("export").resolve("outcomes.tsv"));
        assertEquals(1 + 2 * 60, outcomes.size(), "header plus 60 samples for the intact set and the lesion");
        Matcher m = Pattern.compile("sample_id").matcher(outcomes.get(0));
        assertTrue(m.find(), outcomes.get(0));
    }
}
