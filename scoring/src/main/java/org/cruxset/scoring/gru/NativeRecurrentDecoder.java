package org.cruxset.scoring.gru;

import java.util.Arrays;
import java.util.List;
import java.util.Objects;
import java.util.concurrent.ConcurrentLinkedQueue;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.internal.Parallel;
import org.cruxset.scoring.kernel.Activations;
import org.cruxset.scoring.kernel.Kernels;
import org.cruxset.scoring.kernel.PackedMatrix;
import org.cruxset.scoring.lstm.LstmLayer;
import org.cruxset.scoring.lstm.LstmNetwork;
import org.cruxset.scoring.kernel.EngineKernels;

/**
 * Cruxset's own engine for {@link GruNetwork}s and {@link LstmNetwork}s: single precision, the ONNX GRU and LSTM
 * operators' semantics, built to score
 * many lesions of one batch.
 *
 * <p>A bound batch caches the intact input projection of layer 0, {@code P = W·x_t + Wb (+ Rb for the z and r
 * gates)}, for every sample and step, on first use. A lesion of regions L with replacement values v then only adds
 * {@code Σ_{r∈L} W[:, r]·(v_r(t) − x_r(t))} to P, at a cost that grows with |L| rather than with the region count,
 * and runs the recurrence. The cache takes {@code 4 · G·H₀ · Σ_s T_s} bytes, G being 3 gates (GRU) or 4 (LSTM), H₀
 * the first layer's hidden
 * size and T_s the length of sample s (at most {@code 12·H₀·S·T_max} for S samples; 203 MB for 660 samples of 200
 * steps at H₀ = 128). When that exceeds the limit, system property {@value #CACHE_PROPERTY} in MB of 2^20 bytes
 * (default {@value #DEFAULT_CACHE_MB}) or the constructor argument, every set is projected in full instead.
 *
 * <p>Samples are sorted by length and run in blocks; at each step the block's active samples are a prefix and the
 * recurrence is a matrix product over them, run on {@link Kernels#get()} (the Vector API when present). Sigmoid and
 * tanh are {@link Activations}. Thread-safe.
 */
public final class NativeRecurrentDecoder implements Decoder {
    /** System property holding the projection cache limit in MB (2^20 bytes). */
    public static final String CACHE_PROPERTY = "cruxset.projectionCacheMB";
    /** The projection cache limit in MB when the system property is not set. */
    public static final long DEFAULT_CACHE_MB = 2048;
    /** Most samples in one block. */
    static final int BLOCK = 64;
    /** Most bytes of replacement values one worker holds at a time. */
    static final long VALUES_BYTES = 64L << 20;

    /** How a bound batch projects layer 0's input under a mask. */
    enum Mode {
        /** Cached projection plus correction when the cache fits its limit and the correction is the cheaper. */
        AUTO,
        /** Always the cached projection plus correction (the cache is built whatever its size). */
        INCREMENTAL,
        /** Always the full projection of the masked input (the reference path). */
        PLAIN
    }

    /** The GRU network, or null for an LSTM. */
    private final GruNetwork network;
    private final int inputs;
    private final int classes;
    private final ModelCard card;
    private final Layer[] layers;
    private final float[] readout;
    private final float[] readoutBias;
    private final long cacheLimitMB;

    /** An engine for {@code network}, described by {@code card} (whose region and class counts must match). */
    public NativeRecurrentDecoder(GruNetwork network, ModelCard card) {
        this(network, card, configuredCacheMB());
    }

    /** An engine for {@code network} whose bound batches cache input projections of at most {@code projectionCacheMB} MB. */
    public NativeRecurrentDecoder(GruNetwork network, ModelCard card, long projectionCacheMB) {
        this(Objects.requireNonNull(network, "network"), network.inputs(), network.classes(),
                network.layers().stream().map(Layer::new).toArray(Layer[]::new), network.readout(), network.bias(), card,
                projectionCacheMB);
    }

    /** An engine for an LSTM {@code network}, described by {@code card} (whose region and class counts must match). */
    public NativeRecurrentDecoder(LstmNetwork network, ModelCard card) {
        this(network, card, configuredCacheMB());
    }

    /** An engine for an LSTM whose bound batches cache input projections of at most {@code projectionCacheMB} MB. */
    public NativeRecurrentDecoder(LstmNetwork network, ModelCard card, long projectionCacheMB) {
        this(null, Objects.requireNonNull(network, "network").inputs(), network.classes(),
                network.layers().stream().map(Layer::new).toArray(Layer[]::new), network.readout(), network.bias(), card,
                projectionCacheMB);
    }

