package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruLayer;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The audit on a small differentiable decoder built by hand so that both cheap rankings are wrong for known reasons.
 *
 * <p>Eight regions, two classes (the sign y = ±1 of the evidence). The GRU's update gates are shut (bias −30) and its
 * recurrent weights zero, so its last hidden state is tanh(W·x_T + b) of the last time point, read out linearly:
 * <ul>
 *   <li>{@code twin-a} and {@code twin-b} both carry y; one unit sums them with weight 3, so it is saturated
 *       (tanh(±6)) and stays saturated with either twin lesioned (tanh(±3)): the pair is redundant, and its gradient
 *       is about 1e-4. Lesioning both removes all the evidence: {twin-a, twin-b} is the one smallest critical set.</li>
 *   <li>{@code offset} sits at 1 in every sample and the readout subtracts its constant contribution; zero-filling it
 *       shifts every sample towards one class by 1.5 logits, so some of that class is misread (accuracy near
 *       0.93, far from chance, and still above it with every decoy lesioned too). Its gradient is the largest and
 *       its single lesion the costliest.</li>
 *   <li>five decoys are zero-mean noise with moderate gradients and no lesion effect.</li>
 * </ul>
 * So the gradient ranking puts the twins last (saturation under-rates them) and the single-lesion ranking puts the
 * offset first and the twins at no accuracy drop (redundancy hides them): each ranking's critical prefix is larger
 * than the searched set, which exhaustive search proves a minimum.
 */
class AuditFixtureTest {
    static final String[] NAMES = {"decoy-1", "twin-a", "offset", "decoy-2", "twin-b", "decoy-3", "decoy-4", "decoy-5"};
    static final int TWIN_A = 1;
    static final int OFFSET = 2;
    static final int TWIN_B = 4;
    static final int[] DECOYS = {0, 3, 5, 6, 7};
    static final int LENGTH = 3;

    @TempDir
    static Path dir;
    static Path model;
    static Path cohort;

    @BeforeAll
    static void build() throws Exception {
        model = dir.resolve("fixture.onnx");
        cohort = dir.resolve("cohort");
        List<String> classes = List.of("minus", "plus");
        Files.write(model, OnnxGruWriter.write(network(), List.of(NAMES), classes, Preprocessing.NONE, Map.of()));
        CohortFiles.write(cohort(classes), cohort, false);
    }

    /** The hand-set decoder (see the class comment). */
    static GruNetwork network() {
        int in = NAMES.length;
        int hidden = 2 + DECOYS.length;
        float[] w = new float[3 * hidden * in];
        float[] wb = new float[3 * hidden];
        for (int u = 0; u < hidden; u++) {
            wb[u] = -30f; // update gate z = sigmoid(-30): shut, so h = the candidate of the last step
        }
        int h = 2 * hidden; // candidate rows
        w[(h) * in + TWIN_A] = 3f;
        w[(h) * in + TWIN_B] = 3f;
        w[(h + 1) * in + OFFSET] = 1f;
        for (int j = 0; j < DECOYS.length; j++) {
            w[(h + 2 + j) * in + DECOYS[j]] = 1f;
        }
        double offsetWeight = 1.97;
        float[] v = new float[hidden];
        v[0] = 2f;
        v[1] = (float) offsetWeight;
        for (int j = 0; j < DECOYS.length; j++) {
            v[2 + j] = 0.5f;
        }
        float[] readout = new float[2 * hidden];
        for (int u = 0; u < hidden; u++) {
            readout[u] = -0.5f * v[u];
            readout[hidden + u] = 0.5f * v[u];
        }
        float shift = (float) (0.5 * offsetWeight * Math.tanh(1));
        GruLayer layer = new GruLayer(in, hidden, w, new float[3 * hidden * hidden], wb, new float[3 * hidden], false);
        return new GruNetwork(List.of(layer), 2, readout, new float[] {shift, -shift});
    }

    /** 16 subjects × 16 samples, classes balanced within each subject, seeded. */
    static Cohort cohort(List<String> classes) {
        List<Region> regions = new ArrayList<>();
        for (int i = 0; i < NAMES.length; i++) {
            regions.add(new Region(i + 1, NAMES[i], i < 4 ? "front" : "back"));
        }
        SplittableRandom rng = new SplittableRandom(20261203L);
        List<Sample> samples = new ArrayList<>();
        for (int subject = 0; subject < 16; subject++) {
            for (int k = 0; k < 16; k++) {
                int y = k % 2 == 0 ? -1 : 1;
                float[] x = new float[LENGTH * NAMES.length];
                for (int t = 0; t < LENGTH; t++) {
                    int o = t * NAMES.length;
                    x[o + TWIN_A] = (float) (y + 0.2 * rng.nextGaussian());
                    x[o + TWIN_B] = (float) (y + 0.2 * rng.nextGaussian());
                    x[o + OFFSET] = (float) (1 + 0.05 * rng.nextGaussian());
                    for (int d : DECOYS) {
                        x[o + d] = (float) (0.5 * rng.nextGaussian());
                    }
                }
                samples.add(new Sample(String.format("s%02d-%02d", subject, k), String.format("sub%02d", subject),
                        classes.get(y < 0 ? 0 : 1), Split.TEST, LENGTH, NAMES.length, x));
            }
        }
        return new Cohort(Atlas.of(regions), samples);
    }

