package org.cruxset.scoring.store;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.ArrayList;
import java.util.List;
import java.util.Random;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.eval.Outcomes;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;

/** Deterministic keys, outcomes and scores for the store tests (shared with the child process of the kill test). */
final class StoreFixtures {
    static final String MODEL = "a1".repeat(32);
    static final String DATA = "d4".repeat(32);
    static final String PREPROCESSING = "zscore";
    static final int UNIVERSE = 100;
    static final int SAMPLES = 30;
    static final int CLASSES = 4;
    static final List<String> CLASS_LABELS = List.of("rest", "motor", "memory", "unused");
    /** Class 3 has no samples, so its per-class accuracy is NaN. */
    static final int[] LABELS = labels();

    private StoreFixtures() {
    }

    private static int[] labels() {
        int[] y = new int[SAMPLES];
        for (int s = 0; s < SAMPLES; s++) {
            y[s] = s % 3;
        }
        return y;
    }

    /** A distinct set for every {@code i >= 0}: the bits of i + 1, plus one region in the second word. */
    static RegionSet set(int i) {
        List<Integer> p = new ArrayList<>();
        int v = i + 1;
        for (int b = 0; b < 31; b++) {
            if ((v >>> b & 1) != 0) {
                p.add(b);
            }
        }
        p.add(64 + i % 36);
        return RegionSet.of(UNIVERSE, p.stream().mapToInt(Integer::intValue).toArray());
    }

    static EvaluationKey key(int i) {
        return new EvaluationKey(MODEL, DATA, PREPROCESSING, LesionMode.NOISE, 7, set(i));
    }

    static Outcomes outcomes(int i) {
        Random r = new Random(1000L + i);
        int[] pred = new int[SAMPLES];
        float[] prob = new float[SAMPLES];
        for (int s = 0; s < SAMPLES; s++) {
            pred[s] = r.nextInt(4) == 0 ? r.nextInt(3) : LABELS[s];
            prob[s] = r.nextFloat();
        }
        return new Outcomes(pred, prob);
    }

    static SetScore score(Outcomes o) {
        return SetScore.of(o, LABELS, CLASSES);
    }

    static String regionNames(RegionSet set) {
        StringBuilder sb = new StringBuilder();
        for (int p : set.positions()) {
            sb.append(sb.length() == 0 ? "" : ",").append("R").append(p);
        }
        return sb.toString();
    }

    static ResultsStore.NewEvaluation fresh(int i) {
        Outcomes o = outcomes(i);
        return new ResultsStore.NewEvaluation(key(i), regionNames(set(i)), score(o), o, 0.001 * (i + 1));
    }

    static ResultsStore.RunInfo runInfo(String runKey) {
        return new ResultsStore.RunInfo(runKey, "search", "{\"strategy\": \"greedy\", \"budget\": 100}", MODEL, DATA,
                PREPROCESSING, LesionMode.NOISE, 7, 42, Provenance.current());
    }

    static List<String> sampleIds() {
        List<String> ids = new ArrayList<>();
        for (int s = 0; s < SAMPLES; s++) {
            ids.add("sub-" + (s / 3) + "_run-" + (s % 3));
        }
        return ids;
    }

    static List<String> subjects() {
        List<String> out = new ArrayList<>();
        for (int s = 0; s < SAMPLES; s++) {
            out.add("sub-" + (s / 3));
        }
        return out;
    }

    static void registerDataset(ResultsStore store) {
        store.registerDataset(DATA, sampleIds(), subjects(), CLASS_LABELS, LABELS);
    }

    /** Asserts two scores equal field by field, doubles by their bits. */
    static void assertSameScore(SetScore expected, SetScore actual, String what) {
        assertEquals(expected.n(), actual.n(), what + " n");
        assertEquals(expected.correct(), actual.correct(), what + " correct");
        assertBits(expected.accuracy(), actual.accuracy(), what + " accuracy");
        assertBits(expected.balancedAccuracy(), actual.balancedAccuracy(), what + " balanced accuracy");
        assertBits(expected.meanTrueClassProbability(), actual.meanTrueClassProbability(), what + " mean p(true)");
        assertBits(expected.chance(), actual.chance(), what + " chance");
        assertBits(expected.wilsonLow(), actual.wilsonLow(), what + " wilson low");
        assertBits(expected.wilsonHigh(), actual.wilsonHigh(), what + " wilson high");
        assertBits(expected.pValue(), actual.pValue(), what + " p-value");
        double[] e = expected.perClassAccuracy();
        double[] a = actual.perClassAccuracy();
        assertEquals(e.length, a.length, what + " classes");
        for (int k = 0; k < e.length; k++) {
            assertBits(e[k], a[k], what + " class " + k);
        }
    }

    /** Asserts two outcomes equal, probabilities by their raw bits. */
    static void assertSameOutcomes(Outcomes expected, Outcomes actual, String what) {
        assertEquals(expected.size(), actual.size(), what + " size");
        for (int s = 0; s < expected.size(); s++) {
            assertEquals(expected.predicted(s), actual.predicted(s), what + " predicted " + s);
            assertEquals(Float.floatToRawIntBits(expected.trueClassProbability(s)),
                    Float.floatToRawIntBits(actual.trueClassProbability(s)), what + " probability " + s);
        }
    }

    /** Asserts two doubles have the same bits; any NaN matches any NaN (the store keeps NaN as NULL). */
    static void assertBits(double expected, double actual, String what) {
        if (Double.isNaN(expected) && Double.isNaN(actual)) {
            return;
        }
        assertEquals(Double.doubleToRawLongBits(expected), Double.doubleToRawLongBits(actual),
                what + ": expected " + expected + ", found " + actual);
    }
}