    private NativeRecurrentDecoder(GruNetwork gru, int inputs, int classes, Layer[] layers, float[] readout,
                                   float[] readoutBias, ModelCard card, long projectionCacheMB) {
        this.network = gru;
        this.inputs = inputs;
        this.classes = classes;
        this.card = Objects.requireNonNull(card, "card");
        if (card.regions() != inputs) {
            throw new IllegalArgumentException("model card has " + card.regions() + " regions, network takes " + inputs);
        }
        if (card.classes() != classes) {
            throw new IllegalArgumentException("model card has " + card.classes() + " classes, network gives " + classes);
        }
        if (projectionCacheMB < 0) {
            throw new IllegalArgumentException("projection cache limit must be at least 0 MB, found " + projectionCacheMB);
        }
        this.cacheLimitMB = projectionCacheMB;
        this.layers = layers;
        this.readout = readout;
        this.readoutBias = readoutBias;
    }

    private static long configuredCacheMB() {
        String v = System.getProperty(CACHE_PROPERTY);
        if (v == null || v.isBlank()) {
            return DEFAULT_CACHE_MB;
        }
        try {
            return Long.parseLong(v.strip());
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("system property " + CACHE_PROPERTY + " must be a whole number of MB, found '"
                    + v + "'", e);
        }
    }

    /** The GRU network this engine runs, or empty when it runs an LSTM. */
    public java.util.Optional<GruNetwork> gruNetwork() {
        return java.util.Optional.ofNullable(network);
    }

    /** "GRU" or "LSTM". */
    public String cell() {
        return layers[0].cell == Cell.LSTM ? "LSTM" : "GRU";
    }

    @Override
    public ModelCard card() {
        return card;
    }

    /** The projection cache limit in MB (2^20 bytes). */
    public long projectionCacheLimitMB() {
        return cacheLimitMB;
    }

    /** Bytes the cached input projections of {@code batch} take: 4 · G·H₀ · Σ_s T_s. */
    public long projectionCacheBytes(InputBatch batch) {
        long steps = 0;
        for (int s = 0; s < batch.size(); s++) {
            steps += batch.length(s);
        }
        return 4L * layers[0].width * steps;
    }

    /** Whether batches like {@code batch} get cached input projections (their size is within the limit). */
    public boolean cachesProjections(InputBatch batch) {
        return projectionCacheBytes(batch) <= (cacheLimitMB << 20);
    }

    @Override
    public Bound bind(InputBatch batch) {
        return bind(batch, Mode.AUTO);
    }

    /** Binds {@code batch} with the given projection mode. */
    Bound bind(InputBatch batch, Mode mode) {
        if (batch.regions() != inputs) {
            throw new IllegalArgumentException("batch has " + batch.regions() + " regions, the model takes " + inputs);
        }
        return new BoundBatch(batch, mode);
    }

    /** Class probabilities of one time-major input of {@code length} steps. */
    public float[] probabilities(float[] input, int length) {
        int n = inputs;
        if (length < 1 || input.length < (long) length * n) {
            throw new IllegalArgumentException("input of " + input.length + " floats does not hold " + length + " steps of "
                    + n + " regions");
        }
        float[] x = input.length == length * n ? input : Arrays.copyOf(input, length * n);
        InputBatch one = InputBatch.of(n, new float[][] {x}, new int[] {length});
        return bind(one, Mode.PLAIN).probabilities(List.of(InputMask.none(n)), 1)[0][0];
    }

    /** Softmax in place, returning its argument. */
    static float[] softmax(float[] z) {
        float max = Float.NEGATIVE_INFINITY;
        for (float v : z) {
            max = Math.max(max, v);
        }
        double sum = 0;
        for (int i = 0; i < z.length; i++) {
            double e = Math.exp(z[i] - max);
            z[i] = (float) e;
            sum += e;
        }
        for (int i = 0; i < z.length; i++) {
            z[i] = (float) (z[i] / sum);
        }
        return z;
    }

    // ---------------------------------------------------------------- kernels

    private static final EngineKernels KERNELS = Kernels.get();

    /** {@code out[i][0..m) += Σ_{j<k} in[i][off + j] · w[j][0..m)} for rows {@code i < rows}, on this JVM's kernels. */
    static void gemm(float[][] in, int off, float[][] w, float[][] out, int rows, int k, int m) {
        KERNELS.gemm(in, off, w, out, rows, k, m);
    }

