package org.cruxset.scoring.saliency;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import java.util.concurrent.ConcurrentLinkedQueue;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.gru.GruInputGradients;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.internal.Parallel;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.train.GruGradients;
import org.cruxset.scoring.train.GruParameters;

/**
 * Gradient saliency of a decoder for each held-out sample's true class. For networks the native engine runs: exact
 * gradients by backpropagation through time in double precision ({@link GruGradients}) of the class score
 * (pre-softmax) or its log-probability, with respect to every input value, and from them gradient × input,
 * integrated gradients (Sundararajan, Taly &amp; Yan 2017; baseline: the lesion mode's replacement of every region;
 * Riemann midpoint sums) and SmoothGrad (Smilkov et al. 2017; Gaussian noise, seeded). For any decoder (ONNX Runtime
 * included): region-level central finite differences of the log-probability, a constant ±h added to a region's whole
 * series (2 scored passes per region).
 */
public final class Saliency {
    /** The attribution method. */
    public enum Method {
        GRADIENT("gradient"), TIMES_INPUT("times-input"), INTEGRATED("integrated"), SMOOTH("smooth"),
        DIFFERENCES("differences");

        private final String label;

        Method(String label) {
            this.label = label;
        }

        /** The spelling on the command line and in outputs. */
        public String label() {
            return label;
        }

        /** Parses a label. */
        public static Method parse(String s) {
            for (Method m : values()) {
                if (m.label.equals(s.toLowerCase(Locale.ROOT))) {
                    return m;
                }
            }
            throw new IllegalArgumentException("the method must be gradient, times-input, integrated, smooth or "
                    + "differences, found '" + s + "'");
        }
    }

    /**
     * Settings: the method; whether to attribute the log-probability instead of the class score; integrated-gradient
     * steps; SmoothGrad draws and noise (standard deviation as a share of each sample's input range) and seed; the
     * finite-difference step; threads; and whether to use the double-precision path ({@link GruGradients}, for
     * tests) instead of the float fast path ({@link GruInputGradients}).
     */
    public record Settings(Method method, boolean logProbability, int steps, int draws, double noise, long seed,
                           double step, int threads, boolean doublePath) {
        public Settings {
            if (steps < 1 || draws < 1 || threads < 1) {
                throw new IllegalArgumentException("steps, draws and threads must be at least 1");
            }
            if (!(noise >= 0) || !(step > 0)) {
                throw new IllegalArgumentException("noise must be 0 or more and the step positive");
            }
        }

        /** What is attributed. */
        public String target() {
            return method == Method.DIFFERENCES || logProbability ? "true-class log-probability"
                    : "true-class score (pre-softmax)";
        }
    }

    private Saliency() {
    }

