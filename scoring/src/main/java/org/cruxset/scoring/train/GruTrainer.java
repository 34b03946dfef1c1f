package org.cruxset.scoring.train;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.function.Consumer;
import org.cruxset.scoring.internal.Parallel;

/**
 * Trains a GRU classifier with Adam, backpropagation through time over whole sequences, mini-batches, global-norm
 * gradient clipping, decoupled weight decay and early stopping on validation loss. Deterministic for a given seed
 * whatever the thread count: each mini-batch is split into a fixed number of shards whose gradients are summed in
 * shard order.
 */
public final class GruTrainer {
    private static final int SHARDS = 8;
    private final TrainingConfig config;

    public GruTrainer(TrainingConfig config) {
        this.config = config;
    }

    /** A labelled sequence set in model input space: time-major series, lengths and class indices. */
    public record Data(int inputs, float[][] series, int[] lengths, int[] labels) {
        public Data {
            if (series.length != lengths.length || series.length != labels.length) {
                throw new IllegalArgumentException("series, lengths and labels differ in count: "
                        + series.length + ", " + lengths.length + ", " + labels.length);
            }
        }

        public int size() {
            return series.length;
        }

        int maxLength() {
            int m = 1;
            for (int l : lengths) {
                m = Math.max(m, l);
            }
            return m;
        }
    }

    /** Progress after each epoch. */
    public interface Listener {
        void epochDone(TrainingResult.Epoch epoch, int maxEpochs, boolean improved);
    }

    /** Trains on {@code train}, stopping early on {@code validation}; {@code classes} is the output width. */
    public TrainingResult train(Data train, Data validation, int classes, Listener listener) {
        if (train.size() == 0) {
            throw new IllegalArgumentException("no training samples");
        }
        if (validation.size() == 0) {
            throw new IllegalArgumentException("no validation samples: early stopping needs a validation split");
        }
        int[] hiddens = new int[config.layers()];
        java.util.Arrays.fill(hiddens, config.hidden());
        SplittableRandom rng = new SplittableRandom(config.seed());
        GruParameters params = new GruParameters(train.inputs(), hiddens, classes);
        params.initialise(rng.split());
        SplittableRandom shuffle = rng.split();
        boolean[] isWeight = weightMask(params);
        int threads = config.threads();
        int shardCount = SHARDS;
        int maxLen = Math.max(train.maxLength(), validation.maxLength());
        GruGradients[] workers = new GruGradients[shardCount];
        double[][] grads = new double[shardCount][params.count()];
        for (int w = 0; w < shardCount; w++) {
            workers[w] = new GruGradients(params, maxLen);
        }
        double[] m = new double[params.count()];
        double[] v = new double[params.count()];
        double beta1 = 0.9;
        double beta2 = 0.999;
        long step = 0;
        double bestLoss = Double.POSITIVE_INFINITY;
        GruParameters best = params.copy();
        int bestEpoch = 0;
        int sinceBest = 0;
        List<TrainingResult.Epoch> history = new ArrayList<>();
        int[] order = new int[train.size()];
        for (int i = 0; i < order.length; i++) {
            order[i] = i;
        }
        double[] shardLoss = new double[shardCount];
        for (int epoch = 1; epoch <= config.maxEpochs(); epoch++) {
            shuffle(order, shuffle);
            double lossSum = 0;
            for (int start = 0; start < order.length; start += config.batchSize()) {
                int end = Math.min(order.length, start + config.batchSize());
                int count = end - start;
                for (GruGradients g : workers) {
                    g.refresh();
                }
                int shards = Math.min(shardCount, count);
                final int s0 = start;
                Parallel.forRange(shards, threads, shard -> {
                    double[] g = grads[shard];
                    java.util.Arrays.fill(g, 0.0);
                    double loss = 0;
                    GruGradients wk = workers[shard];
                    for (int i = s0 + shard; i < s0 + count; i += shards) {
                        int idx = order[i];
                        wk.forward(train.series()[idx], train.lengths()[idx]);
                        loss += wk.backward(train.series()[idx], train.lengths()[idx], train.labels()[idx], g);
                    }
                    shardLoss[shard] = loss;
                });
                double[] total = grads[0];
                for (int sh = 1; sh < shards; sh++) {
                    double[] g = grads[sh];
                    for (int i = 0; i < total.length; i++) {
                        total[i] += g[i];
                    }
                }
                for (int sh = 0; sh < shards; sh++) {
                    lossSum += shardLoss[sh];
                }
                double norm = 0;
                for (int i = 0; i < total.length; i++) {
                    total[i] /= count;
                    norm += total[i] * total[i];
                }
                norm = Math.sqrt(norm);
                double scale = norm > config.clipNorm() ? config.clipNorm() / norm : 1.0;
                step++;
                double lr = config.learningRate();
                double c1 = 1 - Math.pow(beta1, step);
                double c2 = 1 - Math.pow(beta2, step);
                double[] p = params.values();
                for (int i = 0; i < p.length; i++) {
                    double g = total[i] * scale;
                    m[i] = beta1 * m[i] + (1 - beta1) * g;
                    v[i] = beta2 * v[i] + (1 - beta2) * g * g;
                    double upd = (m[i] / c1) / (Math.sqrt(v[i] / c2) + 1e-8);
                    if (isWeight[i]) {
                        upd += config.weightDecay() * p[i];
                    }
                    p[i] -= lr * upd;
                }
            }
            double[] val = evaluate(params, validation, workers, threads);
            TrainingResult.Epoch e = new TrainingResult.Epoch(epoch, lossSum / order.length, val[0], val[1]);
            history.add(e);
            boolean improved = val[0] < bestLoss - 1e-9;
            if (improved) {
                bestLoss = val[0];
                best = params.copy();
                bestEpoch = epoch;
                sinceBest = 0;
            } else {
                sinceBest++;
            }
            if (listener != null) {
                listener.epochDone(e, config.maxEpochs(), improved);
            }
            if (sinceBest >= config.patience()) {
                break;
            }
        }
        return new TrainingResult(best.toNetwork(), bestEpoch, history);
    }