    /** {@code out[i] += in[i][off ..] · w} for rows {@code i < rows}, on this JVM's kernels. */
    private static void gemm(float[][] in, int off, PackedMatrix w, float[][] out, int rows) {
        KERNELS.gemm(in, off, w, out, rows);
    }

    // ---------------------------------------------------------------- layers and bound batches

    /** The recurrent cell of a layer. */
    private enum Cell { GRU_LINEAR_BEFORE_RESET, GRU_RESET_BEFORE_LINEAR, LSTM }

    /** One layer's weights as rows per input unit (the loop shape the JIT vectorises), gate order z, r, h. */
    private static final class Layer {
        final Cell cell;
        final int input;
        final int hidden;
        /** Gates × hidden: the width of the input projection. */
        final int width;
        final boolean lbr;
        /** [input][G·H]: column i of W. */
        final float[][] wt;
        /** With linear_before_reset or for an LSTM, [H][G·H]: column j of R; else null. */
        final float[][] rt;
        /** Without linear_before_reset, [H][2H]: column j of R_z and R_r; else null. */
        final float[][] rzr;
        /** Without linear_before_reset, [H][H]: column j of R_h; else null. */
        final float[][] rh;
        /** GRU: Wb + Rb for z and r, Wb for h. LSTM: Wb + Rb for every gate. */
        final float[] bias;
        /** Rb_h. */
        final float[] rbh;
        /** [3H]: zero, then Rb_h at [2H, 3H). */
        final float[] rbh3;
        /** {@link #wt}, {@link #rt}, {@link #rzr} and {@link #rh} packed for the kernels (null where those are). */
        final PackedMatrix wp;
        final PackedMatrix rp;
        final PackedMatrix rzrp;
        final PackedMatrix rhp;

        Layer(LstmLayer layer) {
            cell = Cell.LSTM;
            input = layer.input();
            hidden = layer.hidden();
            width = 4 * hidden;
            lbr = false;
            int g4 = width;
            float[] w = layer.w();
            float[] r = layer.r();
            float[] wb = layer.wb();
            float[] rb = layer.rb();
            wt = new float[input][g4];
            for (int g = 0; g < g4; g++) {
                for (int i = 0; i < input; i++) {
                    wt[i][g] = w[g * input + i];
                }
            }
            rt = new float[hidden][g4];
            for (int g = 0; g < g4; g++) {
                for (int j = 0; j < hidden; j++) {
                    rt[j][g] = r[g * hidden + j];
                }
            }
            rzr = null;
            rh = null;
            bias = new float[g4];
            for (int g = 0; g < g4; g++) {
                bias[g] = wb[g] + rb[g];
            }
            rbh = null;
            rbh3 = null;
            wp = KERNELS.pack(wt, g4);
            rp = KERNELS.pack(rt, g4);
            rzrp = null;
            rhp = null;
        }

        Layer(GruLayer layer) {
            input = layer.input();
            hidden = layer.hidden();
            width = 3 * hidden;
            lbr = layer.linearBeforeReset();
            cell = lbr ? Cell.GRU_LINEAR_BEFORE_RESET : Cell.GRU_RESET_BEFORE_LINEAR;
            int h = hidden;
            int g3 = 3 * h;
            float[] w = layer.w();
            float[] r = layer.r();
            float[] wb = layer.wb();
            float[] rb = layer.rb();
            wt = new float[input][g3];
            for (int g = 0; g < g3; g++) {
                for (int i = 0; i < input; i++) {
                    wt[i][g] = w[g * input + i];
                }
            }
            if (lbr) {
                rt = new float[h][g3];
                for (int g = 0; g < g3; g++) {
                    for (int j = 0; j < h; j++) {
                        rt[j][g] = r[g * h + j];
                    }
                }
                rzr = null;
                rh = null;
            } else {
                rt = null;
                rzr = new float[h][2 * h];
                rh = new float[h][h];
                for (int j = 0; j < h; j++) {
                    for (int g = 0; g < 2 * h; g++) {
                        rzr[j][g] = r[g * h + j];
                    }
                    for (int g = 0; g < h; g++) {
                        rh[j][g] = r[(2 * h + g) * h + j];
                    }
                }
            }
            bias = new float[g3];
            for (int g = 0; g < g3; g++) {
                bias[g] = g < 2 * h ? wb[g] + rb[g] : wb[g];
            }
            rbh = Arrays.copyOfRange(rb, 2 * h, g3);
            rbh3 = new float[g3];
            System.arraycopy(rbh, 0, rbh3, 2 * h, h);
            wp = KERNELS.pack(wt, g3);
            rp = lbr ? KERNELS.pack(rt, g3) : null;
            rzrp = lbr ? null : KERNELS.pack(rzr, 2 * h);
            rhp = lbr ? null : KERNELS.pack(rh, h);
        }
    }

