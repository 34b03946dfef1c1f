package org.cruxset.scoring.lesion;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertSame;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashSet;
import java.util.List;
import java.util.Optional;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.Preprocessing;
import org.junit.jupiter.api.Test;

class LesionFillsTest {
    private static final ReferenceStats REF = new ReferenceStats(new float[] {1.5f, -2f, 0f, 0.25f},
            new float[] {4f, 0.25f, 1f, 0.01f});

    /** A batch of smooth AR(1) series plus a slow oscillation (fMRI-like), one distinct series per sample and region. */
    private static InputBatch batch(int regions, int[] lengths, long seed) {
        SplittableRandom rnd = new SplittableRandom(seed);
        float[][] series = new float[lengths.length][];
        for (int s = 0; s < lengths.length; s++) {
            int len = lengths[s];
            float[] x = new float[len * regions];
            for (int r = 0; r < regions; r++) {
                double a = 0;
                double freq = 0.03 + 0.02 * r;
                double phase = rnd.nextDouble() * 2 * Math.PI;
                double offset = rnd.nextDouble() * 4 - 2;
                for (int t = 0; t < len; t++) {
                    a = 0.6 * a + gaussian(rnd);
                    x[t * regions + r] = (float) (offset + a + Math.sin(2 * Math.PI * freq * t + phase));
                }
            }
            series[s] = x;
        }
        return InputBatch.of(regions, series, lengths);
    }

    private static double gaussian(SplittableRandom rnd) {
        return Math.sqrt(-2 * Math.log(1 - rnd.nextDouble())) * Math.cos(2 * Math.PI * rnd.nextDouble());
    }

    private static List<String> ids(int n) {
        List<String> ids = new ArrayList<>();
        for (int s = 0; s < n; s++) {
            ids.add("sub-" + (100 + s) + "_run-1");
        }
        return ids;
    }

    private static float[] fill(LesionFill f, InputBatch b, int s, int r) {
        float[] out = new float[b.length(s)];
        f.fill(b, s, r, out);
        return out;
    }

    private static float[] column(InputBatch b, int s, int r) {
        float[] out = new float[b.length(s)];
        for (int t = 0; t < out.length; t++) {
            out[t] = b.series(s)[t * b.regions() + r];
        }
        return out;
    }

    /** |X_k|^2 for k in [0, T) by the direct DFT in double precision (independent of the code under test). */
    private static double[] periodogram(float[] x) {
        int n = x.length;
        double[] p = new double[n];
        for (int k = 0; k < n; k++) {
            double re = 0;
            double im = 0;
            for (int t = 0; t < n; t++) {
                double a = 2 * Math.PI * ((long) k * t % n) / n;
                re += x[t] * Math.cos(a);
                im -= x[t] * Math.sin(a);
            }
            p[k] = re * re + im * im;
        }
        return p;
    }

    // Source: Theiler J, Eubank S, Longtin A, Galdrikian B, Farmer JD (1992), "Testing for nonlinearity in time
    // series: the method of surrogate data", Physica D 58:77-94 (common practice for fMRI surrogate data; a
    // phase-randomised surrogate has the original's periodogram by construction).
    @Test
    void phaseKeepsEveryRegionsPowerSpectrum() {
        int[] lengths = {1, 2, 7, 40, 64, 121};
        int regions = 3;
        InputBatch b = batch(regions, lengths, 11);
        LesionFill f = LesionFills.of(LesionMode.PHASE, 7, null, b, ids(lengths.length));
        double worst = 0;
        for (int s = 0; s < lengths.length; s++) {
            for (int r = 0; r < regions; r++) {
                float[] x = column(b, s, r);
                float[] y = fill(f, b, s, r);
                if (x.length == 1) {
                    assertArrayEquals(x, y, "a length-1 series is returned unchanged");
                }
                double[] px = periodogram(x);
                double[] py = periodogram(y);
                for (int k = 0; k < px.length; k++) {
                    double rel = Math.abs(py[k] - px[k]) / px[k];
                    worst = Math.max(worst, rel);
                    assertTrue(rel <= 1e-4, "T=" + x.length + " region " + r + " bin " + k + ": |X_k|^2 " + px[k]
                            + " became " + py[k] + " (relative error " + rel + ")");
                }
                if (x.length >= 8) {
                    double diff = 0;
                    for (int t = 0; t < x.length; t++) {
                        diff = Math.max(diff, Math.abs(x[t] - y[t]));
                    }
                    assertTrue(diff > 0.1, "T=" + x.length + " region " + r + ": surrogate equals the original");
                }
            }
        }
        assertTrue(worst <= 1e-4, "worst relative error " + worst);
    }

