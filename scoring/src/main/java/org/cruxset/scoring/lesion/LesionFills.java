package org.cruxset.scoring.lesion;

import java.nio.charset.StandardCharsets;
import java.util.HashSet;
import java.util.List;
import java.util.Objects;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.concurrent.atomic.AtomicIntegerArray;
import java.util.concurrent.atomic.AtomicReferenceArray;
import org.cruxset.scoring.Checks;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.Preprocessing;

/**
 * Builds the {@link LesionFill} of each {@link LesionMode}, with every random draw fixed by the seed, the mode, the
 * sample's id and the region (for {@code swap} also the candidate donors' ids) and never by thread scheduling, call
 * order or a sample's position in the batch.
 */
public final class LesionFills {
    private static final long GOLDEN = 0x9E3779B97F4A7C15L;
    private static final double TWO_PI = 2 * Math.PI;
    private static final double NEAR_ZERO_MEAN = 1e-6;
    private static final double NEAR_ZERO_VARIANCE = 1e-12;

    private LesionFills() {
    }

    /**
     * The fill of {@code mode} for the samples of {@code batch} with ids {@code sampleIds} (batch order, distinct; may
     * be null for {@code zero} and {@code mean}), using {@code reference} for {@code mean} and {@code noise}; a
     * {@code swap} donor is another sample at least as long as the target (its first points), else the longest other
     * sample repeated cyclically.
     */
    public static LesionFill of(LesionMode mode, long seed, ReferenceStats reference, InputBatch batch,
                                List<String> sampleIds) {
        Objects.requireNonNull(mode, "mode");
        Objects.requireNonNull(batch, "batch");
        if (mode.needsReference()) {
            if (reference == null) {
                throw new IllegalArgumentException("mode '" + mode.label() + "' needs reference means and variances: "
                        + "the model's training data, or --reference COHORT for a model trained elsewhere");
            }
            if (reference.regions() != batch.regions()) {
                throw new IllegalArgumentException("reference statistics cover " + reference.regions()
                        + " regions but the model takes " + batch.regions());
            }
        }
        if (mode.isRandom()) {
            requireIds(batch, sampleIds);
        }
        return switch (mode) {
            case ZERO -> LesionFill.ZERO;
            case MEAN -> new MeanFill(reference);
            case NOISE -> new NoiseFill(seed, reference, batch, idHashes(sampleIds));
            case SWAP -> new SwapFill(seed, batch, sampleIds);
            case PHASE -> new PhaseFill(seed, batch, idHashes(sampleIds));
        };
    }

    /**
     * A plain note when {@code mode} coincides with another mode under {@code pre} and {@code ref} (which may be
     * null), else empty.
     */
    public static Optional<String> coincidence(LesionMode mode, Preprocessing pre, ReferenceStats ref) {
        Objects.requireNonNull(mode, "mode");
        Objects.requireNonNull(pre, "pre");
        if (mode == LesionMode.MEAN) {
            if (pre == Preprocessing.ZSCORE) {
                return Optional.of("lesion mode 'mean' coincides with 'zero' here: the model z-scores each region of "
                        + "each sample, so every region's mean over each sample is 0 and so is its reference mean");
            }
            if (ref != null && allMeansNearZero(ref)) {
                return Optional.of("lesion mode 'mean' coincides with 'zero' here: every reference mean is within "
                        + NEAR_ZERO_MEAN + " of 0");
            }
        }
        if (mode == LesionMode.NOISE && ref != null && allVariancesNearZero(ref)) {
            String also = pre == Preprocessing.ZSCORE || allMeansNearZero(ref) ? " (and so with 'zero')" : "";
            return Optional.of("lesion mode 'noise' coincides with 'mean'" + also + " here: every reference variance "
                    + "is within " + NEAR_ZERO_VARIANCE + " of 0, so the noise has no spread");
        }
        return Optional.empty();
    }

    private static boolean allMeansNearZero(ReferenceStats ref) {
        for (int r = 0; r < ref.regions(); r++) {
            if (Math.abs(ref.mean(r)) > NEAR_ZERO_MEAN) {
                return false;
            }
        }
        return true;
    }