    /** A batch bound to this engine: samples sorted by length, split into blocks, projections cached on first use. */
    private final class BoundBatch implements Bound {
        final InputBatch batch;
        final Mode mode;
        final int n;
        final int regions;
        /** Sample indices by length, longest first (ties by index). */
        final int[] order;
        final boolean cacheAllowed;
        private volatile float[][] cache;

        BoundBatch(InputBatch batch, Mode mode) {
            this.batch = batch;
            this.mode = mode;
            this.n = batch.size();
            this.regions = batch.regions();
            // Longest first, ties by index: sort keys (maxLength - length, index).
            long[] keys = new long[n];
            for (int s = 0; s < n; s++) {
                keys[s] = ((long) (batch.maxLength() - batch.length(s)) << 32) | s;
            }
            Arrays.sort(keys);
            order = new int[n];
            for (int s = 0; s < n; s++) {
                order[s] = (int) keys[s];
            }
            cacheAllowed = switch (mode) {
                case AUTO -> cachesProjections(batch);
                case INCREMENTAL -> true;
                case PLAIN -> false;
            };
        }

        /**
         * Block starts over {@link #order} for {@code jobsPerBlock · blocks} jobs on {@code threads} threads: blocks
         * of at most {@link #BLOCK} samples, a multiple of four where possible, small enough to give each thread
         * about four jobs. A sample's result does not depend on its block.
         */
        int[] blocks(int jobsPerBlock, int threads) {
            if (n == 0) {
                return new int[] {0, 0};
            }
            long wanted = 4L * Math.max(1, threads);
            int size = (int) Math.min(BLOCK, Math.max(4, ((long) n * jobsPerBlock + wanted - 1) / wanted));
            int count = Math.max(1, (n + size - 1) / size);
            size = ((n + count - 1) / count + 3) & ~3;
            count = Math.max(1, (n + size - 1) / size);
            int[] starts = new int[count + 1];
            for (int b = 0; b <= count; b++) {
                starts[b] = Math.min(n, b * size);
            }
            return starts;
        }

        @Override
        public float[][][] probabilities(List<InputMask> masks, int threads) {
            int m = masks.size();
            float[][][] out = new float[m][n][];
            if (m == 0 || n == 0) {
                return out;
            }
            InputMask[] ms = masks.toArray(InputMask[]::new);
            boolean[] incremental = new boolean[m];
            boolean any = false;
            for (int i = 0; i < m; i++) {
                InputMask mask = ms[i];
                int[] pos = mask.regions().positions();
                if (pos.length > 0 && pos[pos.length - 1] >= regions) {
                    throw new IllegalArgumentException("mask lesions region position " + pos[pos.length - 1]
                            + " but the model takes " + regions + " regions");
                }
                // A zero fill costs |L| corrections or a full projection of the N - |L| kept inputs.
                incremental[i] = cacheAllowed && (mode == Mode.INCREMENTAL || !mask.fill().isZero()
                        || 2 * pos.length <= regions);
                any |= incremental[i];
            }
            float[][] proj = any ? cache(threads) : null;
            int[] starts = blocks(m, threads);
            int blocks = starts.length - 1;
            int rows = maxRows(starts);
            ConcurrentLinkedQueue<Scratch> pool = new ConcurrentLinkedQueue<>();
            Parallel.forRange(blocks * m, threads, job -> {
                int b = job / m;
                int mi = job % m;
                Scratch sc = pool.poll();
                if (sc == null) {
                    sc = new Scratch(rows, regions, batch.maxLength());
                }
                try {
                    InputMask mask = ms[mi];
                    int b0 = starts[b];
                    int bn = starts[b + 1] - b0;
                    // Replacement values take rows × T × |L| floats: run big blocks in parts to bound them.
                    long perRow = 4L * batch.length(order[b0]) * mask.regions().size();
                    int part = perRow * bn <= VALUES_BYTES ? bn : (int) Math.max(4, (VALUES_BYTES / perRow) & ~3);
                    for (int from = 0; from < bn; from += part) {
                        run(b0 + from, Math.min(part, bn - from), mask, incremental[mi] ? proj : null, sc, out[mi]);
                    }
                } finally {
                    pool.add(sc);
                }
            });
            return out;
        }