    /**
     * Attributions of {@code batch}'s samples for classes {@code targets} by a gradient method on {@code network};
     * {@code fill} gives the integrated-gradients baseline (every region lesioned).
     */
    public static Attributions gradients(GruNetwork network, InputBatch batch, int[] targets, LesionFill fill,
                                         Settings settings) {
        if (settings.method() == Method.DIFFERENCES) {
            throw new IllegalArgumentException("finite differences go through differences(), not gradients()");
        }
        if (!settings.doublePath()) {
            return fast(network, batch, targets, fill, settings);
        }
        GruParameters params = GruParameters.of(network);
        int n = batch.size();
        int regions = batch.regions();
        float[][] maps = new float[n][];
        double[] gaps = new double[n];
        double[] changes = new double[n];
        int[] lengths = new int[n];
        ConcurrentLinkedQueue<GruGradients> pool = new ConcurrentLinkedQueue<>();
        InputMask all = new InputMask(RegionSet.all(regions), fill);
        Parallel.forRange(n, settings.threads(), s -> {
            GruGradients g = pool.poll();
            if (g == null) {
                g = new GruGradients(params, batch.maxLength());
                g.refresh();
            }
            int len = batch.length(s);
            lengths[s] = len;
            float[] x = batch.series(s);
            double[] acc = new double[len * regions];
            double[] dx = new double[len * regions];
            gaps[s] = Double.NaN;
            changes[s] = Double.NaN;
            switch (settings.method()) {
                case GRADIENT, TIMES_INPUT -> {
                    g.forward(x, len);
                    g.inputGradient(x, len, targets[s], settings.logProbability(), acc);
                    if (settings.method() == Method.TIMES_INPUT) {
                        for (int i = 0; i < acc.length; i++) {
                            acc[i] *= x[i];
                        }
                    }
                }
                case INTEGRATED -> {
                    float[] base = new float[len * regions];
                    all.apply(batch, s, base);
                    float[] point = new float[len * regions];
                    for (int k = 0; k < settings.steps(); k++) {
                        double alpha = (k + 0.5) / settings.steps();
                        for (int i = 0; i < point.length; i++) {
                            point[i] = (float) (base[i] + alpha * (x[i] - base[i]));
                        }
                        g.forward(point, len);
                        g.inputGradient(point, len, targets[s], settings.logProbability(), dx);
                        for (int i = 0; i < acc.length; i++) {
                            acc[i] += dx[i];
                        }
                    }
                    double sum = 0;
                    for (int i = 0; i < acc.length; i++) {
                        acc[i] *= (x[i] - base[i]) / settings.steps();
                        sum += acc[i];
                    }
                    double top = score(g, x, len, targets[s], settings.logProbability());
                    double bottom = score(g, base, len, targets[s], settings.logProbability());
                    double delta = top - bottom;
                    gaps[s] = Math.abs(sum - delta);
                    changes[s] = delta;
                }
                case SMOOTH -> {
                    float lo = Float.POSITIVE_INFINITY;
                    float hi = Float.NEGATIVE_INFINITY;
                    for (int i = 0; i < len * regions; i++) {
                        lo = Math.min(lo, x[i]);
                        hi = Math.max(hi, x[i]);
                    }
                    double sd = settings.noise() * (hi - lo);
                    SplittableRandom rng = new SplittableRandom(settings.seed() * 0x9E3779B97F4A7C15L + s);
                    float[] point = new float[len * regions];
                    for (int k = 0; k < settings.draws(); k++) {
                        for (int i = 0; i < point.length; i++) {
                            point[i] = (float) (x[i] + sd * gaussian(rng));
                        }
                        g.forward(point, len);
                        g.inputGradient(point, len, targets[s], settings.logProbability(), dx);
                        for (int i = 0; i < acc.length; i++) {
                            acc[i] += dx[i] / settings.draws();
                        }
                    }
                }
                default -> throw new IllegalStateException();
            }
            float[] m = new float[len * regions];
            for (int i = 0; i < m.length; i++) {
                m[i] = (float) acc[i];
            }
            maps[s] = m;
            pool.add(g);
        });
        return new Attributions(settings.method().label(), settings.target(), regions, lengths, maps, true, changes,
                gaps);
    }

    /** Samples per block of the fast path: the block shares each weight load across its samples. */
    private static final int BLOCK = 8;

