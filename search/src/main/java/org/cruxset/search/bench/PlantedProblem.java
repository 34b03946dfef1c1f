package org.cruxset.search.bench;

import java.nio.ByteBuffer;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import org.cruxset.scoring.Checks;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.Outcomes;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A lesion problem with a planted, proven minimum and planted traps, decoded analytically: each sample's outcome is a
 * deterministic function of (lesion set, sample), computed in microseconds, so strategies can be measured on the real
 * scorer, store and criterion without a neural network.
 *
 * <p>The decoder reads each sample through <em>channels</em>. A <b>redundant group</b> of {@code groupSize} regions is
 * one channel that stays alive while any member is intact (any one suffices; confidence falls by {@code delta} with each
 * member lost). A <b>synergistic pair</b> is one channel read from both regions jointly: lesioning either member kills
 * it. Each sample depends on one channel (its block); samples of group blocks also depend on one <b>trap region</b>
 * each (spread evenly over {@code traps} trap regions). Every subject has the same layout of blocks, so any split of
 * subjects into parts keeps the blocks balanced. A sample whose channels are alive is decoded correctly (a
 * few <em>noisy</em> samples flip with the set, a few are always wrong); a killed sample's prediction is a fixed class
 * of its own, right for about one sample in K.
 *
 * <p>So the minimum critical sets are every group plus one member of every pair ({@code groups × groupSize + pairs}
 * regions, 12 in the benchmark, {@code 2^pairs} of them), while a <b>trap</b> — one member of every pair plus every
 * trap region (14–16 regions) — is critical and inclusion-minimal too. A greedy path that prefers trap regions (each
 * kills a few samples at once) to group members (which only lower confidence until the last one goes) falls into the
 * trap; {@code delta} decides which is preferred and differs by seed. {@link #proof} enumerates every way a set can
 * cut the channels and traps and shows that no set smaller than the minimum can be critical, with the margin.
 */
public final class PlantedProblem {
    /**
     * Settings of an instance: regions; redundant groups of {@code groupSize}; synergistic pairs; trap regions drawn
     * in [trapsMin, trapsMax]; classes; subjects, each with {@code perGroup} samples reading each group,
     * {@code perPair} reading each pair and {@code wrong} always decoded wrongly; the share of noisy samples; the
     * range of the confidence lost per group member lesioned.
     */
    public record Config(int regions, int groups, int groupSize, int pairs, int trapsMin, int trapsMax, int classes,
                         int subjects, int perGroup, int perPair, int wrong, double noisyFraction,
                         double deltaMin, double deltaMax) {
        public Config {
            int planted = groups * groupSize + 2 * pairs + trapsMax;
            Checks.within("regions", regions, planted, 100_000);
            Checks.within("classes", classes, 2, 1000);
            Checks.within("traps", trapsMin, groups == 0 ? 0 : 1, trapsMax);
            int spp = groups * perGroup + pairs * perPair + wrong;
            if (spp % classes != 0) {
                throw new IllegalArgumentException("samples per subject (groups × perGroup + pairs × perPair + wrong = "
                        + spp + ") must be a multiple of the " + classes + " classes, so parts stay balanced");
            }
            Checks.within("deltaMax", deltaMax, deltaMin, Math.nextDown(1.0 / Math.max(1, groupSize - 1)));
            if (groups + pairs > 16 || trapsMax > 16) {
                throw new IllegalArgumentException("at most 16 channels and 16 trap regions, so the proof can enumerate");
            }
        }

        /** Samples per subject. */
        public int samplesPerSubject() {
            return groups * perGroup + pairs * perPair + wrong;
        }
    }

    /** The search benchmark: N = 300, three groups of three and three pairs (minimum 12), 11–13 trap regions. */
    public static Config benchmark() {
        return new Config(300, 3, 3, 3, 11, 13, 8, 40, 7, 3, 2, 0.02, 0.15, 0.35);
    }

    private final Config config;
    private final long seed;
    private final int[][] groups;
    private final int[][] pairs;
    private final int[] traps;
    private final double delta;
    private final int samples;
    /** Per sample: channel index (groups first, then pairs; −1 always wrong), trap index or −1, noisy, offset, base. */
    private final int[] channel;
    private final int[] trap;
    private final boolean[] noisy;
    private final int[] offset;
    private final float[] base;
    private final int[] label;

    /** The instance of {@code config} drawn from {@code seed}. */
    public PlantedProblem(Config config, long seed) {
        this.config = config;
        this.seed = seed;
        SplittableRandom rng = new SplittableRandom(seed);
        int n = config.regions();
        int[] perm = new int[n];
        for (int i = 0; i < n; i++) {
            perm[i] = i;
        }
        for (int i = n - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = perm[i];
            perm[i] = perm[j];
            perm[j] = t;
        }
        int next = 0;
        groups = new int[config.groups()][config.groupSize()];
        for (int[] g : groups) {
            for (int i = 0; i < g.length; i++) {
                g[i] = perm[next++];
            }
        }
        pairs = new int[config.pairs()][2];
        for (int[] p : pairs) {
            p[0] = perm[next++];
            p[1] = perm[next++];
        }
        int t = config.trapsMin() + rng.nextInt(config.trapsMax() - config.trapsMin() + 1);
        traps = new int[config.groups() == 0 ? 0 : t];
        for (int i = 0; i < traps.length; i++) {
            traps[i] = perm[next++];
        }
        delta = config.deltaMin() + rng.nextDouble() * (config.deltaMax() - config.deltaMin());
        samples = config.subjects() * config.samplesPerSubject();
        channel = new int[samples];
        trap = new int[samples];
        noisy = new boolean[samples];
        offset = new int[samples];
        base = new float[samples];
        label = new int[samples];
        // Each subject has the same layout, so both parts of any split by subject see balanced blocks: per subject,
        // perGroup samples read each group, perPair each pair and `wrong` are always wrong; a subject's group samples
        // cycle through the trap regions; exactly samplesPerSubject / classes of its samples are right when killed.
        int spp = config.samplesPerSubject();
        int groupSamples = config.perGroup() * config.groups();
        int planted = groupSamples + config.perPair() * config.pairs();
        for (int subject = 0; subject < config.subjects(); subject++) {
            int first = subject * spp;
            int[] order = new int[spp];
            for (int i = 0; i < spp; i++) {
                order[i] = i;
            }
            shuffle(order, rng);
            int[] offsets = new int[spp];
            for (int i = 0; i < spp; i++) {
                offsets[i] = i < spp / config.classes() ? 0 : 1 + rng.nextInt(config.classes() - 1);
            }
            shuffle(offsets, rng);
            for (int i = 0; i < spp; i++) {
                int s = first + order[i];
                label[s] = (s - first) % config.classes();
                channel[s] = i < groupSamples ? i / config.perGroup()
                        : i < planted ? config.groups() + (i - groupSamples) / config.perPair() : -1;
                trap[s] = channel[s] >= 0 && channel[s] < config.groups() && traps.length > 0
                        ? (subject * groupSamples + i) % traps.length : -1;
                noisy[s] = rng.nextDouble() < config.noisyFraction();
                offset[s] = offsets[i];
                base[s] = (float) (0.6 + 0.35 * rng.nextDouble());
            }
        }
    }

    private static void shuffle(int[] a, SplittableRandom rng) {
        for (int i = a.length - 1; i > 0; i--) {
            int j = rng.nextInt(i + 1);
            int t = a[i];
            a[i] = a[j];
            a[j] = t;
        }
    }

    /** The instance's settings. */
    public Config config() {
        return config;
    }

    /** The instance's seed. */
    public long seed() {
        return seed;
    }

    /** How much confidence a group block loses with each member lesioned (the trap's pull depends on it). */
    public double delta() {
        return delta;
    }

    /** The size of every minimum critical set. */
    public int minimumSize() {
        return config.groups() * config.groupSize() + config.pairs();
    }

    /** Every region of every group: in every minimum critical set. */
    public RegionSet core() {
        RegionSet s = RegionSet.empty(config.regions());
        for (int[] g : groups) {
            for (int p : g) {
                s = s.with(p);
            }
        }
        return s;
    }

    /** The pairs: a minimum critical set takes one member of each. */
    public List<int[]> pairs() {
        List<int[]> out = new ArrayList<>();
        for (int[] p : pairs) {
            out.add(p.clone());
        }
        return out;
    }

    /** The trap regions. */
    public RegionSet trapRegions() {
        RegionSet s = RegionSet.empty(config.regions());
        for (int p : traps) {
            s = s.with(p);
        }
        return s;
    }

    /** The minimum critical sets: the core plus one member of each pair, in every combination. */
    public List<RegionSet> minimumSets() {
        return withOneMemberOfEachPair(core());
    }

    /** {@code base} plus one member of every pair, in every combination. */
    private List<RegionSet> withOneMemberOfEachPair(RegionSet base) {
        List<RegionSet> out = new ArrayList<>();
        for (int choice = 0; choice < (1 << pairs.length); choice++) {
            RegionSet s = base;
            for (int j = 0; j < pairs.length; j++) {
                s = s.with(pairs[j][(choice >>> j) & 1]);
            }
            out.add(s);
        }
        return out;
    }

    /** The trap named by the generator: the first member of every pair plus every trap region. */
    public RegionSet trap() {
        RegionSet s = trapRegions();
        for (int[] p : pairs) {
            s = s.with(p[0]);
        }
        return s;
    }

    /** Every trap: one member of every pair, in every combination, plus every trap region. */
    public List<RegionSet> traps() {
        return withOneMemberOfEachPair(trapRegions());
    }

    /** The class labels, {@code c0 .. c(K-1)}. */
    public List<String> classLabels() {
        List<String> out = new ArrayList<>();
        for (int k = 0; k < config.classes(); k++) {
            out.add("c" + k);
        }
        return out;
    }

    /**
     * The cohort the decoder reads: one time point per sample, holding the sample's number in region 0 (the decoder
     * finds each sample's planted attributes by it), every subject with every class equally often.
     */
    public Cohort cohort() {
        List<Region> regions = new ArrayList<>();
        for (int i = 0; i < config.regions(); i++) {
            regions.add(new Region(i, String.format("r%03d", i), "net" + (i / 20)));
        }
        Atlas atlas = Atlas.of(regions);
        List<Sample> out = new ArrayList<>();
        for (int s = 0; s < samples; s++) {
            float[] v = new float[config.regions()];
            v[0] = s;
            out.add(new Sample(String.format("s%05d", s), String.format("sub-%03d", s / config.samplesPerSubject()),
                    "c" + label[s], Split.UNASSIGNED, 1, config.regions(), v));
        }
        return new Cohort(atlas, out);
    }

    /** The analytic decoder of this instance. */
    public Decoder decoder() {
        List<String> names = new ArrayList<>();
        for (int i = 0; i < config.regions(); i++) {
            names.add(String.format("r%03d", i));
        }
        ModelCard card = new ModelCard(config.regions(), names, classLabels(), Preprocessing.NONE, "analytic",
                "planted lesion problem (seed " + seed + ")", hash(), Map.of());
        return new Decoder() {
            @Override
            public ModelCard card() {
                return card;
            }

            @Override
            public Bound bind(InputBatch batch) {
                int[] ids = new int[batch.size()];
                for (int s = 0; s < ids.length; s++) {
                    ids[s] = (int) batch.series(s)[0];
                }
                return (masks, threads) -> {
                    float[][][] out = new float[masks.size()][][];
                    for (int m = 0; m < masks.size(); m++) {
                        RegionSet set = masks.get(m).regions();
                        long h = setHash(set);
                        out[m] = new float[ids.length][];
                        for (int s = 0; s < ids.length; s++) {
                            out[m][s] = probabilities(set, h, ids[s]);
                        }
                    }
                    return out;
                };
            }
        };
    }

    private String hash() {
        try {
            MessageDigest md = MessageDigest.getInstance("SHA-256");
            md.update(("planted-lesion-problem\n" + config + "\n").getBytes(java.nio.charset.StandardCharsets.UTF_8));
            md.update(ByteBuffer.allocate(8).putLong(seed).array());
            return HexFormat.of().formatHex(md.digest());
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException(e);
        }
    }

    private static long setHash(RegionSet set) {
        long h = 0x9E3779B97F4A7C15L;
        for (long w : set.words()) {
            h = mix(h ^ w);
        }
        return h;
    }

    private static long mix(long z) {
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return z ^ (z >>> 31);
    }

    /** Whether sample {@code s}'s channels survive {@code set}, and how confident the decoder stays (0: killed). */
    double strength(RegionSet set, int s) {
        int c = channel[s];
        if (c < 0) {
            return -1;
        }
        if (c >= config.groups()) {
            int[] p = pairs[c - config.groups()];
            return set.contains(p[0]) || set.contains(p[1]) ? 0 : 1;
        }
        if (set.contains(traps[trap[s]])) {
            return 0;
        }
        int intact = 0;
        for (int r : groups[c]) {
            intact += set.contains(r) ? 0 : 1;
        }
        return intact == 0 ? 0 : 1 - delta * (config.groupSize() - intact);
    }

    private float[] probabilities(RegionSet set, long setHash, int s) {
        int k = config.classes();
        int y = label[s];
        float[] p = new float[k];
        double st = strength(set, s);
        int predicted;
        double pTrue;
        double pPredicted;
        if (st < 0) {
            predicted = (y + 1) % k;
            pPredicted = 0.3;
            pTrue = 0.1 / (k - 1) * 0.5;
        } else if (st > 0) {
            if (noisy[s] && (mix(setHash ^ (s * 0x632BE59BD9B4E019L + seed)) & 1) == 1) {
                predicted = (y + 1) % k;
                pPredicted = 0.3;
                pTrue = 0.5 / k;
            } else {
                predicted = y;
                pTrue = 1.0 / k + (base[s] - 1.0 / k) * st;
                pPredicted = pTrue;
            }
        } else {
            predicted = (y + offset[s]) % k;
            pPredicted = 0.25;
            pTrue = predicted == y ? 0.25 : 0.75 / (k - 1);
        }
        double restShare = predicted == y ? (1 - pTrue) / (k - 1) : (1 - pTrue - pPredicted) / (k - 2);
        for (int c = 0; c < k; c++) {
            p[c] = (float) restShare;
        }
        p[y] = (float) pTrue;
        p[predicted] = (float) pPredicted;
        return p;
    }

    /** Per-sample outcomes of {@code set} on the samples numbered {@code ids} (for checks outside the scorer). */
    public Outcomes outcomes(RegionSet set, int[] ids) {
        long h = setHash(set);
        float[][] probs = new float[ids.length][];
        int[] labels = new int[ids.length];
        for (int i = 0; i < ids.length; i++) {
            probs[i] = probabilities(set, h, ids[i]);
            labels[i] = label[ids[i]];
        }
        return Outcomes.of(probs, labels);
    }

    /** The score of {@code set} on the samples numbered {@code ids}. */
    public SetScore score(RegionSet set, int[] ids) {
        int[] labels = new int[ids.length];
        for (int i = 0; i < ids.length; i++) {
            labels[i] = label[ids[i]];
        }
        return SetScore.of(outcomes(set, ids), labels, config.classes());
    }

    /**
     * The proof that no set smaller than {@link #minimumSize()} is critical on the samples {@code ids}: the lower
     * bound of correct samples of every way to cut channels and trap regions (noisy samples counted wrong), against
     * the most correct samples a critical set may have. {@code margin} is the least excess of correct samples over
     * that limit among cuts smaller than the minimum (positive: proven); {@code minimumCritical} and {@code trapHolds}
     * say that the planted minimum sets and the named trap are critical (scored exactly) and the trap is
     * inclusion-minimal.
     */
    public record Proof(int samples, int maxCorrectWhenCritical, int margin, boolean minimumCritical,
                        boolean trapCritical, boolean trapInclusionMinimal) {
        /** Whether the planted minimum is proven: no smaller cut can be critical and the minimum sets are. */
        public boolean holds() {
            return margin > 0 && minimumCritical;
        }
    }

    /** Proves the planted minimum on the samples numbered {@code ids} under {@code criterion}. */
    public Proof proof(int[] ids, CollapseCriterion criterion) {
        SetScore intact = score(RegionSet.empty(config.regions()), ids);
        int limit = -1;
        for (int k = 0; k <= ids.length; k++) {
            if (criterion.critical(syntheticScore(ids, k), intact)) {
                limit = k;
            }
        }
        int g = config.groups();
        int pr = config.pairs();
        int t = traps.length;
        int minimum = minimumSize();
        int margin = Integer.MAX_VALUE;
        for (int pairCut = 0; pairCut < (1 << pr); pairCut++) {
            for (int groupCut = 0; groupCut < (1 << g); groupCut++) {
                for (int trapCut = 0; trapCut < (1 << t); trapCut++) {
                    int cost = Integer.bitCount(pairCut) + config.groupSize() * Integer.bitCount(groupCut)
                            + Integer.bitCount(trapCut);
                    if (cost >= minimum) {
                        continue;
                    }
                    int correct = 0;
                    for (int id : ids) {
                        correct += lowerBoundCorrect(id, pairCut, groupCut, trapCut) ? 1 : 0;
                    }
                    margin = Math.min(margin, correct - limit);
                }
            }
        }
        boolean minimumCritical = true;
        for (RegionSet s : minimumSets()) {
            minimumCritical &= criterion.critical(score(s, ids), intact);
        }
        RegionSet trapSet = trap();
        boolean trapCritical = t > 0 && criterion.critical(score(trapSet, ids), intact);
        boolean trapMinimal = trapCritical;
        for (int p : trapSet.positions()) {
            trapMinimal &= !criterion.critical(score(trapSet.without(p), ids), intact);
        }
        return new Proof(ids.length, limit, margin, minimumCritical, trapCritical, trapMinimal);
    }

    /** Whether sample {@code id} is surely correct under a cut (noisy samples are not counted). */
    private boolean lowerBoundCorrect(int id, int pairCut, int groupCut, int trapCut) {
        int c = channel[id];
        if (c < 0) {
            return false;
        }
        boolean alive;
        if (c >= config.groups()) {
            alive = (pairCut >>> (c - config.groups()) & 1) == 0;
        } else {
            alive = (groupCut >>> c & 1) == 0 && (trapCut >>> trap[id] & 1) == 0;
        }
        if (alive) {
            return !noisy[id];
        }
        return offset[id] == 0;
    }

    /** A score of {@code k} correct samples among {@code ids}, the first k right and the rest wrong. */
    private SetScore syntheticScore(int[] ids, int k) {
        int[] labels = new int[ids.length];
        int[] pred = new int[ids.length];
        float[] ptrue = new float[ids.length];
        for (int i = 0; i < ids.length; i++) {
            labels[i] = label[ids[i]];
            pred[i] = i < k ? labels[i] : (labels[i] + 1) % config.classes();
            ptrue[i] = i < k ? 0.9f : 0.01f;
        }
        return SetScore.of(new Outcomes(pred, ptrue), labels, config.classes());
    }

    /** The sample numbers of {@code inputs}' samples (as read by the decoder from region 0). */
    public static int[] ids(InputBatch batch) {
        int[] ids = new int[batch.size()];
        for (int s = 0; s < ids.length; s++) {
            ids[s] = (int) batch.series(s)[0];
        }
        return ids;
    }
}
