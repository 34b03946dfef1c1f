package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.simulate.CohortSummary;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The bundled demo: generated on first use, powered to confirm, and its committed decoder agrees with its truth. */
class DemoTest {
    @Test
    void demoConfirmsTheSmallestCriticalSetAndTheControlSurvives(@TempDir Path out) {
        CruxsetCommand.Captured r = Cli.run("demo", "--demo", DemoData.DIR.toString(), "--out", out.toString(), "--threads", "2")
                .requireSuccess();
        assertTrue(r.out().contains("not causal brain function"), r.out());
        String first = String.join(",", TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0));
        String row = r.out().lines().filter(l -> l.startsWith(first + " ")).findFirst().orElseThrow(
                () -> new AssertionError("no row for " + first + " in\n" + r.out()));
        assertTrue(row.matches(".*CRITICAL.*CRITICAL\\s*"), "critical on both parts: " + row);
        String control = r.out().lines().filter(l -> l.contains("(as many decoys)")).findFirst().orElseThrow();
        assertTrue(control.matches(".*survives.*survives\\s*"), control);
        assertTrue(r.out().contains("-> Confirmed: "), r.out());
        assertTrue(r.out().contains("A short search over all 100 regions (grow, then prune)"), r.out());
        String found = r.out().lines().filter(l -> l.contains("(size ") && l.contains("irreducible")).findFirst()
                .orElseThrow(() -> new AssertionError("the demo's search reports a certified set:\n" + r.out()));
        assertTrue(found.endsWith("one of the truth's smallest critical sets"), found);
        assertTrue(r.out().contains("a search part of 216 samples (18 subjects)"), r.out());
        assertFalse(r.out().contains("differs from the one"), "the cohort generated here matches the committed summary:\n"
                + r.out());
        // The tour: every step ran on the same store and left its tables, the audit's verdicts are the ones in its
        // table, and the report was written.
        for (String step : List.of("scan", "saliency", "shapley", "compare", "curve", "audit", "report")) {
            assertTrue(Files.isRegularFile(out.resolve("demo-logs").resolve(step + ".txt")), step);
        }
        for (String t : List.of("scan-networks.tsv", "saliency-regions.tsv", "shapley-networks.tsv",
                "compare-runs.tsv", "curve.tsv", "audit-prefix.tsv")) {
            assertTrue(Files.isRegularFile(out.resolve(t)), t);
        }
        for (String line : CompareCommandTest.readLines(out.resolve("audit-prefix.tsv")).subList(1, 4)) {
            String[] f = line.split("\t");
            assertTrue(r.out().contains(f[0] + ": critical prefix of " + f[2] + " regions. " + f[9]), line);
        }
        assertTrue(Files.isRegularFile(out.resolve("report").resolve("report.html")));
        assertTrue(r.out().contains("7/7 the report") && r.out().contains("The tour took"), r.out());
    }

    // Source: the demo's committed summary statistics (demo-data/truth.json, cohort_summary), written when the bundled
    // decoder was trained. The simulator uses Math, not StrictMath, so values are compared to 1e-6, counts exactly.
    @Test
    void theGeneratedCohortMatchesTheCommittedSummaryAndHasThePowerToConfirm() {
        Cohort c = CohortFiles.read(DemoData.COHORT);
        CohortSummary here = CohortSummary.of(c);
        assertEquals(List.of(), here.differences(TruthFile.summary(DemoData.TRUTH)));
        assertTrue(here.test() >= 400, "at least 400 held-out samples, found " + here.test());
    }

    @Test
    void theDemoCohortIsGeneratedOnFirstUse(@TempDir Path dir) throws Exception {
        Path demo = dir.resolve("demo");
        Files.createDirectories(demo);
        for (String f : List.of("demo.yaml", "model.onnx", "truth.json")) {
            Files.copy(DemoData.DIR.resolve(f), demo.resolve(f));
        }
        CruxsetCommand.Captured r = Cli.run("demo", "--demo", demo.toString(), "--out", dir.resolve("out").toString(), "--threads", "2",
                "--criterion", "upper:0.1", "--quick").requireSuccess();
        assertTrue(r.out().contains("Generated the demo cohort from"), r.out());
        assertTrue(Files.isRegularFile(demo.resolve("cohort").resolve("samples.npy")));
        assertTrue(r.out().contains("upper end of the 95% Wilson interval"), r.out());
        try (var left = Files.list(demo)) {
            assertEquals(List.of("cohort", "demo.yaml", "model.onnx", "truth.json"),
                    left.map(p -> p.getFileName().toString()).sorted().toList(), "no temporary folder left behind");
        }
    }
}
