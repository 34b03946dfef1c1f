package org.cruxset.scoring.cohort;

import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import java.util.TreeSet;

/** An atlas plus labelled samples; {@code classes} lists the distinct labels in sorted order. */
public record Cohort(Atlas atlas, List<Sample> samples) {
    public Cohort {
        Objects.requireNonNull(atlas, "atlas");
        samples = List.copyOf(samples);
        for (Sample s : samples) {
            if (s.regions() != atlas.size()) {
                throw new IllegalArgumentException("sample " + s.id() + " has " + s.regions()
                        + " regions, the atlas has " + atlas.size());
            }
        }
    }

    /** Distinct labels, sorted. */
    public List<String> classes() {
        TreeSet<String> set = new TreeSet<>();
        for (Sample s : samples) {
            set.add(s.label());
        }
        return List.copyOf(set);
    }

    /** Samples of one split. */
    public List<Sample> split(Split split) {
        List<Sample> out = new ArrayList<>();
        for (Sample s : samples) {
            if (s.split() == split) {
                out.add(s);
            }
        }
        return out;
    }

    /** Distinct subjects, in order of first appearance. */
    public List<String> subjects() {
        List<String> out = new ArrayList<>();
        java.util.Set<String> seen = new java.util.HashSet<>();
        for (Sample s : samples) {
            if (seen.add(s.subject())) {
                out.add(s.subject());
            }
        }
        return out;
    }

    /** The same atlas with other samples. */
    public Cohort withSamples(List<Sample> other) {
        return new Cohort(atlas, other);
    }
}
