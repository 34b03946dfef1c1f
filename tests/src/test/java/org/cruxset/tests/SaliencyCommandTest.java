package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Set;
import java.util.TreeSet;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The saliency command on the bundled demo, and its ranking through the curve command. */
class SaliencyCommandTest {
    // Must show: on the demo, the saliency ranking's deletion curve reaches the criterion at k <= 2 x the decoder's
    // minimum critical size (from its own truth) and lies below the null band's 5% edge for k = 1..10.
    @Test
    void theGradientRankingsDeletionCurveCollapsesEarlyAndBelowTheBand(@TempDir Path dir) throws Exception {
        Path out = dir.resolve("out");
        CruxsetCommand.Captured s = Cli.run("saliency", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--map-class", "canal-walk", "--out", out.toString()).requireSuccess();
        List<String> map = Files.readAllLines(out.resolve("saliency-map-class-canal-walk.tsv"));
        assertEquals(101, map.size(), "one row per region after the header");
        assertTrue(map.get(0).startsWith("region\tt0\tt1\t"), map.get(0));
        assertTrue(s.out().startsWith("Caution: a virtual lesion"), s.out());
        assertTrue(s.out().contains("Method: gradient of the true-class score (pre-softmax)"), s.out());
        Path ranking = out.resolve("ranking-saliency-regions.tsv");
        CruxsetCommand.Captured c = Cli.run("curve", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--ranking", ranking.toString(), "--k", "1:10", "--null", "20", "--out", out.toString())
                .requireSuccess();
        int minimum = TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0).size();
        List<String> rows = Files.readAllLines(out.resolve("curve.tsv"));
        int firstCritical = -1;
        for (String row : rows.subList(1, rows.size())) {
            String[] f = row.split("\t");
            int k = Integer.parseInt(f[0]);
            if (firstCritical < 0 && f[3].equals("true")) {
                firstCritical = k;
            }
            assertTrue(Double.parseDouble(f[1]) < Double.parseDouble(f[5]), "k = " + k + " below the band: " + row);
        }
        assertTrue(firstCritical > 0 && firstCritical <= 2 * minimum, "first critical k " + firstCritical
                + ", decoder minimum " + minimum + "\n" + c.out());
        // The top regions are the designed pool's redundant group and pair (demo truth).
        List<String> saliency = Files.readAllLines(out.resolve("saliency-regions.tsv"));
        Set<String> top5 = new TreeSet<>();
        for (String row : saliency.subList(1, 6)) {
            top5.add(row.split("\t")[0]);
        }
        assertEquals(new TreeSet<>(List.of("cinder-10", "delta-11", "ember-04", "ember-09", "fjord-13")), top5);
    }

    @Test
    void aModelRunByOnnxRuntimeGetsFiniteDifferencesAndSaysSo(@TempDir Path dir) {
        CruxsetCommand.Captured s = Cli.run("saliency", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--engine", "onnxruntime", "--method", "integrated", "--out", dir.toString()).requireSuccess();
        assertTrue(s.out().contains("the model is run by ONNX Runtime, which gives no gradients: integrated was asked "
                + "for, finite differences by region are computed instead"), s.out());
        CruxsetCommand.Captured map = Cli.run("saliency", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--engine", "onnxruntime", "--map-class", "canal-walk", "--out", dir.toString()).requireSuccess();
        assertTrue(map.out().contains("No time map: finite differences by region give one value per region"), map.out());
    }

    @Test
    void badOptionsAreNamed(@TempDir Path dir) {
        CruxsetCommand.Captured m = Cli.run("saliency", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--method", "occlusion", "--out", dir.toString());
        assertEquals(2, m.exit());
        assertTrue(m.err().contains("--method: the method must be gradient, times-input, integrated, smooth or "
                + "differences, found 'occlusion'"), m.err());
        CruxsetCommand.Captured k = Cli.run("saliency", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--map-class", "harbour-run", "--out", dir.toString());
        assertEquals(2, k.exit());
        assertTrue(k.err().contains("--map-class: no class 'harbour-run'"), k.err());
    }
}