    static String[] args(Path out, String... more) {
        List<String> all = new ArrayList<>(List.of(more));
        all.addAll(List.of("--model", model.toString(), "--cohort", cohort.toString(), "--out", out.toString(),
                "--threads", "1"));
        return all.toArray(String[]::new);
    }

    // Must show: the audit on a small differentiable fixture finds each ranking's critical prefix larger than the
    // searched set, with certificates. Source of the expected values: the construction above (analytic: tanh'(6) is
    // about 2.5e-5, so the twins' gradient is four orders below the decoys'; the minimum {twin-a, twin-b} follows from
    // the readout), not a run of the tool.
    @Test
    void bothRankingsCriticalPrefixesAreLargerThanTheProvedMinimum() throws Exception {
        Path out = dir.resolve("out");
        Cli.run(args(out, "saliency")).requireSuccess();
        Cli.run(args(out, "scan")).requireSuccess();
        // The saliency ranking: the twins are last (saturated unit), the offset first.
        List<String> saliency = Files.readAllLines(out.resolve("saliency-regions.tsv"));
        assertEquals("offset", saliency.get(1).split("\t")[0], String.join("\n", saliency));
        List<String> lastTwo = List.of(saliency.get(saliency.size() - 2).split("\t")[0],
                saliency.get(saliency.size() - 1).split("\t")[0]);
        assertTrue(lastTwo.containsAll(List.of("twin-a", "twin-b")), String.join("\n", saliency));
        // The single-lesion scan: the offset's lesion costs accuracy, each twin's none (redundancy).
        List<String> scan = Files.readAllLines(out.resolve("scan-regions.tsv"));
        assertTrue(scan.get(1).startsWith("offset\t"), String.join("\n", scan));

        CruxsetCommand.Captured search = Cli.run(args(out, "search", "--strategy", "exhaustive", "--budget", "300")).requireSuccess();
        assertTrue(search.out().contains("twin-a") && search.out().contains("twin-b"), search.out());

        CruxsetCommand.Captured audit = Cli.run(args(out, "audit", "--ranking", out.resolve("ranking-saliency-regions.tsv").toString(),
                "--ranking", out.resolve("ranking-scan-regions.tsv").toString(), "--random", "30", "--max-k", "4"))
                .requireSuccess();
        String o = audit.out();
        assertTrue(o.contains("Smallest critical set in the store: 2 regions (twin-a,twin-b), irreducible"), o);
        assertTrue(o.contains("no critical set of at most 1 regions among all 8 regions"), o);
        assertTrue(o.contains("the smallest critical set in the store is a minimum"), o);
        Matcher m = Pattern.compile("Smallest critical prefix: \\d+ units, (\\d+) regions \\(([^)]*)\\), ([a-z ]+)")
                .matcher(o);
        List<Integer> sizes = new ArrayList<>();
        while (m.find()) {
            sizes.add(Integer.parseInt(m.group(1)));
            assertTrue(m.group(2).contains("twin-a") && m.group(2).contains("twin-b"), m.group());
            assertTrue(m.group(3).startsWith("not irreducible"), "the prefix holds regions it does not need: "
                    + m.group());
        }
        assertEquals(2, sizes.size(), o);
        assertEquals(NAMES.length, sizes.get(0), "the saliency prefix runs to the twins, which come last: " + o);
        assertTrue(sizes.get(1) > 2, "the single-lesion prefix needs the offset before the twins: " + o);
        assertEquals(2, o.split("Verdict: NOT MINIMAL", -1).length - 1, o);
        assertTrue(o.contains("an exhaustive certificate proves no critical set has fewer than 2 regions"), o);
        List<String> prefix = Files.readAllLines(out.resolve("audit-prefix.tsv"));
        assertTrue(prefix.get(0).contains("smallest_minimum_proof"), prefix.get(0));
        assertTrue(prefix.get(1).contains("exhaustive certificate of run"), prefix.get(1));
    }
}
