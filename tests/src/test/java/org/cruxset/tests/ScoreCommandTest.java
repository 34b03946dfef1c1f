package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The score command on the bundled demo: criticality, the cache and clear refusals. */
class ScoreCommandTest {
    static final String MODEL = DemoData.MODEL.toString();
    static final String COHORT = DemoData.COHORT.toString();

    static String joined(List<String> names) {
        return String.join(",", names);
    }

    /** The row of {@code lesion} in the table of {@code part} ("Search" or "Confirmation"). */
    static String rowOf(String out, String part, String lesion) {
        int at = out.indexOf("\n" + part + " part: n = ");
        if (at < 0) {
            throw new AssertionError("no " + part + " part table in\n" + out);
        }
        for (String line : out.substring(at + 1).split("\n")) {
            if (line.startsWith(lesion + " ")) {
                return line;
            }
        }
        throw new AssertionError("no row for " + lesion + " in the " + part + " part of\n" + out);
    }

    // Must show: the decoder's smallest critical set from its search-part truth is confirmed on the confirmation
    // part under the default criterion, and score shows both parts.
    @Test
    void theTruthsSmallestCriticalSetIsConfirmedAndAsManyDecoysAreNotCritical(@TempDir Path out) {
        List<String> critical = TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0);
        List<String> decoys = TruthFile.decoys(DemoData.TRUTH).subList(0, critical.size());
        CruxsetCommand.Captured r = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", joined(critical),
                "--lesion", joined(decoys), "--out", out.toString(), "--threads", "2").requireSuccess();
        for (String part : List.of("Search", "Confirmation")) {
            assertTrue(rowOf(r.out(), part, joined(critical)).endsWith("CRITICAL"), part + ":\n" + r.out());
            assertTrue(rowOf(r.out(), part, joined(decoys)).endsWith("no"), part + ":\n" + r.out());
        }
        assertTrue(r.out().contains("Search part: n = 216 samples from 18 subjects; chance 0.167"), r.out());
        assertTrue(r.out().contains("Confirmation part: n = 216 samples from 18 subjects; chance 0.167"), r.out());
        assertTrue(r.out().contains("which search strategies see"), r.out());
        assertTrue(r.out().contains("not causal brain function"), r.out());
    }

    @Test
    void withoutAConfirmationPartTheOutputSaysScoresAreOptimistic(@TempDir Path out) {
        CruxsetCommand.Captured r = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-09", "--confirm", "0",
                "--criterion", "upper:0.1", "--bootstrap", "0", "--out", out.toString(), "--threads", "2").requireSuccess();
        assertTrue(r.out().contains("No confirmation part (--confirm 0)") && r.out().contains("optimistic"), r.out());
        assertTrue(r.out().contains("Search part: n = 432 samples from 36 subjects"), r.out());
        assertFalse(r.out().contains("Confirmation part"), r.out());
        assertTrue(r.out().contains("upper end of the 95% Wilson interval of accuracy at or below chance + 0.1"), r.out());
        CruxsetCommand.Captured bad = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-09", "--confirm", "1",
                "--out", out.toString());
        assertEquals(2, bad.exit(), bad.err());
        assertTrue(bad.err().contains("--confirm must be at least 0 and below 1, found 1.0"), bad.err());
    }

    @Test
    void aSecondIdenticalRunMakesNoDecoderCalls(@TempDir Path out) {
        String[] args = {"score", "--model", MODEL, "--cohort", COHORT, "--lesion", "network:ember",
            "--lesion", "arbor-01,arbor-02", "--mode", "noise", "--out", out.toString(), "--threads", "2"};
        CruxsetCommand.Captured first = Cli.run(args).requireSuccess();
        assertTrue(first.out().contains("Decoder calls: 3 set(s) decoded, 0 reused from the store, 0 already paid"), first.out());
        assertTrue(first.out().contains("Confirmation part (not charged): 3 set(s) decoded"), first.out());
        assertTrue(first.out().contains("3 scored set(s) charged to this run"), first.out());
        CruxsetCommand.Captured second = Cli.run(args).requireSuccess();
        assertTrue(second.out().contains("Decoder calls: 0 set(s) decoded, 0 reused from the store, 3 already paid"), second.out());
        assertTrue(second.out().contains("Confirmation part (not charged): 0 set(s) decoded, 0 reused from the store, "
                + "3 already paid"), second.out());
        // another command asking for a stored set reuses it: charged to its own budget, no decoder time
        CruxsetCommand.Captured other = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "arbor-01,arbor-02",
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
        CruxsetCommand.Captured all = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion",
                "network:arbor,network:beacon,network:cinder,network:delta,network:ember,network:fjord,network:glade",
                "--out", out.toString());
        assertEquals(2, all.exit(), all.err());
        assertTrue(all.err().contains("lesions all 100 regions"), all.err());
        CruxsetCommand.Captured unknown = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-9", "--out", out.toString());
        assertEquals(2, unknown.exit(), unknown.err());
        assertTrue(unknown.err().contains("unknown region 'ember-9'") && unknown.err().contains("'ember-09'"), unknown.err());
        CruxsetCommand.Captured mode = Cli.run("score", "--model", MODEL, "--cohort", COHORT, "--lesion", "ember-09", "--mode", "blank",
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
        assertEquals(1 + 2 * (216 + 216), outcomes.size(),
                "header plus 216 samples of each part for the intact set and the lesion");
        List<String> subjects = Files.readAllLines(out.resolve("export").resolve("part_subjects.tsv"));
        assertEquals(1 + 36, subjects.size(), "every held-out subject in one part");
        Matcher m = Pattern.compile("sample_id").matcher(outcomes.get(0));
        assertTrue(m.find(), outcomes.get(0));
    }
}
