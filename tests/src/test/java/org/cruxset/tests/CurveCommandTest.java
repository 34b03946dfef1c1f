package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Collections;
import java.util.List;
import org.cruxset.search.cli.CruxsetCommand;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The curve command on the bundled demo: the deletion curve, its null band, its budget and refusals. */
class CurveCommandTest {
    private static Path networkRanking(Path dir, List<String> nets) {
        Path file = dir.resolve("nets.tsv");
        RankingFile.write(file, new Ranking(Ranking.Kind.NETWORKS, nets, Collections.nCopies(nets.size(), 0.0),
                Collections.nCopies(nets.size(), "test"), true, "search", "order chosen by the test"));
        return file;
    }

    @Test
    void aGoodOrderFallsBelowTheBandAndItsCriticalPrefixIsMarked(@TempDir Path dir) throws Exception {
        // The networks holding the planted regions first (demo truth: ember, fjord, cinder, delta), then the rest.
        Path ranking = networkRanking(dir, List.of("network:ember", "network:fjord", "network:cinder", "network:delta",
                "network:glade", "network:arbor", "network:beacon"));
        Path out = dir.resolve("out");
        CruxsetCommand.Captured r = Cli.run("curve", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--ranking", ranking.toString(), "--null", "30", "--out", out.toString()).requireSuccess();
        assertTrue(r.out().startsWith("Caution: a virtual lesion"), r.out());
        assertTrue(r.out().contains("Cost: 7 grid points x (deletion + insertion + 30 random orders)"), r.out());
        // the four planted networks together are the decoder's smallest critical set's networks: critical at k = 4
        assertTrue(r.out().contains("Smallest critical prefix: k = 4 (every prefix was scored)"), r.out());
        List<String> rows = Files.readAllLines(out.resolve("curve.tsv"));
        assertEquals("k\tdeletion_accuracy\tdeletion_p_true\tdeletion_critical\tinsertion_accuracy\tnull_low05\t"
                + "null_median\tnull_high95", rows.get(0));
        assertEquals(8, rows.size());
        String[] k4 = rows.get(4).split("\t");
        assertEquals("4", k4[0]);
        assertEquals("true", k4[3]);
        assertTrue(Double.parseDouble(k4[1]) < Double.parseDouble(k4[5]), "k = 4 lies below the band: " + rows.get(4));
        String[] k7 = rows.get(7).split("\t");
        assertEquals(k7[1], k7[6], "every order lesions all networks at k = 7");
        assertTrue(r.out().contains("Area between the null median and the curve"), r.out());
    }

    @Test
    void theBudgetCutsTheBandAndBadGridsAreNamed(@TempDir Path dir) {
        Path ranking = networkRanking(dir, List.of("network:ember", "network:fjord", "network:cinder", "network:delta",
                "network:glade", "network:arbor", "network:beacon"));
        CruxsetCommand.Captured cut = Cli.run("curve", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--ranking", ranking.toString(), "--k", "1:4", "--budget", "40", "--out", dir.resolve("a").toString())
                .requireSuccess();
        assertTrue(cut.out().contains("(--null 20 cut to 6 to fit --budget 40)"), cut.out());
        CruxsetCommand.Captured small = Cli.run("curve", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--ranking", ranking.toString(), "--budget", "5", "--out", dir.resolve("b").toString());
        assertEquals(2, small.exit());
        assertTrue(small.err().contains("--budget 5 does not cover the curve itself"), small.err());
        CruxsetCommand.Captured bad = Cli.run("curve", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--ranking", ranking.toString(), "--k", "5:2", "--out", dir.resolve("c").toString());
        assertEquals(2, bad.exit());
        assertTrue(bad.err().contains("--k: grid '5:2'"), bad.err());
    }
}