    private static boolean allVariancesNearZero(ReferenceStats ref) {
        for (int r = 0; r < ref.regions(); r++) {
            if (ref.variance(r) > NEAR_ZERO_VARIANCE) {
                return false;
            }
        }
        return true;
    }

    private static void requireIds(InputBatch batch, List<String> sampleIds) {
        Objects.requireNonNull(sampleIds, "sampleIds");
        Checks.length("sampleIds", sampleIds.size(), batch.size());
        Set<String> seen = new HashSet<>();
        for (int s = 0; s < sampleIds.size(); s++) {
            String id = sampleIds.get(s);
            if (id == null) {
                throw new IllegalArgumentException("sample id " + s + " is null");
            }
            if (!seen.add(id)) {
                throw new IllegalArgumentException("sample ids must be distinct: '" + id + "' appears more than once");
            }
        }
        if ((long) batch.size() * batch.regions() > Integer.MAX_VALUE) {
            throw new IllegalArgumentException("batch too large: " + batch.size() + " samples x " + batch.regions()
                    + " regions");
        }
    }

    private static long[] idHashes(List<String> ids) {
        long[] h = new long[ids.size()];
        for (int s = 0; s < h.length; s++) {
            h[s] = fnv1a64(ids.get(s));
        }
        return h;
    }

    /** FNV-1a 64-bit hash of the UTF-8 bytes of {@code text}. */
    static long fnv1a64(String text) {
        long h = 0xcbf29ce484222325L;
        for (byte b : text.getBytes(StandardCharsets.UTF_8)) {
            h ^= b & 0xff;
            h *= 0x100000001b3L;
        }
        return h;
    }

    /** The SplitMix64 finaliser (Stafford's variant 13): a strong 64-bit mix. */
    static long mix64(long z) {
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return z ^ (z >>> 31);
    }

    /** The generator key of one (seed, mode, sample id, region). */
    static long key(long seed, LesionMode mode, long idHash, int region) {
        long h = mix64(seed ^ GOLDEN);
        h = mix64(h ^ fnv1a64(mode.label()));
        h = mix64(h ^ idHash);
        return mix64(h ^ ((region + 1L) * GOLDEN));
    }

    private static void checkBatch(InputBatch expected, InputBatch given, LesionFill fill) {
        if (given != expected) {
            throw new IllegalArgumentException("lesion fill " + fill + " was made for another batch");
        }
    }

    /** SplitMix64: a small generator whose output is fixed by its key on every JVM. */
    private static final class Draws {
        private long state;
        private double spare;
        private boolean hasSpare;

        Draws(long key) {
            this.state = key;
        }

        long nextLong() {
            state += GOLDEN;
            return mix64(state);
        }

        /** Uniform in [0, 1). */
        double nextDouble() {
            return (nextLong() >>> 11) * 0x1.0p-53;
        }

        /** Standard normal by the Box-Muller transform (StrictMath, so reproducible everywhere). */
        double nextGaussian() {
            if (hasSpare) {
                hasSpare = false;
                return spare;
            }
            double u1 = 1.0 - nextDouble();
            double u2 = nextDouble();
            double rad = StrictMath.sqrt(-2.0 * StrictMath.log(u1));
            double a = TWO_PI * u2;
            spare = rad * StrictMath.sin(a);
            hasSpare = true;
            return rad * StrictMath.cos(a);
        }
    }

    /** The region's reference mean as a constant series. */
    private static final class MeanFill implements LesionFill {
        private final float[] mean;
        private final boolean zero;

        MeanFill(ReferenceStats reference) {
            this.mean = reference.mean();
            boolean z = true;
            for (float m : mean) {
                z &= m == 0f;
            }
            this.zero = z;
        }

        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            java.util.Arrays.fill(out, 0, batch.length(sample), mean[region]);
        }

        @Override
        public boolean isZero() {
            return zero;
        }

