package org.cruxset.scoring.stats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.nio.file.Path;
import java.util.SplittableRandom;
import org.cruxset.scoring.testing.ExternalTools;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** McNemar tests and multiple-testing corrections against a published example, analytic values and SciPy/statsmodels. */
class PairedTestsTest {
    private static final JsonMapper JSON = new JsonMapper();

    @TempDir
    Path dir;

    // Source: Benjamini & Hochberg (1995), J. R. Statist. Soc. B 57, section 3.2: 15 p-values from a multicentre trial
    // (values from memory); at level 0.05 the step-up procedure rejects the four smallest, Holm's step-down the three
    // smallest (Bonferroni alone: the three smallest too).
    private static final double[] BH_EXAMPLE = {0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459,
        0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.000};

    @Test
    void thePublishedExampleRejectsFourByFalseDiscoveryRateAndThreeByHolm() {
        assertEquals(4, below(PairedTests.benjaminiHochberg(BH_EXAMPLE), 0.05));
        assertEquals(3, below(PairedTests.holm(BH_EXAMPLE), 0.05));
        // Analytic: Holm's third adjusted value is 13 × 0.0019, its fourth max(12 × 0.0095, earlier ones).
        assertEquals(13 * 0.0019, PairedTests.holm(BH_EXAMPLE)[2], 1e-12);
        assertEquals(12 * 0.0095, PairedTests.holm(BH_EXAMPLE)[3], 1e-12);
    }

    private static int below(double[] p, double alpha) {
        int n = 0;
        for (double v : p) {
            n += v <= alpha ? 1 : 0;
        }
        return n;
    }

    @Test
    void exactMcNemarHasItsAnalyticValues() {
        // Analytic: with b + c = n discordant pairs all on one side, p = 2 × 0.5^n.
        assertEquals(2 * Math.pow(0.5, 10), PairedTests.mcNemarExact(10, 0), 1e-15);
        assertEquals(2 * Math.pow(0.5, 10), PairedTests.mcNemarExact(0, 10), 1e-15);
        // Analytic: b = 1, c = 4: P(X <= 1) = 6/32, doubled.
        assertEquals(12.0 / 32, PairedTests.mcNemarExact(1, 4), 1e-15);
        assertEquals(1.0, PairedTests.mcNemarExact(5, 5), 0.0);
        assertEquals(1.0, PairedTests.mcNemarExact(0, 0), 0.0);
    }

    @Test
    void theClusteredTestIsTheUncorrectedMcNemarStatisticWhenEachSubjectGivesOneSample() {
        // Analytic: clusters of one sample give X² = (b − c)² / (b + c); for b = 15, c = 5, X² = 5, p = erfc(√2.5).
        int[] b = new int[40];
        int[] c = new int[40];
        for (int k = 0; k < 15; k++) {
            b[k] = 1;
        }
        for (int k = 15; k < 20; k++) {
            c[k] = 1;
        }
        assertEquals(org.apache.commons.math3.special.Erf.erfc(Math.sqrt(2.5)), PairedTests.mcNemarClustered(b, c), 1e-14);
        assertEquals(1.0, PairedTests.mcNemarClustered(new int[] {2, 1}, new int[] {2, 1}), 0.0);
    }

