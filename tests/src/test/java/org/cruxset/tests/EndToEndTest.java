package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.eval.HeldOut;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;
import org.cruxset.scoring.onnx.OnnxOptions;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** Simulate the CI-sized cohort, train a decoder on it and check lesions against the decoder's own truth. */
class EndToEndTest {
    private static final double ALPHA = 0.05;

    @TempDir
    static Path dir;

    static Path cohortDir;
    static Path model;
    static CruxsetCommand.Captured train;

    @BeforeAll
    static void simulateAndTrain() {
        cohortDir = dir.resolve("cohort");
        model = dir.resolve("model.onnx");
        Cli.run("simulate", "--config", Cli.root().resolve("configs/ci.yaml").toString(), "--out", cohortDir.toString())
                .requireSuccess();
        train = Cli.run("train", "--cohort", cohortDir.toString(), "--out", model.toString(), "--seed", "7",
                "--hidden", "24", "--threads", "2").requireSuccess();
    }

    private record Scored(ModelInputs inputs, List<SetScore> scores) {
    }

    /** Which held-out samples to score: all of them, or one part of the default split. */
    private enum Held { ALL, SEARCH, CONFIRMATION }

    private static Scored score(List<List<String>> sets, OnnxOptions.Engine engine) {
        return score(sets, engine, Held.ALL);
    }

    private static Scored score(List<List<String>> sets, OnnxOptions.Engine engine, Held which) {
        Cohort c = CohortFiles.read(cohortDir);
        try (Decoder d = OnnxModels.load(model, OnnxOptions.defaults().withEngine(engine))) {
            List<Sample> held = HeldOut.of(c, d.card()).samples();
            Parts parts = Parts.split(held, Parts.DEFAULT_SEED, Parts.DEFAULT_CONFIRM);
            List<Sample> samples = switch (which) {
                case ALL -> held;
                case SEARCH -> parts.search();
                case CONFIRMATION -> parts.confirmation();
            };
            ModelInputs in = ModelInputs.prepare(d.card(), c.atlas(), samples);
            List<InputMask> masks = new ArrayList<>();
            for (List<String> s : sets) {
                int[] pos = s.stream().mapToInt(name -> d.card().regionNames().indexOf(name)).toArray();
                masks.add(InputMask.zero(RegionSet.of(d.card().regions(), pos)));
            }
            float[][][] probs = d.bind(in.batch()).probabilities(masks, 2);
            List<SetScore> out = new ArrayList<>();
            for (float[][] p : probs) {
                out.add(SetScore.of(p, in));
            }
            return new Scored(in, out);
        }
    }

    @Test
    void trainedDecoderIsWellAboveChanceOnUnseenSubjects() {
        Scored s = score(List.of(List.of()), OnnxOptions.Engine.AUTO);
        SetScore intact = s.scores().get(0);
        assertTrue(intact.n() >= 200, "the CI cohort must give at least 200 test samples, found " + intact.n());
        assertEquals(1.0 / 6, intact.chance(), 1e-12, "balanced classes: chance is 1/K");
        assertTrue(intact.accuracy() >= 3 * intact.chance(),
                "held-out accuracy " + intact.accuracy() + " should be at least 3x chance " + intact.chance());
        assertTrue(train.out().contains("Test accuracy"), train.out());
    }

    // Source: the one-sided exact binomial test against the majority-class rate (common practice for decoding).
    @Test
    void lesioningAMinimalCriticalSetCollapsesDecodingWhileAsManyDecoysDoNot() {
        Path truth = cohortDir.resolve(TruthFile.NAME);
        List<List<String>> minimal = TruthFile.decoderMinimumSets(truth);
        assertFalse(minimal.isEmpty(), "training must add the decoder's own minimal critical sets to truth.json");
        List<String> set = minimal.get(0);
        List<String> decoys = TruthFile.decoys(truth);
        assertTrue(decoys.size() >= set.size(), "the power control needs as many decoys as the critical set has regions");
        List<String> control = decoys.subList(0, set.size());
        // the truth was computed on the search part of the default split: the same scores must come out here
        Scored s = score(List.of(set, control), OnnxOptions.Engine.AUTO, Held.SEARCH);
        SetScore lesioned = s.scores().get(0);
        SetScore decoyLesion = s.scores().get(1);
        assertTrue(lesioned.accuracy() <= lesioned.chance() + 0.05,
                "lesioning " + set + " leaves accuracy " + lesioned.accuracy() + ", above chance + 0.05");
        assertTrue(lesioned.pValue() >= ALPHA, "lesioning " + set + " should not be significantly above chance, p = " + lesioned.pValue());
        assertTrue(decoyLesion.pValue() < ALPHA,
                "lesioning decoys " + control + " should keep decoding above chance, p = " + decoyLesion.pValue());
        Scored confirm = score(List.of(control), OnnxOptions.Engine.AUTO, Held.CONFIRMATION);
        assertTrue(confirm.scores().get(0).pValue() < ALPHA, "decoys survive on the confirmation part too");
        // the same through ONNX Runtime: the saved model is what was evaluated
        Scored ort = score(List.of(set, control), OnnxOptions.Engine.ONNXRUNTIME, Held.SEARCH);
        assertEquals(lesioned.correct(), ort.scores().get(0).correct());
        assertEquals(decoyLesion.correct(), ort.scores().get(1).correct());
    }

