package org.cruxset.scoring.simulate;

import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.SplittableRandom;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;

/**
 * Generates a synthetic cohort with planted ground truth. Each class (in the bundled configs, a route walked in
 * imagination through an invented town) evokes a sustained response whose strength is class-specific: a step at
 * stimulus onset convolved with the canonical haemodynamic response, scaled by the class's level (levels evenly
 * spaced in [-1, 1], seeded order; a second, independent ordering for the pair). Per sample (onset at t = 0,
 * length drawn uniformly from the configured range, onset jitter of 0–1 time points):
 * <ul>
 * <li><b>redundant group</b>: each member carries a copy of the class time course with amplitude {@code signal},
 * a subject-specific log-normal gain and a member-specific lag of 0–1 time points, so any one member suffices to
 * decode and only lesioning all of them removes this information;</li>
 * <li><b>synergistic pair</b>: a shared masking series {@code m(t)} of amplitude {@code masker} plus a second class
 * time course {@code c(t)} with opposite signs, {@code m + pair·c/2} and {@code m − pair·c/2}: the class is read
 * from their difference, each alone carries little (the masker has a random per-sample offset as well as smoothed
 * fluctuations), so lesioning either member removes it;</li>
 * <li><b>decoys</b>: haemodynamically smoothed noise of amplitude {@code decoy} with no class information;</li>
 * <li><b>background</b> for every region: its network's smoothed latent series scaled by a loading in
 * [0.3, 0.8]·{@code networkShare}, plus unit-variance AR(1) noise, plus a subject-specific baseline with sd
 * {@code subjectVariability}.</li>
 * </ul>
 * Subjects are assigned to splits (never one subject in two) by the configured fractions. Same config, same cohort.
 */
public final class CohortSimulator {
    private final SimulationConfig config;

    public CohortSimulator(SimulationConfig config) {
        this.config = config;
    }

    /** A simulated cohort and where its structure was planted. */
    public record Result(Cohort cohort, PlantedDesign design) {
    }

