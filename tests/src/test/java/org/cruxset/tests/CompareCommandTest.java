package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** {@code cruxset compare} on the demo: the tables, the paired tests, and a rerun that replays every run. */
class CompareCommandTest {
    static String[] args(Path out) {
        return new String[] {"compare", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
            "--out", out.toString(), "--threads", "1", "--strategies", "grow+prune~race,surrogate~race", "--seeds", "2",
            "--budget", "300", "--minimum", "4"};
    }

    /** The rows of the per-strategy table without the time columns. */
    static List<String> rows(String out) {
        List<String> rows = new ArrayList<>();
        for (String line : out.split("\n")) {
            if (line.startsWith("grow+prune~race ") || line.startsWith("surrogate~race ")) {
                String[] f = line.trim().split("\\s{2,}");
                if (f.length >= 8) {
                    rows.add(String.join("|", java.util.Arrays.copyOfRange(f, 0, 8)));
                }
            }
        }
        return rows;
    }

    static List<String> readLines(Path p) {
        try {
            return java.nio.file.Files.readAllLines(p);
        } catch (java.io.IOException e) {
            throw new java.io.UncheckedIOException(e);
        }
    }

    @Test
    void comparesStrategiesOnEqualBudgetsAndResumes(@TempDir Path out) {
        CruxsetCommand.Captured first = Cli.run(args(out)).requireSuccess();
        String o = first.out();
        assertTrue(o.contains("Caution: a virtual lesion of a decoder describes the decoder"), o);
        List<String> table = rows(o);
        assertEquals(2, table.size(), o);
        for (String row : table) {
            assertTrue(row.contains("|2/2|"), "both strategies reach the demo's minimum of 4 on both seeds: " + row);
        }
        assertTrue(o.contains("grow+prune~race vs surrogate~race"), o);
        assertTrue(o.contains("the smallest Holm-adjusted p any of them can reach, whatever the data, is 0.5000"), o);
        assertTrue(o.contains("Wilcoxon signed-rank, 2 pairs"), o);
        assertTrue(o.contains("reaching 0.05 needs at least 6 seeds"), o);
        List<String> perRun = readLines(out.resolve("compare-runs.tsv"));
        assertEquals(5, perRun.size(), "a header and four runs: " + perRun);
        assertTrue(perRun.get(0).startsWith("strategy\tseed\tbest_size"), perRun.get(0));
        List<String> reportedSets = readLines(out.resolve("compare-sets.tsv"));
        assertTrue(reportedSets.get(0).startsWith("strategy\tseed\tsize\tregions\tsearch_accuracy"), reportedSets.get(0));
        assertTrue(reportedSets.size() >= 5, "every run reports at least one set: " + reportedSets);
        for (String line : reportedSets.subList(1, reportedSets.size())) {
            String[] f = line.split("\t");
            assertTrue(!f[6].equals("NA") && !f[7].equals("NA"), "a confirmation score for every reported set: " + line);
        }
        List<String> anytime = readLines(out.resolve("compare-anytime.tsv"));
        assertTrue(anytime.size() >= 5, "every run's curve reaches its best size: " + anytime);
        for (String line : anytime.subList(1, anytime.size())) {
            assertTrue(Integer.parseInt(line.split("\t")[3]) >= 4, line);
        }
        CruxsetCommand.Captured again = Cli.run(args(out)).requireSuccess();
        assertEquals(table, rows(again.out()), "a rerun replays every run from the store to the same results");
        CruxsetCommand.Captured bad = Cli.run("compare", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--out", out.toString(), "--strategies", "grow~screen", "--budget", "10");
        assertEquals(2, bad.exit(), bad.err());
        assertTrue(bad.err().contains("~screen works with genetic and local"), bad.err());
    }
}
