package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.HashMap;
import java.util.HashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The shapley command on the bundled demo. */
class ShapleyCommandTest {
    static Map<String, Double> values(Path tsv) throws Exception {
        Map<String, Double> out = new HashMap<>();
        List<String> lines = Files.readAllLines(tsv);
        for (String line : lines.subList(1, lines.size())) {
            String[] f = line.split("\t");
            out.put(f[0], Double.parseDouble(f[1]));
        }
        return out;
    }

    // Exact network values: efficient (they sum to v(all) − v(none)), and the designed synergistic pair's networks
    // (ember, fjord) interact positively while the redundant group's (cinder, delta) interact negatively.
    @Test
    void exactNetworkValuesAndInteractions(@TempDir Path dir) throws Exception {
        CruxsetCommand.Captured r = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--out", dir.toString()).requireSuccess();
        assertTrue(r.out().startsWith("Caution: a virtual lesion"), r.out());
        assertTrue(r.out().contains("Estimator: exact enumeration of all 128 coalitions."), r.out());
        Matcher m = Pattern.compile("Sum of values (-?[0-9]+\\.[0-9]+); v\\(all\\) - v\\(none\\) = [0-9.]+ - [0-9.]+ = "
                + "(-?[0-9]+\\.[0-9]+)")
                .matcher(r.out());
        assertTrue(m.find(), r.out());
        assertEquals(Double.parseDouble(m.group(2)), Double.parseDouble(m.group(1)), 1e-4);
        assertTrue(r.out().contains("Equal values do not imply equal minimal lesion sets"), r.out());
        List<String> matrix = Files.readAllLines(dir.resolve("shapley-networks-interactions.tsv"));
        List<String> head = List.of(matrix.get(0).split("\t"));
        Map<String, String[]> rows = new HashMap<>();
        for (String line : matrix.subList(1, matrix.size())) {
            rows.put(line.split("\t")[0], line.split("\t"));
        }
        double synergy = Double.parseDouble(rows.get("network:ember")[head.indexOf("network:fjord")]);
        double redundancy = Double.parseDouble(rows.get("network:cinder")[head.indexOf("network:delta")]);
        assertTrue(synergy > 0, "ember + fjord " + synergy);
        assertTrue(redundancy < 0, "cinder + delta " + redundancy);
        Map<String, Double> v = values(dir.resolve("shapley-networks.tsv"));
        for (String planted : List.of("network:ember", "network:fjord", "network:cinder", "network:delta")) {
            for (String other : List.of("network:glade", "network:arbor", "network:beacon")) {
                assertTrue(v.get(planted) > v.get(other), planted + " " + v.get(planted) + " vs " + other + " "
                        + v.get(other));
            }
        }
    }

    // Must show (demo): every member of the decoder's smallest critical sets gets a larger region value than every
    // decoy, with antithetic sampling on a budget; the designed synergistic pair's sampled interaction is positive
    // and its interval excludes zero.
    @Test
    void minimalSetMembersOutrankDecoys(@TempDir Path dir) throws Exception {
        CruxsetCommand.Captured r = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--players", "regions", "--budget", "4000", "--out", dir.toString()).requireSuccess();
        assertTrue(r.out().contains("Stopped: budget spent."), r.out());
        List<String> pairs = Files.readAllLines(dir.resolve("shapley-regions-pairs.tsv"));
        String pair = pairs.stream().filter(l -> l.startsWith("fjord-13\tember-04") || l.startsWith("ember-04\tfjord-13"))
                .findFirst().orElseThrow(() -> new AssertionError(String.join("\n", pairs)));
        assertTrue(Double.parseDouble(pair.split("\t")[4]) > 0, "interval above zero: " + pair);
        Map<String, Double> v = values(dir.resolve("shapley-regions.tsv"));
        Set<String> members = new HashSet<>();
        for (List<String> s : TruthFile.decoderMinimumSets(DemoData.TRUTH)) {
            members.addAll(s);
        }
        for (String m : members) {
            for (String d : TruthFile.decoys(DemoData.TRUTH)) {
                assertTrue(v.get(m) > v.get(d), m + " " + v.get(m) + " vs decoy " + d + " " + v.get(d));
            }
        }
    }

    // Regions nested in networks: Owen values, whose sums over a network are the network's value in the game
    // between networks; on the demo the designed regions lead, as with plain regions.
    @Test
    void nestedPlayersGetOwenValues(@TempDir Path dir) throws Exception {
        CruxsetCommand.Captured r = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--players", "nested", "--budget", "1500", "--interactions", "0", "--out", dir.toString())
                .requireSuccess();
        assertTrue(r.out().contains("order (networks kept together) sampling"), r.out());
        assertTrue(!r.out().contains("Interactions:"), r.out());
        Map<String, Double> v = values(dir.resolve("shapley-nested.tsv"));
        for (String m : List.of("fjord-13", "ember-04", "cinder-10", "delta-11", "ember-09")) {
            for (String d : TruthFile.decoys(DemoData.TRUTH)) {
                assertTrue(v.get(m) > v.get(d), m + " " + v.get(m) + " vs decoy " + d + " " + v.get(d));
            }
        }
    }

    // The screen is a labelled shortcut: the output names the players that took it and checks a sample of them on
    // the full game; the designed regions never take it (their marginals differ between the two contexts).
    @Test
    void theScreenIsLabelledAndChecked(@TempDir Path dir) throws Exception {
        CruxsetCommand.Captured r = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--players", "regions", "--screen", "0.002", "--budget", "2500", "--interactions", "0", "--out",
                dir.toString()).requireSuccess();
        String line = r.out().lines().filter(l -> l.startsWith("Screen (202 scored sets):")).findFirst()
                .orElseThrow(() -> new AssertionError(r.out()));
        assertTrue(line.contains("a shortcut: two contexts cannot prove additivity"), line);
        for (String planted : List.of("fjord-13", "ember-04", "cinder-10", "delta-11", "ember-09")) {
            assertTrue(!line.contains(planted + ",") && !line.endsWith(planted), planted + " took the shortcut: " + line);
        }
        assertEquals(3, r.out().lines().filter(l -> l.startsWith("Screen check of ")).count(), r.out());
    }

    @Test
    void badOptionsAreNamed(@TempDir Path dir) {
        CruxsetCommand.Captured exact = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--players", "regions", "--estimator", "exact", "--out", dir.toString());
        assertEquals(2, exact.exit());
        assertTrue(exact.err().contains("--estimator exact needs 2^100"), exact.err());
        CruxsetCommand.Captured strat = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--players", "regions", "--estimator", "stratified", "--out", dir.toString());
        assertEquals(2, strat.exit());
        assertTrue(strat.err().contains("at most 20 of them (100 here)"), strat.err());
        CruxsetCommand.Captured small = Cli.run("shapley", "--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(),
                "--players", "regions", "--budget", "300", "--out", dir.toString());
        assertEquals(2, small.exit());
        assertTrue(small.err().contains("does not cover two draws of 202 scored sets"), small.err());
    }
}