    @Test
    void phaseIsCachedConsistentlyAcrossThreads() throws Exception {
        int[] lengths = {50, 73, 120, 9, 64};
        int regions = 6;
        InputBatch b = batch(regions, lengths, 3);
        List<String> ids = ids(lengths.length);
        LesionFill reference = LesionFills.of(LesionMode.PHASE, 5, null, b, ids);
        LesionFill shared = LesionFills.of(LesionMode.PHASE, 5, null, b, ids);
        ExecutorService pool = Executors.newFixedThreadPool(8);
        try {
            List<Future<Boolean>> jobs = new ArrayList<>();
            for (int rep = 0; rep < 16; rep++) {
                jobs.add(pool.submit(() -> {
                    for (int s = lengths.length - 1; s >= 0; s--) {
                        for (int r = 0; r < regions; r++) {
                            if (!Arrays.equals(fill(shared, b, s, r), fill(reference, b, s, r))) {
                                return false;
                            }
                        }
                    }
                    return true;
                }));
            }
            for (Future<Boolean> j : jobs) {
                assertTrue(j.get());
            }
        } finally {
            pool.shutdown();
        }
    }

    @Test
    void swapNeverDrawsFromTheSampleItselfAndCopiesTheDonor() {
        int[] lengths = {5, 12, 12, 30, 8, 45, 3, 30};
        int regions = 5;
        InputBatch b = batch(regions, lengths, 21);
        LesionFills.SwapFill f = (LesionFills.SwapFill) LesionFills.of(LesionMode.SWAP, 9, null, b, ids(lengths.length));
        Set<Integer> donorsSeen = new HashSet<>();
        for (int s = 0; s < lengths.length; s++) {
            int longestOther = 0;
            boolean anyLongEnough = false;
            for (int c = 0; c < lengths.length; c++) {
                if (c != s) {
                    longestOther = Math.max(longestOther, lengths[c]);
                    anyLongEnough |= lengths[c] >= lengths[s];
                }
            }
            for (int r = 0; r < regions; r++) {
                int d = f.donor(s, r);
                assertNotEquals(s, d, "sample " + s + " region " + r + " drew from itself");
                donorsSeen.add(d);
                float[] y = fill(f, b, s, r);
                float[] donor = column(b, d, r);
                if (anyLongEnough) {
                    assertTrue(lengths[d] >= lengths[s], "donor shorter than the target although a longer one exists");
                    assertArrayEquals(Arrays.copyOf(donor, lengths[s]), y, "first points of the donor");
                } else {
                    assertEquals(longestOther, lengths[d], "the longest other sample is the donor");
                    for (int t = 0; t < y.length; t++) {
                        assertEquals(donor[t % donor.length], y[t], "cyclic repetition at t=" + t);
                    }
                }
                assertFalse(Arrays.equals(column(b, s, r), y), "sample " + s + " region " + r + " got its own series");
                int matches = 0;
                for (int c = 0; c < lengths.length; c++) {
                    float[] other = column(b, c, r);
                    boolean same = true;
                    for (int t = 0; t < y.length && same; t++) {
                        same = other[t % other.length] == y[t];
                    }
                    matches += same ? 1 : 0;
                }
                assertEquals(1, matches, "exactly one sample's series appears in the replacement");
            }
        }
        assertTrue(donorsSeen.size() >= 4, "the seeded choice spreads over donors: " + donorsSeen);
    }