    // Must show (scan): positive and negative controls from the decoder's own truth (its single-region lesions on the
    // search part, in truth.json). The planted-pool region with the largest single drop is flagged significant after
    // Holm over all regions; the redundant group's members that are individually dispensable are not critical, and each
    // drops accuracy less than the positive control.
    @Test
    void aScanFlagsThePositiveControlAndNotTheDispensableRedundantMembers() throws java.io.IOException {
        Path truth = cohortDir.resolve(TruthFile.NAME);
        com.fasterxml.jackson.databind.JsonNode t = TruthFile.read(truth);
        java.util.Map<String, Integer> singleCorrect = new java.util.HashMap<>();
        java.util.Map<String, Boolean> singleCritical = new java.util.HashMap<>();
        for (com.fasterxml.jackson.databind.JsonNode s : t.get("decoder").get("sets")) {
            if (s.get("regions").size() == 1) {
                String region = s.get("regions").get(0).asText();
                singleCorrect.put(region, s.get("correct").asInt());
                singleCritical.put(region, s.get("critical").get("binomial:0.05").asBoolean());
            }
        }
        String positive = TruthFile.pool(truth).stream().min(java.util.Comparator.comparingInt(singleCorrect::get))
                .orElseThrow();
        List<String> dispensable = new ArrayList<>();
        for (com.fasterxml.jackson.databind.JsonNode r : t.get("designed").get("redundant_group").get("regions")) {
            if (!singleCritical.get(r.asText())) {
                dispensable.add(r.asText());
            }
        }
        assertFalse(dispensable.isEmpty(), "the CI cohort's redundant group has individually dispensable members");
        Path out = dir.resolve("scan");
        CruxsetCommand.Captured r = Cli.run("scan", "--model", model.toString(), "--cohort", cohortDir.toString(), "--out",
                out.toString(), "--threads", "2").requireSuccess();
        java.util.Map<String, java.util.Map<String, String>> rows = ScanCommandTest.readScan(out.resolve("scan-regions.tsv"));
        java.util.Map<String, String> pos = rows.get(positive);
        assertEquals("true", pos.get("significant"), "positive control " + positive + ":\n" + r.out());
        assertEquals(singleCorrect.get(positive), (int) Math.round(Double.parseDouble(pos.get("accuracy"))
                * Integer.parseInt(pos.get("n"))), "the scan scores the truth's part");
        for (String d : dispensable) {
            java.util.Map<String, String> row = rows.get(d);
            assertEquals("false", row.get("critical"), d);
            assertTrue(Double.parseDouble(row.get("drop")) < Double.parseDouble(pos.get("drop")),
                    d + " drops " + row.get("drop") + ", the positive control " + positive + " " + pos.get("drop"));
        }
    }

    // Must show (Shapley values) on the CI cohort: sampled network values lie within 2.5 half-widths of the exact values
    // from enumeration (every network jointly); the synergistic pair's sampled interaction interval is above zero; every
    // member of the decoder's smallest critical sets gets a larger region value than every decoy.
    @Test
    void shapleyValuesAgreeWithEnumerationAndSeparateTheTruth() throws Exception {
        Path truth = cohortDir.resolve(TruthFile.NAME);
        Path exactDir = dir.resolve("shapley-exact");
        Path sampledDir = dir.resolve("shapley-sampled");
        Cli.run("shapley", "--model", model.toString(), "--cohort", cohortDir.toString(), "--estimator", "exact",
                "--out", exactDir.toString(), "--threads", "2").requireSuccess();
        Cli.run("shapley", "--model", model.toString(), "--cohort", cohortDir.toString(), "--estimator", "antithetic",
                "--budget", "600", "--out", sampledDir.toString(), "--threads", "2").requireSuccess();
        java.util.Map<String, String[]> exact = shapleyRows(exactDir.resolve("shapley-networks.tsv"));
        java.util.Map<String, String[]> sampled = shapleyRows(sampledDir.resolve("shapley-networks.tsv"));
        assertEquals(exact.keySet(), sampled.keySet());
        for (String net : exact.keySet()) {
            double e = Double.parseDouble(exact.get(net)[1]);
            double v = Double.parseDouble(sampled.get(net)[1]);
            double hw = Double.parseDouble(sampled.get(net)[4]) - v;
            assertTrue(Math.abs(v - e) <= 2.5 * hw, net + ": sampled " + v + " ± " + hw + ", exact " + e);
        }
        Path regionsDir = dir.resolve("shapley-regions");
        CruxsetCommand.Captured r = Cli.run("shapley", "--model", model.toString(), "--cohort", cohortDir.toString(), "--players",
                "regions", "--budget", "6000", "--out", regionsDir.toString(), "--threads", "2").requireSuccess();
        java.util.Map<String, String[]> regions = shapleyRows(regionsDir.resolve("shapley-regions.tsv"));
        java.util.Set<String> members = new java.util.HashSet<>();
        for (List<String> set : TruthFile.decoderMinimumSets(truth)) {
            members.addAll(set);
        }
        for (String m : members) {
            for (String d : TruthFile.decoys(truth)) {
                assertTrue(Double.parseDouble(regions.get(m)[1]) > Double.parseDouble(regions.get(d)[1]),
                        m + " vs decoy " + d + ":\n" + r.out());
            }
        }
        List<String> pairRegions = new ArrayList<>();
        TruthFile.read(truth).get("designed").get("synergistic_pair").get("regions").forEach(x -> pairRegions.add(x.asText()));
        String row = java.nio.file.Files.readAllLines(regionsDir.resolve("shapley-regions-pairs.tsv")).stream()
                .filter(l -> l.startsWith(pairRegions.get(0) + "\t" + pairRegions.get(1))
                        || l.startsWith(pairRegions.get(1) + "\t" + pairRegions.get(0)))
                .findFirst().orElseThrow(() -> new AssertionError("the pair " + pairRegions + " is not among the top "
                        + "players' pairs:\n" + r.out()));
        assertTrue(Double.parseDouble(row.split("\t")[4]) > 0, "the synergistic pair's interval is above zero: " + row);
    }