    /** Generates the cohort. */
    public Result run() {
        SplittableRandom master = new SplittableRandom(config.seed());
        SplittableRandom layoutRng = master.split();
        SplittableRandom templateRng = master.split();
        SplittableRandom subjectRng = master.split();
        SplittableRandom sampleRng = master.split();

        int n = config.regions();
        List<String> nets = config.networks();
        List<Region> regions = new ArrayList<>();
        int[] networkOf = new int[n];
        int[] counter = new int[nets.size()];
        for (int r = 0; r < n; r++) {
            int net = (int) ((long) r * nets.size() / n);
            networkOf[r] = net;
            counter[net]++;
            regions.add(new Region(r + 1, String.format("%s-%02d", nets.get(net), counter[net]), nets.get(net)));
        }
        Atlas atlas = Atlas.of(regions);

        // choose planted regions: spread over networks, never two planted in the same slot
        SimulationConfig.Planted planted = config.planted();
        List<Integer> order = new ArrayList<>();
        for (int r = 0; r < n; r++) {
            order.add(r);
        }
        shuffle(order, layoutRng);
        int[] redundant = new int[planted.redundant()];
        int[] pair = new int[2];
        int[] decoys = new int[planted.decoys()];
        int k = 0;
        for (int i = 0; i < redundant.length; i++) {
            redundant[i] = order.get(k++);
        }
        pair[0] = order.get(k++);
        pair[1] = order.get(k++);
        for (int i = 0; i < decoys.length; i++) {
            decoys[i] = order.get(k++);
        }
        int[] role = new int[n]; // 0 background, 1 redundant, 2 pair+, 3 pair-, 4 decoy
        for (int r : redundant) {
            role[r] = 1;
        }
        role[pair[0]] = 2;
        role[pair[1]] = 3;
        for (int r : decoys) {
            role[r] = 4;
        }
        int[] lag = new int[n];
        double[] loading = new double[n];
        for (int r = 0; r < n; r++) {
            lag[r] = role[r] == 1 ? layoutRng.nextInt(2) : 0;
            loading[r] = (0.3 + 0.5 * layoutRng.nextDouble()) * config.noise().networkShare();
        }

        double[] hrf = Haemodynamics.kernel(config.samplingInterval());
        int maxT = config.time().max() + 2;
        int classes = config.classes().size();
        double[] sustained = sustainedCourse(maxT, hrf);
        double[] levels = levels(classes, templateRng);
        double[] pairLevels = levels(classes, templateRng);
        double[][] classCourse = new double[classes][maxT];
        double[][] pairCourse = new double[classes][maxT];
        for (int c = 0; c < classes; c++) {
            for (int t = 0; t < maxT; t++) {
                classCourse[c][t] = levels[c] * sustained[t];
                pairCourse[c][t] = pairLevels[c] * sustained[t];
            }
        }

        List<String> subjects = new ArrayList<>();
        for (int s = 0; s < config.subjects(); s++) {
            subjects.add(String.format("sub-%03d", s + 1));
        }
        Split[] splitOf = assignSplits(subjects.size(), subjectRng);
        double[][] gain = new double[subjects.size()][n];
        double[][] baseline = new double[subjects.size()][n];
        for (int s = 0; s < subjects.size(); s++) {
            for (int r = 0; r < n; r++) {
                gain[s][r] = Math.exp(config.noise().subjectVariability() * subjectRng.nextGaussian());
                baseline[s][r] = config.noise().subjectVariability() * subjectRng.nextGaussian();
            }
        }

        List<Sample> samples = new ArrayList<>();
        double phi = config.noise().autocorrelation();
        double innov = Math.sqrt(1 - phi * phi);
        // pooled over all samples and time points: [planted, rest] for redundant, pair and decoy regions
        Moments[][] moments = new Moments[3][2];
        for (Moments[] m : moments) {
            m[0] = new Moments();
            m[1] = new Moments();
        }
        for (int s = 0; s < subjects.size(); s++) {
            for (int rep = 0; rep < config.repetitions(); rep++) {
                for (int c = 0; c < classes; c++) {
                    SplittableRandom rng = sampleRng.split();
                    int len = config.time().min() + rng.nextInt(config.time().max() - config.time().min() + 1);
                    int jitter = rng.nextInt(2);
                    double[][] netLatent = new double[nets.size()][];
                    for (int q = 0; q < nets.size(); q++) {
                        netLatent[q] = smoothNoise(rng, len, hrf);
                    }
                    double[] masker = smoothNoise(rng, len, hrf);
                    double maskerOffset = rng.nextGaussian();
                    for (int t = 0; t < len; t++) {
                        masker[t] += maskerOffset;
                    }
                    double[][] decoyNoise = new double[n][];
                    for (int r : decoys) {
                        decoyNoise[r] = smoothNoise(rng, len, hrf);
                    }
                    float[] values = new float[len * n];
                    for (int r = 0; r < n; r++) {
                        double ar = rng.nextGaussian();
                        for (int t = 0; t < len; t++) {
                            if (t > 0) {
                                ar = phi * ar + innov * rng.nextGaussian();
                            }
                            double background = baseline[s][r] + loading[r] * netLatent[networkOf[r]][t] + ar;
                            double plantedPart = switch (role[r]) {
                                case 1 -> planted.signal() * gain[s][r] * classCourse[c][t + jitter + lag[r]];
                                case 2 -> planted.masker() * masker[t] + 0.5 * planted.pair() * gain[s][r] * pairCourse[c][t + jitter];
                                case 3 -> planted.masker() * masker[t] - 0.5 * planted.pair() * gain[s][r] * pairCourse[c][t + jitter];
                                case 4 -> planted.decoy() * decoyNoise[r][t];
                                default -> 0.0;
                            };
                            values[t * n + r] = (float) (background + plantedPart);
                            if (role[r] == 1 || role[r] == 4) {
                                Moments[] m = moments[role[r] == 1 ? 0 : 2];
                                m[0].add(plantedPart);
                                m[1].add(background);
                            } else if (role[r] == 2 || role[r] == 3) {
                                double masking = planted.masker() * masker[t];
                                moments[1][0].add(plantedPart - masking);
                                moments[1][1].add(background + masking);
                            }
                        }
                    }
                    String id = String.format("%s_rep%d_%s", subjects.get(s), rep + 1, config.classes().get(c));
                    samples.add(new Sample(id, subjects.get(s), config.classes().get(c), splitOf[s], len, n, values));
                }
            }
        }
        PlantedDesign design = new PlantedDesign(names(atlas, redundant), names(atlas, pair), names(atlas, decoys),
                moments[0][0].variance() / moments[0][1].variance(),
                moments[1][0].variance() / moments[1][1].variance(),
                moments[2][0].variance() / moments[2][1].variance());
        return new Result(new Cohort(atlas, samples), design);
    }