        private int maxRows(int[] starts) {
            int rows = 1;
            for (int b = 0; b + 1 < starts.length; b++) {
                rows = Math.max(rows, starts[b + 1] - starts[b]);
            }
            return rows;
        }

        /** The cached layer-0 projections, [sample][t·3H₀ + g], built on first call. */
        private float[][] cache(int threads) {
            float[][] c = cache;
            if (c != null) {
                return c;
            }
            synchronized (this) {
                if (cache == null) {
                    cache = buildCache(threads);
                }
                return cache;
            }
        }

        private float[][] buildCache(int threads) {
            Layer first = layers[0];
            int g3 = first.width;
            float[][] proj = new float[n][];
            for (int s = 0; s < n; s++) {
                proj[s] = new float[batch.length(s) * g3];
            }
            int[] starts = blocks(1, threads);
            Parallel.forRange(starts.length - 1, threads, b -> {
                int b0 = starts[b];
                int bn = starts[b + 1] - b0;
                float[][] in = new float[bn][];
                float[][] x = new float[bn][g3];
                for (int i = 0; i < bn; i++) {
                    in[i] = batch.series(order[b0 + i]);
                }
                int act = bn;
                int len = batch.length(order[b0]);
                for (int t = 0; t < len; t++) {
                    while (batch.length(order[b0 + act - 1]) <= t) {
                        act--;
                    }
                    for (int i = 0; i < act; i++) {
                        System.arraycopy(first.bias, 0, x[i], 0, g3);
                    }
                    gemm(in, t * regions, first.wp, x, act);
                    for (int i = 0; i < act; i++) {
                        System.arraycopy(x[i], 0, proj[order[b0 + i]], t * g3, g3);
                    }
                }
            });
            return proj;
        }

        /**
         * Scores samples {@code order[b0 .. b0 + bn)} under {@code mask} into {@code out}, from the cached projections
         * when {@code proj} is set.
         */
        private void run(int b0, int bn, InputMask mask, float[][] proj, Scratch sc, float[][] out) {
            int len = batch.length(order[b0]);
            for (float[][] h : sc.h) {
                for (int i = 0; i < bn; i++) {
                    Arrays.fill(h[i], 0f);
                }
            }
            for (float[][] c : sc.cells) {
                if (c != null) {
                    for (int i = 0; i < bn; i++) {
                        Arrays.fill(c[i], 0f);
                    }
                }
            }
            Layer first = layers[0];
            int g3 = first.width;
            int[] lesion = mask.regions().positions();
            int kin = proj != null ? corrections(b0, bn, mask, lesion, sc) : plainInputs(b0, bn, mask, lesion, sc);
            int act = bn;
            for (int t = 0; t < len; t++) {
                while (batch.length(order[b0 + act - 1]) <= t) {
                    act--;
                }
                if (proj != null) {
                    for (int i = 0; i < act; i++) {
                        System.arraycopy(proj[order[b0 + i]], t * g3, sc.x[i], 0, g3);
                    }
                    if (kin > 0) {
                        gemm(sc.values, t * kin, sc.weights, sc.x, act, kin, g3);
                    }
                } else {
                    for (int i = 0; i < act; i++) {
                        System.arraycopy(first.bias, 0, sc.x[i], 0, g3);
                        maskedStep(order[b0 + i], i, t, mask.fill().isZero(), lesion, kin, sc);
                    }
                    gemm(sc.xin, 0, sc.weights, sc.x, act, kin, g3);
                }
                step(first, sc, 0, act);
                for (int l = 1; l < layers.length; l++) {
                    Layer layer = layers[l];
                    int lg3 = layer.width;
                    for (int i = 0; i < act; i++) {
                        System.arraycopy(layer.bias, 0, sc.x[i], 0, lg3);
                    }
                    gemm(sc.h[l - 1], 0, layer.wp, sc.x, act);
                    step(layer, sc, l, act);
                }
            }
            float[][] top = sc.h[layers.length - 1];
            int hid = layers[layers.length - 1].hidden;
            int kc = readoutBias.length;
            for (int i = 0; i < bn; i++) {
                float[] h = top[i];
                float[] p = new float[kc];
                for (int c = 0; c < kc; c++) {
                    double acc = readoutBias[c];
                    int o = c * hid;
                    for (int j = 0; j < hid; j++) {
                        acc += readout[o + j] * h[j];
                    }
                    p[c] = (float) acc;
                }
                out[order[b0 + i]] = softmax(p);
            }
        }