    private static Attributions fast(GruNetwork network, InputBatch batch, int[] targets, LesionFill fill,
                                     Settings settings) {
        GruInputGradients grads = new GruInputGradients(network);
        int n = batch.size();
        int regions = batch.regions();
        float[][] maps = new float[n][];
        double[] gaps = new double[n];
        double[] changes = new double[n];
        int[] lengths = new int[n];
        InputMask all = new InputMask(RegionSet.all(regions), fill);
        int blocks = (n + BLOCK - 1) / BLOCK;
        Parallel.forRange(blocks, settings.threads(), blk -> {
            int from = blk * BLOCK;
            int to = Math.min(n, from + BLOCK);
            int bn = to - from;
            float[][] x = new float[bn][];
            int[] len = new int[bn];
            int[] tg = new int[bn];
            float[][] acc = new float[bn][];
            float[][] dx = new float[bn][];
            for (int b = 0; b < bn; b++) {
                int s = from + b;
                x[b] = batch.series(s);
                len[b] = batch.length(s);
                tg[b] = targets[s];
                acc[b] = new float[len[b] * regions];
                dx[b] = new float[len[b] * regions];
                lengths[s] = len[b];
                gaps[s] = Double.NaN;
                changes[s] = Double.NaN;
            }
            boolean lp = settings.logProbability();
            switch (settings.method()) {
                case GRADIENT, TIMES_INPUT -> {
                    grads.gradients(x, len, tg, lp, acc);
                    if (settings.method() == Method.TIMES_INPUT) {
                        for (int b = 0; b < bn; b++) {
                            for (int i = 0; i < acc[b].length; i++) {
                                acc[b][i] *= x[b][i];
                            }
                        }
                    }
                }
                case INTEGRATED -> {
                    float[][] base = new float[bn][];
                    float[][] point = new float[bn][];
                    for (int b = 0; b < bn; b++) {
                        base[b] = new float[len[b] * regions];
                        all.apply(batch, from + b, base[b]);
                        point[b] = new float[len[b] * regions];
                    }
                    for (int k = 0; k < settings.steps(); k++) {
                        float alpha = (float) ((k + 0.5) / settings.steps());
                        for (int b = 0; b < bn; b++) {
                            for (int i = 0; i < point[b].length; i++) {
                                point[b][i] = base[b][i] + alpha * (x[b][i] - base[b][i]);
                            }
                        }
                        grads.gradients(point, len, tg, lp, dx);
                        for (int b = 0; b < bn; b++) {
                            for (int i = 0; i < acc[b].length; i++) {
                                acc[b][i] += dx[b][i];
                            }
                        }
                    }
                    double[] top = grads.gradients(x, len, tg, lp, dx);
                    double[] bottom = grads.gradients(base, len, tg, lp, dx);
                    for (int b = 0; b < bn; b++) {
                        double sum = 0;
                        for (int i = 0; i < acc[b].length; i++) {
                            acc[b][i] *= (x[b][i] - base[b][i]) / settings.steps();
                            sum += acc[b][i];
                        }
                        changes[from + b] = top[b] - bottom[b];
                        gaps[from + b] = Math.abs(sum - changes[from + b]);
                    }
                }
                case SMOOTH -> {
                    float[][] point = new float[bn][];
                    double[] sd = new double[bn];
                    SplittableRandom[] rng = new SplittableRandom[bn];
                    for (int b = 0; b < bn; b++) {
                        float lo = Float.POSITIVE_INFINITY;
                        float hi = Float.NEGATIVE_INFINITY;
                        for (float v : x[b]) {
                            lo = Math.min(lo, v);
                            hi = Math.max(hi, v);
                        }
                        sd[b] = settings.noise() * (hi - lo);
                        rng[b] = new SplittableRandom(settings.seed() * 0x9E3779B97F4A7C15L + from + b);
                        point[b] = new float[len[b] * regions];
                    }
                    for (int k = 0; k < settings.draws(); k++) {
                        for (int b = 0; b < bn; b++) {
                            for (int i = 0; i < point[b].length; i++) {
                                point[b][i] = (float) (x[b][i] + sd[b] * gaussian(rng[b]));
                            }
                        }
                        grads.gradients(point, len, tg, lp, dx);
                        for (int b = 0; b < bn; b++) {
                            for (int i = 0; i < acc[b].length; i++) {
                                acc[b][i] += dx[b][i] / settings.draws();
                            }
                        }
                    }
                }
                default -> throw new IllegalStateException();
            }
            for (int b = 0; b < bn; b++) {
                maps[from + b] = acc[b];
            }
        });
        return new Attributions(settings.method().label(), settings.target(), regions, lengths, maps, true, changes,
                gaps);
    }

    private static double score(GruGradients g, float[] x, int len, int target, boolean logProbability) {
        double[] p = g.forward(x, len);
        return logProbability ? Math.log(Math.max(p[target], 1e-300)) : g.logits()[target];
    }

    private static double gaussian(SplittableRandom rng) {
        double u = 1 - rng.nextDouble();
        double v = rng.nextDouble();
        return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
    }

    /**
     * Region-level attributions of any decoder: for each region, the central finite difference of each sample's
     * true-class log-probability when a constant {@code ±step} is added to the region's whole series (2 × regions
     * scored passes, one batch).
     */
    public static Attributions differences(Decoder.Bound bound, InputBatch batch, int[] targets, Settings settings) {
        int regions = batch.regions();
        List<InputMask> masks = new ArrayList<>(2 * regions);
        for (int r = 0; r < regions; r++) {
            masks.add(new InputMask(RegionSet.of(regions, r), new Offset(settings.step())));
            masks.add(new InputMask(RegionSet.of(regions, r), new Offset(-settings.step())));
        }
        float[][][] p = bound.probabilities(masks, settings.threads());
        int n = batch.size();
        float[][] maps = new float[n][regions];
        int[] lengths = new int[n];
        double[] gaps = new double[n];
        for (int s = 0; s < n; s++) {
            lengths[s] = batch.length(s);
            gaps[s] = Double.NaN;
            for (int r = 0; r < regions; r++) {
                double up = Math.log(Math.max(p[2 * r][s][targets[s]], 1e-30));
                double down = Math.log(Math.max(p[2 * r + 1][s][targets[s]], 1e-30));
                maps[s][r] = (float) ((up - down) / (2 * settings.step()));
            }
        }
        return new Attributions(Method.DIFFERENCES.label(), settings.target(), regions, lengths, maps, false, gaps,
                gaps);
    }

    /** A fill that keeps a region's series and adds a constant to every time point. */
    private record Offset(double delta) implements LesionFill {
        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            float[] x = batch.series(sample);
            int n = batch.regions();
            for (int t = 0; t < batch.length(sample); t++) {
                out[t] = (float) (x[t * n + region] + delta);
            }
        }
    }
}