    private Split[] assignSplits(int subjects, SplittableRandom rng) {
        List<Integer> idx = new ArrayList<>();
        for (int i = 0; i < subjects; i++) {
            idx.add(i);
        }
        shuffle(idx, rng);
        int nTest = (int) Math.round(config.split().test() * subjects);
        int nVal = (int) Math.round(config.split().validation() * subjects);
        if (config.split().test() > 0) {
            nTest = Math.max(1, nTest);
        }
        if (config.split().validation() > 0) {
            nVal = Math.max(1, nVal);
        }
        Split[] out = new Split[subjects];
        for (int i = 0; i < subjects; i++) {
            int who = idx.get(i);
            out[who] = i < nTest ? Split.TEST : i < nTest + nVal ? Split.VALIDATION : Split.TRAIN;
        }
        return out;
    }

    /** The response to a stimulus switched on at t = 0 and held: the step convolved with the response, peak 1. */
    private static double[] sustainedCourse(int len, double[] hrf) {
        double[] step = new double[len];
        java.util.Arrays.fill(step, 1.0);
        double[] y = Haemodynamics.convolve(step, hrf);
        double max = 0;
        for (double v : y) {
            max = Math.max(max, Math.abs(v));
        }
        for (int t = 0; t < len; t++) {
            y[t] /= max;
        }
        return y;
    }

    /** Class levels evenly spaced in [-1, 1], assigned to classes in a seeded random order. */
    private static double[] levels(int classes, SplittableRandom rng) {
        List<Double> l = new ArrayList<>();
        for (int c = 0; c < classes; c++) {
            l.add(-1.0 + 2.0 * c / (classes - 1));
        }
        shuffle(l, rng);
        double[] out = new double[classes];
        for (int c = 0; c < classes; c++) {
            out[c] = l.get(c);
        }
        return out;
    }

    private static double[] smoothNoise(SplittableRandom rng, int len, double[] hrf) {
        double[] w = new double[len + hrf.length];
        for (int t = 0; t < w.length; t++) {
            w[t] = rng.nextGaussian();
        }
        double[] full = Haemodynamics.convolve(w, hrf);
        double[] out = new double[len];
        System.arraycopy(full, hrf.length, out, 0, len);
        return Haemodynamics.standardise(out);
    }

    /** Running mean and variance (Welford). */
    private static final class Moments {
        private long n;
        private double mean;
        private double m2;

        void add(double x) {
            n++;
            double d = x - mean;
            mean += d / n;
            m2 += d * (x - mean);
        }

        double variance() {
            return n > 1 ? m2 / n : 0;
        }
    }

    private static List<String> names(Atlas atlas, int[] positions) {
        List<String> out = new ArrayList<>();
        for (int p : positions) {
            out.add(atlas.region(p).name());
        }
        return out;
    }

    private static <T> void shuffle(List<T> list, SplittableRandom rng) {
        for (int i = list.size() - 1; i > 0; i--) {
            Collections.swap(list, i, rng.nextInt(i + 1));
        }
    }
}