        /**
         * Writes each block sample's corrections {@code v_r(t) − x_r(t)} into {@code sc.values} rows (time-major, one
         * column per lesioned region that differs somewhere in the block) and their W columns into
         * {@code sc.weights}; returns the column count.
         */
        private int corrections(int b0, int bn, InputMask mask, int[] lesion, Scratch sc) {
            int nl = lesion.length;
            if (nl == 0) {
                return 0;
            }
            LesionFill fill = mask.fill();
            boolean zero = fill.isZero();
            sc.ensureValues(batch.maxLength() * nl, nl);
            boolean[] differs = sc.differs;
            Arrays.fill(differs, 0, nl, false);
            float[] buf = sc.buf;
            for (int i = 0; i < bn; i++) {
                int s = order[b0 + i];
                int len = batch.length(s);
                float[] x = batch.series(s);
                float[] d = sc.values[i];
                if (zero) {
                    // One pass over the sample's steps, reading the lesioned regions of each.
                    for (int t = 0; t < len; t++) {
                        int off = t * regions;
                        int o = t * nl;
                        for (int k = 0; k < nl; k++) {
                            float v = -x[off + lesion[k]];
                            d[o + k] = v;
                            differs[k] |= v != 0f;
                        }
                    }
                    continue;
                }
                for (int k = 0; k < nl; k++) {
                    int r = lesion[k];
                    boolean nz = false;
                    fill.fill(batch, s, r, buf);
                    for (int t = 0; t < len; t++) {
                        float v = buf[t] - x[t * regions + r];
                        d[t * nl + k] = v;
                        nz |= v != 0f;
                    }
                    differs[k] |= nz;
                }
            }
            int kept = 0;
            for (int k = 0; k < nl; k++) {
                if (differs[k]) {
                    sc.weights[kept++] = layers[0].wt[lesion[k]];
                }
            }
            if (kept < nl && kept > 0) {
                for (int i = 0; i < bn; i++) {
                    int len = batch.length(order[b0 + i]);
                    float[] d = sc.values[i];
                    for (int t = 0; t < len; t++) {
                        int c = 0;
                        for (int k = 0; k < nl; k++) {
                            if (differs[k]) {
                                d[t * kept + c++] = d[t * nl + k];
                            }
                        }
                    }
                }
            }
            return kept;
        }

        /**
         * Prepares the full projection of the masked input: the W columns of the inputs it uses (with a zero fill,
         * only the regions kept) into {@code sc.weights}, replacement values into {@code sc.values}; returns their count.
         */
        private int plainInputs(int b0, int bn, InputMask mask, int[] lesion, Scratch sc) {
            int nl = lesion.length;
            LesionFill fill = mask.fill();
            sc.ensureInputs(regions);
            if (fill.isZero()) {
                int kept = 0;
                int next = 0;
                for (int r = 0; r < regions; r++) {
                    if (next < nl && lesion[next] == r) {
                        next++;
                    } else {
                        sc.keptRegions[kept] = r;
                        sc.weights[kept++] = layers[0].wt[r];
                    }
                }
                return kept;
            }
            for (int r = 0; r < regions; r++) {
                sc.weights[r] = layers[0].wt[r];
            }
            if (nl > 0) {
                sc.ensureValues(batch.maxLength() * nl, nl);
                for (int i = 0; i < bn; i++) {
                    int s = order[b0 + i];
                    int len = batch.length(s);
                    float[] d = sc.values[i];
                    for (int k = 0; k < nl; k++) {
                        fill.fill(batch, s, lesion[k], sc.buf);
                        for (int t = 0; t < len; t++) {
                            d[t * nl + k] = sc.buf[t];
                        }
                    }
                }
            }
            return regions;
        }

