package org.cruxset.scoring.stats;

import java.util.Arrays;
import java.util.SplittableRandom;

/**
 * Statistics that respect that samples of one subject are not independent. The bootstrap over subjects gives an
 * interval for accuracy when the population of interest is subjects (the honest interval when samples cluster by
 * subject); the label permutation gives an empirical chance level for a fixed set of predictions.
 */
public final class ClusteredStats {
    private ClusteredStats() {
    }

    /**
     * Percentile interval {@code [low, high]} of accuracy at {@code level} (e.g. 0.95) from {@code resamples}
     * bootstrap resamples of whole subjects with replacement; {@code subjectOf[s]} in [0, subjects). Seeded.
     */
    public static double[] subjectBootstrap(boolean[] correct, int[] subjectOf, int subjects, int resamples, long seed,
                                            double level) {
        int[] n = new int[subjects];
        int[] c = new int[subjects];
        for (int s = 0; s < correct.length; s++) {
            n[subjectOf[s]]++;
            if (correct[s]) {
                c[subjectOf[s]]++;
            }
        }
        SplittableRandom rng = new SplittableRandom(seed);
        double[] acc = new double[resamples];
        for (int b = 0; b < resamples; b++) {
            long tn = 0;
            long tc = 0;
            for (int i = 0; i < subjects; i++) {
                int j = rng.nextInt(subjects);
                tn += n[j];
                tc += c[j];
            }
            acc[b] = tn == 0 ? 0 : (double) tc / tn;
        }
        Arrays.sort(acc);
        double tail = (1 - level) / 2;
        return new double[] {quantile(acc, tail), quantile(acc, 1 - tail)};
    }

    /**
     * Percentile interval {@code [low, high]} at {@code level} of the paired difference in accuracy,
     * {@code accuracy(first) − accuracy(second)} on the same samples (e.g. intact minus lesioned: the drop), from
     * {@code resamples} bootstrap resamples of whole subjects with replacement (each resampled subject brings both
     * conditions of all its samples, so the pairing and the clustering are kept). Seeded.
     */
    public static double[] pairedDifferenceBootstrap(boolean[] first, boolean[] second, int[] subjectOf, int subjects,
                                                     int resamples, long seed, double level) {
        if (first.length != second.length || first.length != subjectOf.length) {
            throw new IllegalArgumentException("one outcome per sample in both conditions and one subject each: "
                    + first.length + ", " + second.length + ", " + subjectOf.length);
        }
        int[] n = new int[subjects];
        int[] d = new int[subjects];
        for (int s = 0; s < first.length; s++) {
            n[subjectOf[s]]++;
            d[subjectOf[s]] += (first[s] ? 1 : 0) - (second[s] ? 1 : 0);
        }
        SplittableRandom rng = new SplittableRandom(seed);
        double[] diff = new double[resamples];
        for (int b = 0; b < resamples; b++) {
            long tn = 0;
            long td = 0;
            for (int i = 0; i < subjects; i++) {
                int j = rng.nextInt(subjects);
                tn += n[j];
                td += d[j];
            }
            diff[b] = tn == 0 ? 0 : (double) td / tn;
        }
        Arrays.sort(diff);
        double tail = (1 - level) / 2;
        return new double[] {quantile(diff, tail), quantile(diff, 1 - tail)};
    }

    /** An empirical chance level: mean and upper quantile of accuracy under label permutation, and the p-value. */
    public record PermutationChance(double mean, double upper, double pValue, int permutations) {
    }

    /**
     * Permutes labels within each subject ({@code permutations} times, seeded) against fixed predictions: the mean
     * accuracy is the chance level these predictions reach by label structure alone, {@code upper} its
     * {@code level} quantile, and {@code pValue = (1 + #{perm >= observed}) / (1 + permutations)}.
     */
    public static PermutationChance labelPermutation(int[] predicted, int[] labels, int[] subjectOf, int subjects,
                                                     int permutations, long seed, double level) {
        int n = labels.length;
        int[][] members = groups(subjectOf, subjects);
        int observed = 0;
        for (int s = 0; s < n; s++) {
            if (predicted[s] == labels[s]) {
                observed++;
            }
        }
        SplittableRandom rng = new SplittableRandom(seed);
        int[] perm = labels.clone();
        double[] acc = new double[permutations];
        int atLeast = 0;
        double sum = 0;
        for (int p = 0; p < permutations; p++) {
            for (int[] g : members) {
                for (int i = g.length - 1; i > 0; i--) {
                    int j = rng.nextInt(i + 1);
                    int a = perm[g[i]];
                    perm[g[i]] = perm[g[j]];
                    perm[g[j]] = a;
                }
            }
            int correct = 0;
            for (int s = 0; s < n; s++) {
                if (predicted[s] == perm[s]) {
                    correct++;
                }
            }
            if (correct >= observed) {
                atLeast++;
            }
            acc[p] = (double) correct / n;
            sum += acc[p];
        }
        Arrays.sort(acc);
        return new PermutationChance(sum / permutations, quantile(acc, level), (1.0 + atLeast) / (1.0 + permutations),
                permutations);
    }

    private static int[][] groups(int[] subjectOf, int subjects) {
        int[] count = new int[subjects];
        for (int g : subjectOf) {
            count[g]++;
        }
        int[][] out = new int[subjects][];
        for (int i = 0; i < subjects; i++) {
            out[i] = new int[count[i]];
        }
        int[] fill = new int[subjects];
        for (int s = 0; s < subjectOf.length; s++) {
            out[subjectOf[s]][fill[subjectOf[s]]++] = s;
        }
        return out;
    }

    /** Linear-interpolated quantile of sorted values (type 7, common practice); NaN for none. */
    public static double quantile(double[] sorted, double q) {
        if (sorted.length == 0) {
            return Double.NaN;
        }
        double h = (sorted.length - 1) * q;
        int lo = (int) Math.floor(h);
        int hi = Math.min(sorted.length - 1, lo + 1);
        return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
    }
}