    @Test
    void swapNeedsAnotherSample() {
        InputBatch one = batch(3, new int[] {10}, 1);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> LesionFills.of(LesionMode.SWAP, 1, null, one, ids(1)));
        assertTrue(e.getMessage().contains("at least 2 samples"), e.getMessage());
    }

    // Tolerance: 5 standard errors of the sample mean (sqrt(v/n)) and of the sample variance (v*sqrt(2/(n-1)) for
    // Gaussian data), i.e. a two-sided alpha of about 6e-7 per check; the draws are seeded, so the test is fixed.
    @Test
    void noiseHasTheReferenceMeanAndVariance() {
        int samples = 40;
        int len = 2500;
        int[] lengths = new int[samples];
        Arrays.fill(lengths, len);
        InputBatch b = batch(REF.regions(), lengths, 5);
        LesionFill f = LesionFills.of(LesionMode.NOISE, 13, REF, b, ids(samples));
        for (int r = 0; r < REF.regions(); r++) {
            double sum = 0;
            double sq = 0;
            long n = 0;
            for (int s = 0; s < samples; s++) {
                for (float v : fill(f, b, s, r)) {
                    sum += v;
                    sq += (double) v * v;
                    n++;
                }
            }
            double mean = sum / n;
            double var = (sq - n * mean * mean) / (n - 1);
            double m0 = REF.mean(r);
            double v0 = REF.variance(r);
            assertEquals(m0, mean, 5 * Math.sqrt(v0 / n), "mean of region " + r);
            assertEquals(v0, var, 5 * v0 * Math.sqrt(2.0 / (n - 1)), "variance of region " + r);
        }
    }

    @Test
    void sameSeedSameValuesOtherSeedOtherValues() {
        int[] lengths = {20, 33, 33, 18, 50, 40};
        int regions = 4;
        InputBatch b = batch(regions, lengths, 8);
        List<String> ids = ids(lengths.length);
        for (LesionMode mode : new LesionMode[] {LesionMode.NOISE, LesionMode.SWAP, LesionMode.PHASE}) {
            LesionFill a = LesionFills.of(mode, 7, REF, b, ids);
            LesionFill again = LesionFills.of(mode, 7, REF, b, ids);
            LesionFill other = LesionFills.of(mode, 8, REF, b, ids);
            assertEquals(mode.label() + "(seed=7)", a.toString());
            boolean differs = false;
            for (int s = 0; s < lengths.length; s++) {
                for (int r = 0; r < regions; r++) {
                    float[] y = fill(a, b, s, r);
                    assertArrayEquals(y, fill(again, b, s, r), mode + ": same seed, same values");
                    assertArrayEquals(y, fill(a, b, s, r), mode + ": repeated call, same values");
                    differs |= !Arrays.equals(y, fill(other, b, s, r));
                }
            }
            assertTrue(differs, mode + ": another seed gives other values");
        }
    }

    @Test
    void aSampleGetsTheSameReplacementInASubsetOfTheBatch() {
        int[] lengths = {20, 33, 33, 18, 50, 40, 27, 33};
        int regions = 4;
        InputBatch full = batch(regions, lengths, 17);
        List<String> ids = ids(lengths.length);
        int[] pick = {5, 1, 3, 0, 7, 2};
        float[][] series = new float[pick.length][];
        int[] subLengths = new int[pick.length];
        List<String> subIds = new ArrayList<>();
        for (int i = 0; i < pick.length; i++) {
            series[i] = full.series(pick[i]);
            subLengths[i] = lengths[pick[i]];
            subIds.add(ids.get(pick[i]));
        }
        InputBatch sub = InputBatch.of(regions, series, subLengths);
        for (LesionMode mode : new LesionMode[] {LesionMode.NOISE, LesionMode.PHASE}) {
            LesionFill a = LesionFills.of(mode, 3, REF, full, ids);
            LesionFill c = LesionFills.of(mode, 3, REF, sub, subIds);
            for (int i = 0; i < pick.length; i++) {
                for (int r = 0; r < regions; r++) {
                    assertArrayEquals(fill(a, full, pick[i], r), fill(c, sub, i, r), mode + " sample " + ids.get(pick[i]));
                }
            }
        }
        LesionFills.SwapFill a = (LesionFills.SwapFill) LesionFills.of(LesionMode.SWAP, 3, null, full, ids);
        LesionFill c = LesionFills.of(LesionMode.SWAP, 3, null, sub, subIds);
        int checked = 0;
        for (int i = 0; i < pick.length; i++) {
            for (int r = 0; r < regions; r++) {
                int donor = a.donor(pick[i], r);
                boolean inSubset = false;
                for (int p : pick) {
                    inSubset |= p == donor;
                }
                if (inSubset) {
                    assertArrayEquals(fill(a, full, pick[i], r), fill(c, sub, i, r), "swap sample " + ids.get(pick[i]));
                    checked++;
                }
            }
        }
        assertTrue(checked >= 8, "only " + checked + " swap cases had their donor in the subset");
    }

    @Test
    void aFillRefusesAnotherBatch() {
        InputBatch b = batch(2, new int[] {10, 12}, 1);
        InputBatch other = batch(2, new int[] {10, 12}, 2);
        LesionFill f = LesionFills.of(LesionMode.PHASE, 1, null, b, ids(2));
        assertThrows(IllegalArgumentException.class, () -> f.fill(other, 0, 0, new float[10]));
    }

    @Test
    void meanAndNoiseNeedAReference() {
        InputBatch b = batch(4, new int[] {10, 12}, 1);
        for (LesionMode mode : new LesionMode[] {LesionMode.MEAN, LesionMode.NOISE}) {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                    () -> LesionFills.of(mode, 1, null, b, ids(2)));
            assertEquals("mode '" + mode.label() + "' needs reference means and variances: the model's training data, "
                    + "or --reference COHORT for a model trained elsewhere", e.getMessage());
        }
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> LesionFills.of(LesionMode.MEAN,
                1, new ReferenceStats(new float[] {0f}, new float[] {1f}), b, ids(2)));
        assertTrue(e.getMessage().contains("cover 1 regions but the model takes 4"), e.getMessage());
    }

    @Test
    void zeroAndMeanFills() {
        InputBatch b = batch(4, new int[] {6, 9}, 1);
        assertSame(LesionFill.ZERO, LesionFills.of(LesionMode.ZERO, 1, null, b, null));
        LesionFill m = LesionFills.of(LesionMode.MEAN, 1, REF, b, null);
        assertEquals("mean", m.toString());
        assertFalse(m.isZero());
        for (int r = 0; r < 4; r++) {
            float[] y = fill(m, b, 1, r);
            for (float v : y) {
                assertEquals(REF.mean(r), v);
            }
        }
        LesionFill z = LesionFills.of(LesionMode.MEAN, 1, new ReferenceStats(new float[4], new float[] {1, 1, 1, 1}), b,
                null);
        assertTrue(z.isZero());
    }

    @Test
    void idsMustBeDistinctAndMatchTheBatch() {
        InputBatch b = batch(2, new int[] {6, 9}, 1);
        assertThrows(IllegalArgumentException.class, () -> LesionFills.of(LesionMode.NOISE, 1,
                new ReferenceStats(new float[2], new float[] {1, 1}), b, List.of("a")));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> LesionFills.of(LesionMode.PHASE, 1, null, b, List.of("a", "a")));
        assertTrue(e.getMessage().contains("distinct"), e.getMessage());
    }

    @Test
    void meanCoincidesWithZeroUnderZscoring() {
        Optional<String> note = LesionFills.coincidence(LesionMode.MEAN, Preprocessing.ZSCORE, null);
        assertTrue(note.isPresent());
        assertTrue(note.get().startsWith("lesion mode 'mean' coincides with 'zero' here: "), note.get());

        SplittableRandom rnd = new SplittableRandom(4);
        List<Sample> samples = new ArrayList<>();
        for (int s = 0; s < 5; s++) {
            int len = 20 + 7 * s;
            float[] v = new float[len * 3];
            for (int i = 0; i < v.length; i++) {
                v[i] = (float) (3 + 2 * gaussian(rnd));
            }
            samples.add(Preprocessing.ZSCORE.apply(new Sample("s" + s, "sub" + s, "a", Split.TRAIN, len, 3, v)));
        }
        ReferenceStats zref = ReferenceStats.of(InputBatch.ofSamples(samples, 3));
        Optional<String> byMeans = LesionFills.coincidence(LesionMode.MEAN, Preprocessing.NONE, zref);
        assertTrue(byMeans.isPresent(), "z-scored reference means are all within 1e-6 of 0: " + zref);
        assertTrue(byMeans.get().startsWith("lesion mode 'mean' coincides with 'zero' here: "), byMeans.get());

        assertTrue(LesionFills.coincidence(LesionMode.MEAN, Preprocessing.NONE, REF).isEmpty());
        assertTrue(LesionFills.coincidence(LesionMode.MEAN, Preprocessing.NONE, null).isEmpty());
        assertTrue(LesionFills.coincidence(LesionMode.ZERO, Preprocessing.ZSCORE, zref).isEmpty());
        assertTrue(LesionFills.coincidence(LesionMode.PHASE, Preprocessing.ZSCORE, zref).isEmpty());
        assertTrue(LesionFills.coincidence(LesionMode.NOISE, Preprocessing.ZSCORE, zref).isEmpty());
        assertTrue(LesionFills.coincidence(LesionMode.NOISE, Preprocessing.NONE,
                new ReferenceStats(new float[] {1f, 2f}, new float[2])).get().startsWith(
                "lesion mode 'noise' coincides with 'mean' here: "));
    }
}