        /** Writes the masked input of sample {@code s} (block row {@code i}) at step {@code t} into {@code sc.xin[i]}. */
        private void maskedStep(int s, int i, int t, boolean zero, int[] lesion, int kin, Scratch sc) {
            float[] x = batch.series(s);
            float[] row = sc.xin[i];
            int off = t * regions;
            if (zero) {
                if (kin == regions) {
                    System.arraycopy(x, off, row, 0, regions);
                } else {
                    int[] kept = sc.keptRegions;
                    for (int k = 0; k < kin; k++) {
                        row[k] = x[off + kept[k]];
                    }
                }
                return;
            }
            System.arraycopy(x, off, row, 0, regions);
            int nl = lesion.length;
            float[] d = sc.values != null ? sc.values[i] : null;
            for (int k = 0; k < nl; k++) {
                row[lesion[k]] = d[t * nl + k];
            }
        }

        /** Advances layer {@code l} of the first {@code act} block rows by one step, {@code sc.x} holding its input projections. */
        private void step(Layer layer, Scratch sc, int l, int act) {
            float[][] h = sc.h[l];
            int hid = layer.hidden;
            if (layer.cell == Cell.LSTM) {
                // Every gate is W·x + R·h + biases: the recurrent product adds straight into the input projections.
                gemm(h, 0, layer.rp, sc.x, act);
                float[][] c = sc.cells[l];
                for (int i = 0; i < act; i++) {
                    KERNELS.lstmCell(sc.x[i], h[i], c[i], sc.s, hid);
                }
            } else if (layer.lbr) {
                int g3 = 3 * hid;
                for (int i = 0; i < act; i++) {
                    Arrays.fill(sc.g[i], 0, g3, 0f);
                }
                gemm(h, 0, layer.rp, sc.g, act);
                for (int i = 0; i < act; i++) {
                    KERNELS.gruLinearBeforeReset(sc.x[i], sc.g[i], layer.rbh3, h[i], sc.s, sc.c, hid);
                }
            } else {
                for (int i = 0; i < act; i++) {
                    Arrays.fill(sc.g[i], 0, 2 * hid, 0f);
                }
                gemm(h, 0, layer.rzrp, sc.g, act);
                for (int i = 0; i < act; i++) {
                    KERNELS.gruResetGates(sc.x[i], sc.g[i], h[i], sc.z[i], sc.rh[i], sc.s, sc.c, hid);
                    Arrays.fill(sc.g[i], 0, hid, 0f);
                }
                gemm(sc.rh, 0, layer.rhp, sc.g, act);
                for (int i = 0; i < act; i++) {
                    KERNELS.gruCandidate(sc.x[i], sc.g[i], layer.rbh, sc.z[i], h[i], sc.c, hid);
                }
            }
        }
    }

    /** One worker's buffers, allocated once and reused over the jobs it runs. */
    private final class Scratch {
        final int rows;
        final float[][] x;
        final float[][] g;
        final float[][][] h;
        /** LSTM cell states per layer (null for GRU layers). */
        final float[][][] cells;
        final float[][] z;
        final float[][] rh;
        final float[] s;
        final float[] c;
        final float[] buf;
        float[][] weights;
        float[][] values;
        boolean[] differs = new boolean[0];
        float[][] xin;
        int[] keptRegions;

        Scratch(int rows, int regions, int maxLength) {
            this.rows = rows;
            int maxG = 0;
            int maxH = 0;
            boolean resetFirst = false;
            for (Layer l : layers) {
                maxG = Math.max(maxG, l.width);
                maxH = Math.max(maxH, l.hidden);
                resetFirst |= l.cell == Cell.GRU_RESET_BEFORE_LINEAR;
            }
            x = new float[rows][maxG];
            g = new float[rows][maxG];
            h = new float[layers.length][][];
            cells = new float[layers.length][][];
            for (int l = 0; l < layers.length; l++) {
                h[l] = new float[rows][layers[l].hidden];
                cells[l] = layers[l].cell == Cell.LSTM ? new float[rows][layers[l].hidden] : null;
            }
            z = resetFirst ? new float[rows][maxH] : null;
            rh = resetFirst ? new float[rows][maxH] : null;
            s = new float[maxG];
            c = new float[maxH];
            buf = new float[maxLength];
            weights = new float[regions][];
        }

        void ensureValues(int width, int columns) {
            if (values == null || values[0].length < width) {
                values = new float[rows][width];
            }
            if (differs.length < columns) {
                differs = new boolean[columns];
            }
        }

        void ensureInputs(int regions) {
            if (xin == null) {
                xin = new float[rows][regions];
                keptRegions = new int[regions];
            }
        }
    }
}
