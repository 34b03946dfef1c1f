package org.cruxset.scoring.eval;

import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.ModelCard;

/**
 * Samples mapped into a decoder's input space: regions reordered to the model's order (when the model names its
 * regions), the model's preprocessing applied, labels turned into the model's class indices.
 */
public record ModelInputs(InputBatch batch, int[] labels, List<String> sampleIds, List<String> subjects,
                          List<String> classLabels, int[] regionOfInput) {
    public ModelInputs {
        labels = labels.clone();
        sampleIds = List.copyOf(sampleIds);
        subjects = List.copyOf(subjects);
        classLabels = List.copyOf(classLabels);
        regionOfInput = regionOfInput.clone();
    }

    @Override
    public int[] labels() {
        return labels.clone();
    }

    /** Class index of sample {@code s}. */
    public int label(int s) {
        return labels[s];
    }

    /**
     * Maps {@code samples} (in {@code atlas} order) for a decoder described by {@code card}. Fails, naming the
     * region or label, when the atlas lacks a region the model needs or a sample's label is not one of the model's.
     */
    public static ModelInputs prepare(ModelCard card, Atlas atlas, List<Sample> samples) {
        int n = card.regions();
        int[] atlasPos = new int[n];
        if (card.regionNames().isEmpty()) {
            if (atlas.size() != n) {
                throw new IllegalArgumentException("the model takes " + n + " regions but the atlas has " + atlas.size()
                        + " (the model names no regions, so its inputs must be the atlas regions in index order)");
            }
            for (int i = 0; i < n; i++) {
                atlasPos[i] = i;
            }
        } else {
            List<String> missing = new ArrayList<>();
            for (int i = 0; i < n; i++) {
                String name = card.regionNames().get(i);
                Integer p = atlas.position(name).orElse(null);
                if (p == null) {
                    missing.add(name);
                } else {
                    atlasPos[i] = p;
                }
            }
            if (!missing.isEmpty()) {
                throw new IllegalArgumentException("the atlas lacks " + missing.size() + " region(s) the model takes: "
                        + missing.subList(0, Math.min(10, missing.size())) + (missing.size() > 10 ? " and more" : ""));
            }
        }
        Map<String, Integer> classIndex = new HashMap<>();
        for (int k = 0; k < card.classes(); k++) {
            classIndex.put(card.classLabels().get(k), k);
        }
        boolean identity = atlas.size() == n;
        for (int i = 0; identity && i < n; i++) {
            identity = atlasPos[i] == i;
        }
        float[][] series = new float[samples.size()][];
        int[] lengths = new int[samples.size()];
        int[] labels = new int[samples.size()];
        List<String> ids = new ArrayList<>();
        List<String> subjects = new ArrayList<>();
        for (int s = 0; s < samples.size(); s++) {
            Sample x = samples.get(s);
            Integer k = classIndex.get(x.label());
            if (k == null) {
                throw new IllegalArgumentException("sample " + x.id() + " has label '" + x.label()
                        + "', which is not one of the model's classes " + card.classLabels());
            }
            labels[s] = k;
            Sample ordered = identity ? x : reorder(x, atlasPos);
            series[s] = card.preprocessing().apply(ordered).values();
            lengths[s] = x.length();
            ids.add(x.id());
            subjects.add(x.subject());
        }
        return new ModelInputs(InputBatch.of(n, series, lengths), labels, ids, subjects, card.classLabels(), atlasPos);
    }

    private static Sample reorder(Sample x, int[] atlasPos) {
        int n = atlasPos.length;
        int an = x.regions();
        float[] v = x.values();
        float[] out = new float[x.length() * n];
        for (int t = 0; t < x.length(); t++) {
            for (int i = 0; i < n; i++) {
                out[t * n + i] = v[t * an + atlasPos[i]];
            }
        }
        return new Sample(x.id(), x.subject(), x.label(), x.split(), x.length(), n, out);
    }

    /**
     * The model-input set of an atlas-position set; fails, naming the region, when the model does not take one of
     * its regions.
     */
    public org.cruxset.scoring.lesion.RegionSet toInputs(org.cruxset.scoring.lesion.RegionSet atlasSet,
                                                        org.cruxset.scoring.cohort.Atlas atlas) {
        int[] inputOf = new int[atlas.size()];
        java.util.Arrays.fill(inputOf, -1);
        for (int i = 0; i < regionOfInput.length; i++) {
            inputOf[regionOfInput[i]] = i;
        }
        int[] atlasPos = atlasSet.positions();
        int[] in = new int[atlasPos.length];
        for (int k = 0; k < atlasPos.length; k++) {
            in[k] = inputOf[atlasPos[k]];
            if (in[k] < 0) {
                throw new IllegalArgumentException("region '" + atlas.region(atlasPos[k]).name() + "' is not an input of the model");
            }
        }
        return org.cruxset.scoring.lesion.RegionSet.of(regionOfInput.length, in);
    }

    /** Number of samples. */
    public int size() {
        return labels.length;
    }

    /** Each sample's subject as an index in [0, number of subjects), numbered in order of first appearance. */
    public int[] subjectIndex() {
        java.util.Map<String, Integer> idx = new java.util.HashMap<>();
        int[] out = new int[size()];
        for (int s = 0; s < out.length; s++) {
            out[s] = idx.computeIfAbsent(subjects.get(s), k -> idx.size());
        }
        return out;
    }
}