    private static java.util.Map<String, String[]> shapleyRows(Path tsv) throws java.io.IOException {
        java.util.Map<String, String[]> out = new java.util.HashMap<>();
        List<String> lines = java.nio.file.Files.readAllLines(tsv);
        for (String line : lines.subList(1, lines.size())) {
            String[] f = line.split("\t");
            out.put(f[0], f);
        }
        return out;
    }

    // Must show: on the CI cohort, grow+prune (and genetic) find a critical set no larger than the smallest in the
    // decoder's own truth on the search part, and say whether the confirmation part confirms it.
    @org.junit.jupiter.params.ParameterizedTest
    @org.junit.jupiter.params.provider.ValueSource(strings = {"grow", "genetic", "local"})
    void searchMatchesTheDecodersOwnTruth(String strategy) {
        int truth = TruthFile.decoderMinimumSets(cohortDir.resolve(TruthFile.NAME)).get(0).size();
        CruxsetCommand.Captured r = Cli.run("search", "--model", model.toString(), "--cohort", cohortDir.toString(), "--strategy",
                strategy, "--budget", "3000", "--out", dir.resolve("search-" + strategy).toString(), "--threads", "2")
                .requireSuccess();
        int best = SearchCommandTest.bestSize(r.out());
        assertTrue(best > 0 && best <= truth, "best " + best + ", truth " + truth + ":\n" + r.out());
        String first = r.out().lines().filter(l -> l.startsWith("1  ")).findFirst().orElseThrow();
        assertTrue(first.matches(".*CRITICAL.*(CRITICAL|not confirmed).*(irreducible|not computed)"), first);
        if (first.endsWith("not computed")) {
            assertTrue(r.out().contains("Stopped: budget"), "a set goes uncertified only when the budget ran out:\n"
                    + r.out());
        }
    }

    @Test
    void infoReportsTheEngineAndHeldOutAccuracy() {
        CruxsetCommand.Captured info = Cli.run("info", "--model", model.toString(), "--cohort", cohortDir.toString()).requireSuccess();
        assertTrue(info.out().contains("engine: native (canonical GRU form"), info.out());
        assertTrue(info.out().contains("Held-out test split"), info.out());
        assertTrue(info.out().contains("95% Wilson"), info.out());
    }

    @Test
    void badCohortPathIsAClearErrorWithItsOwnExitCode() {
        CruxsetCommand.Captured r = Cli.run("info", "--model", model.toString(), "--cohort", dir.resolve("nowhere").toString());
        assertEquals(2, r.exit(), r.err());
        assertTrue(r.err().contains("nowhere"), r.err());
    }

    // Must show (report): a compare of >= 3 strategies x 2 seeds on the CI cohort produces every table and figure;
    // the page renders in headless Chromium (Debian's chromium) without console errors, with content in every figure;
    // the NIfTI-1 maps read back through Debian's python3-nibabel (an independent reader) and match the header
    // specification (Source: nifti1.h, NIfTI Data Format Working Group).
    @Test
    void reportRendersInABrowserWithMapsReadByAnIndependentReader() throws Exception {
        Path python = org.cruxset.scoring.testing.ExternalTools.requirePython("numpy", "nibabel");
        Path chromium = org.cruxset.scoring.testing.ExternalTools.requireProgram("chromium", "chromium",
                "chromium-browser");
        ReportChecks.run(cohortDir, model, dir.resolve("report-run"), python, chromium);
    }
}