    /** Mean cross-entropy and accuracy of {@code params} on {@code data}. */
    private static double[] evaluate(GruParameters params, Data data, GruGradients[] workers, int threads) {
        int shards = workers.length;
        for (GruGradients g : workers) {
            g.refresh();
        }
        double[] loss = new double[shards];
        int[] correct = new int[shards];
        Parallel.forRange(shards, threads, w -> {
            for (int i = w; i < data.size(); i += shards) {
                double[] pr = workers[w].forward(data.series()[i], data.lengths()[i]);
                int label = data.labels()[i];
                loss[w] -= Math.log(Math.max(pr[label], 1e-300));
                int arg = 0;
                for (int k = 1; k < pr.length; k++) {
                    if (pr[k] > pr[arg]) {
                        arg = k;
                    }
                }
                if (arg == label) {
                    correct[w]++;
                }
            }
        });
        double l = 0;
        int c = 0;
        for (int w = 0; w < shards; w++) {
            l += loss[w];
            c += correct[w];
        }
        return new double[] {l / data.size(), (double) c / data.size()};
    }

    private static boolean[] weightMask(GruParameters p) {
        boolean[] w = new boolean[p.count()];
        for (int l = 0; l < p.layers(); l++) {
            for (int i = p.offW[l]; i < p.offWb[l]; i++) {
                w[i] = true;
            }
        }
        for (int i = p.offOut; i < p.offBias; i++) {
            w[i] = true;
        }
        return w;
    }

    private static void shuffle(int[] a, SplittableRandom rng) {
        for (int i = a.length - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = a[i];
            a[i] = a[j];
            a[j] = t;
        }
    }

    /** Convenience: a listener that hands each epoch to a consumer. */
    public static Listener listener(Consumer<TrainingResult.Epoch> c) {
        return (e, max, improved) -> c.accept(e);
    }
}