    @Test
    void badInputIsNamed() {
        assertThrows(IllegalArgumentException.class, () -> PairedTests.holm(new double[] {0.5, 1.2}));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> PairedTests.Correction.parse("sidak"));
        assertTrue(e.getMessage().contains("holm or bh"), e.getMessage());
    }

    private static final String REFERENCE = """
            import json, sys
            from scipy.stats import binomtest
            from statsmodels.stats.multitest import multipletests
            from statsmodels.stats.contingency_tables import mcnemar
            cases = json.load(open(sys.argv[1]))
            out = {"exact": [], "holm": [], "bh": [], "chi2": []}
            for b, c in cases["pairs"]:
                out["exact"].append(binomtest(min(b, c), b + c, 0.5, alternative="two-sided").pvalue if b + c > 0 else 1.0)
                out["chi2"].append(float(mcnemar([[0, b], [c, 0]], exact=False, correction=False).pvalue) if b + c > 0 else 1.0)
            for p in cases["pvalues"]:
                out["holm"].append(list(multipletests(p, method="holm")[1]))
                out["bh"].append(list(multipletests(p, method="fdr_bh")[1]))
            print(json.dumps(out))
            """;

    // Source: SciPy's binomtest (exact McNemar is the two-sided binomial test of b among b + c at 1/2), statsmodels'
    // mcnemar (uncorrected chi-square) and multipletests (holm, fdr_bh), Debian's python3-scipy and python3-statsmodels.
    @Test
    void agreesWithSciPyAndStatsmodels() throws Exception {
        Path python = ExternalTools.requirePython("scipy", "statsmodels");
        SplittableRandom rng = new SplittableRandom(7);
        int[][] pairs = new int[40][];
        for (int i = 0; i < pairs.length; i++) {
            pairs[i] = new int[] {rng.nextInt(0, 60), rng.nextInt(0, 60)};
        }
        pairs[0] = new int[] {0, 0};
        pairs[1] = new int[] {12, 12};
        double[][] pvalues = new double[12][];
        for (int i = 0; i < pvalues.length; i++) {
            pvalues[i] = new double[1 + rng.nextInt(30)];
            for (int j = 0; j < pvalues[i].length; j++) {
                pvalues[i][j] = rng.nextDouble() < 0.3 ? rng.nextDouble() * 0.01 : rng.nextDouble();
            }
        }
        pvalues[0] = BH_EXAMPLE;
        pvalues[1] = new double[] {0.01, 0.01, 0.03, 0.03, 0.5};
        Path cases = dir.resolve("cases.json");
        JSON.writeValue(cases.toFile(), java.util.Map.of("pairs", pairs, "pvalues", pvalues));
        JsonNode ref = JSON.readTree(ExternalTools.runPython(python, dir, REFERENCE, cases.toString()));
        for (int i = 0; i < pairs.length; i++) {
            int b = pairs[i][0];
            int c = pairs[i][1];
            double expected = ref.get("exact").get(i).asDouble();
            assertEquals(expected, PairedTests.mcNemarExact(b, c), 1e-9 * Math.max(1e-300, expected) + 1e-14,
                    "exact McNemar b=" + b + " c=" + c);
            int[] bs = new int[b + c];
            int[] cs = new int[b + c];
            for (int k = 0; k < b; k++) {
                bs[k] = 1;
            }
            for (int k = b; k < b + c; k++) {
                cs[k] = 1;
            }
            assertEquals(ref.get("chi2").get(i).asDouble(), PairedTests.mcNemarClustered(bs, cs), 1e-9,
                    "clusters of one vs uncorrected McNemar, b=" + b + " c=" + c);
        }
        for (int i = 0; i < pvalues.length; i++) {
            assertArrayEquals(toArray(ref.get("holm").get(i)), PairedTests.holm(pvalues[i]), 1e-12, "holm case " + i);
            assertArrayEquals(toArray(ref.get("bh").get(i)), PairedTests.benjaminiHochberg(pvalues[i]), 1e-12,
                    "bh case " + i);
        }
    }

    private static double[] toArray(JsonNode a) {
        double[] out = new double[a.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = a.get(i).asDouble();
        }
        return out;
    }

    @Test
    void thePairedBootstrapIntervalHoldsTheObservedDropAndIsSeeded() {
        SplittableRandom rng = new SplittableRandom(3);
        int n = 400;
        boolean[] intact = new boolean[n];
        boolean[] lesioned = new boolean[n];
        int[] subject = new int[n];
        int drop = 0;
        for (int s = 0; s < n; s++) {
            subject[s] = s / 10;
            intact[s] = rng.nextDouble() < 0.9;
            lesioned[s] = intact[s] && rng.nextDouble() < 0.6;
            drop += (intact[s] ? 1 : 0) - (lesioned[s] ? 1 : 0);
        }
        double[] ci = ClusteredStats.pairedDifferenceBootstrap(intact, lesioned, subject, 40, 2000, 11, 0.95);
        double observed = drop / (double) n;
        assertTrue(ci[0] < observed && observed < ci[1], "interval " + ci[0] + ".." + ci[1] + " around " + observed);
        assertArrayEquals(ci, ClusteredStats.pairedDifferenceBootstrap(intact, lesioned, subject, 40, 2000, 11, 0.95));
        double[] same = ClusteredStats.pairedDifferenceBootstrap(intact, intact, subject, 40, 500, 11, 0.95);
        assertArrayEquals(new double[] {0, 0}, same, 0.0);
    }
}