        @Override
        public String toString() {
            return "mean";
        }
    }

    /** Gaussian noise with the region's reference mean and variance, drawn from the (seed, id, region) generator. */
    private static final class NoiseFill implements LesionFill {
        private final long seed;
        private final float[] mean;
        private final double[] sd;
        private final InputBatch batch;
        private final long[] idHash;

        NoiseFill(long seed, ReferenceStats reference, InputBatch batch, long[] idHash) {
            this.seed = seed;
            this.mean = reference.mean();
            this.sd = new double[mean.length];
            for (int r = 0; r < mean.length; r++) {
                sd[r] = Math.sqrt(reference.variance(r));
            }
            this.batch = batch;
            this.idHash = idHash;
        }

        @Override
        public void fill(InputBatch given, int sample, int region, float[] out) {
            checkBatch(batch, given, this);
            Objects.checkIndex(region, mean.length);
            Draws d = new Draws(key(seed, LesionMode.NOISE, idHash[sample], region));
            int len = batch.length(sample);
            double m = mean[region];
            double s = sd[region];
            for (int t = 0; t < len; t++) {
                out[t] = (float) (m + s * d.nextGaussian());
            }
        }

        @Override
        public String toString() {
            return "noise(seed=" + seed + ")";
        }
    }

    /**
     * The region's series from another sample of the batch, never the sample itself. The donor is chosen among the
     * other samples at least as long as the target and its first {@code length} points are taken; when no other
     * sample is that long, the donor is chosen among the longest other samples and repeated cyclically. The choice
     * is rendezvous hashing: each candidate's weight is a mix of the (seed, target id, region) key with the
     * candidate's id, and the heaviest wins, so it depends only on the seed, the ids and the candidate set, and a
     * donor chosen in a batch is still chosen in any subset that holds both samples.
     */
    static final class SwapFill implements LesionFill {
        private final long seed;
        private final InputBatch batch;
        private final List<String> ids;
        private final long[] idMix;
        private final int regions;
        /** Donor + 1 per (sample, region), 0 until computed. */
        private final AtomicIntegerArray donors;

        SwapFill(long seed, InputBatch batch, List<String> ids) {
            if (batch.size() < 2) {
                throw new IllegalArgumentException("mode 'swap' needs at least 2 samples to take another sample's "
                        + "series from; the batch has " + batch.size());
            }
            this.seed = seed;
            this.batch = batch;
            this.ids = List.copyOf(ids);
            this.regions = batch.regions();
            this.idMix = new long[ids.size()];
            for (int s = 0; s < idMix.length; s++) {
                idMix[s] = mix64(fnv1a64(ids.get(s)) ^ GOLDEN);
            }
            this.donors = new AtomicIntegerArray(batch.size() * regions);
        }

        /** The batch position of the sample whose series replaces {@code region} of {@code sample}. */
        int donor(int sample, int region) {
            Objects.checkIndex(sample, batch.size());
            Objects.checkIndex(region, regions);
            int slot = sample * regions + region;
            int d = donors.get(slot);
            if (d == 0) {
                d = chooseDonor(sample, region) + 1;
                donors.set(slot, d);
            }
            return d - 1;
        }

        private int chooseDonor(int sample, int region) {
            int n = batch.size();
            int len = batch.length(sample);
            int need = len;
            boolean any = false;
            int longest = 0;
            for (int c = 0; c < n; c++) {
                if (c != sample) {
                    any |= batch.length(c) >= len;
                    longest = Math.max(longest, batch.length(c));
                }
            }
            if (!any) {
                need = longest;
            }
            long base = key(seed, LesionMode.SWAP, fnv1a64(ids.get(sample)), region);
            int best = -1;
            long bestWeight = 0;
            for (int c = 0; c < n; c++) {
                if (c == sample || batch.length(c) < need) {
                    continue;
                }
                long w = mix64(base ^ idMix[c]);
                if (best < 0 || Long.compareUnsigned(w, bestWeight) > 0
                        || (w == bestWeight && ids.get(c).compareTo(ids.get(best)) < 0)) {
                    best = c;
                    bestWeight = w;
                }
            }
            return best;
        }

        @Override
        public void fill(InputBatch given, int sample, int region, float[] out) {
            checkBatch(batch, given, this);
            int d = donor(sample, region);
            float[] x = batch.series(d);
            int dl = batch.length(d);
            int len = batch.length(sample);
            int t0 = 0;
            while (t0 < len) {
                int end = Math.min(len, t0 + dl);
                for (int t = t0; t < end; t++) {
                    out[t] = x[(t - t0) * regions + region];
                }
                t0 = end;
            }
        }

        @Override
        public String toString() {
            return "swap(seed=" + seed + ")";
        }
    }

    /**
     * A phase-randomised surrogate of the region's own series: the DFT's amplitudes are kept, the phases of the bins
     * {@code 1 <= k < T/2} are replaced by seeded uniform phases with Hermitian symmetry, the DC bin and (for even T) the
     * Nyquist bin are kept as they are, and the real inverse DFT is taken; surrogates are computed once per
     * (sample, region) and cached.
     */
    static final class PhaseFill implements LesionFill {
        private final long seed;
        private final InputBatch batch;
        private final long[] idHash;
        private final int regions;
        private final AtomicReferenceArray<float[]> cache;
        /** Per length T: cos(2 pi j/T) for j in [0, T) followed by sin(2 pi j/T). */
        private final ConcurrentHashMap<Integer, double[]> twiddles = new ConcurrentHashMap<>();

        PhaseFill(long seed, InputBatch batch, long[] idHash) {
            this.seed = seed;
            this.batch = batch;
            this.idHash = idHash;
            this.regions = batch.regions();
            this.cache = new AtomicReferenceArray<>(batch.size() * regions);
        }

        @Override
        public void fill(InputBatch given, int sample, int region, float[] out) {
            checkBatch(batch, given, this);
            Objects.checkIndex(sample, batch.size());
            Objects.checkIndex(region, regions);
            int slot = sample * regions + region;
            float[] y = cache.get(slot);
            if (y == null) {
                float[] fresh = surrogate(sample, region);
                y = cache.compareAndSet(slot, null, fresh) ? fresh : cache.get(slot);
            }
            System.arraycopy(y, 0, out, 0, y.length);
        }

        private float[] surrogate(int sample, int region) {
            int len = batch.length(sample);
            float[] x = batch.series(sample);
            double[] v = new double[len];
            for (int t = 0; t < len; t++) {
                v[t] = x[t * regions + region];
            }
            Draws d = new Draws(key(seed, LesionMode.PHASE, idHash[sample], region));
            double[] y = phaseRandomise(v, twiddles.computeIfAbsent(len, LesionFills::twiddleTable), d);
            float[] out = new float[len];
            for (int t = 0; t < len; t++) {
                out[t] = (float) y[t];
            }
            return out;
        }

        @Override
        public String toString() {
            return "phase(seed=" + seed + ")";
        }
    }

    private static double[] twiddleTable(int len) {
        double[] w = new double[2 * len];
        for (int j = 0; j < len; j++) {
            double a = TWO_PI * j / len;
            w[j] = StrictMath.cos(a);
            w[len + j] = StrictMath.sin(a);
        }
        return w;
    }

    /** The phase-randomised surrogate of {@code x} (O(T^2) direct DFT over the precomputed twiddles {@code w}). */
    private static double[] phaseRandomise(double[] x, double[] w, Draws draws) {
        int len = x.length;
        double[] y = new double[len];
        if (len < 3) {
            System.arraycopy(x, 0, y, 0, len);
            return y;
        }
        double dc = 0;
        for (int t = 0; t < len; t++) {
            dc += x[t];
        }
        for (int t = 0; t < len; t++) {
            y[t] = dc;
        }
        for (int k = 1; 2 * k < len; k++) {
            double re = 0;
            double im = 0;
            int j = 0;
            for (int t = 0; t < len; t++) {
                re += x[t] * w[j];
                im -= x[t] * w[len + j];
                j += k;
                if (j >= len) {
                    j -= len;
                }
            }
            double amp = Math.sqrt(re * re + im * im);
            double phi = TWO_PI * draws.nextDouble();
            double a = 2 * amp * StrictMath.cos(phi);
            double b = 2 * amp * StrictMath.sin(phi);
            j = 0;
            for (int t = 0; t < len; t++) {
                y[t] += a * w[j] - b * w[len + j];
                j += k;
                if (j >= len) {
                    j -= len;
                }
            }
        }
        if ((len & 1) == 0) {
            double nyq = 0;
            for (int t = 0; t < len; t++) {
                nyq += (t & 1) == 0 ? x[t] : -x[t];
            }
            for (int t = 0; t < len; t++) {
                y[t] += (t & 1) == 0 ? nyq : -nyq;
            }
        }
        for (int t = 0; t < len; t++) {
            y[t] /= len;
        }
        return y;
    }
}
