package org.cruxset.scoring.cohort;

import java.util.ArrayList;
import java.util.Collections;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;

/** Splits by subject: no subject's samples in two of train, validation and test. */
public final class SubjectSplits {
    private SubjectSplits() {
    }

    /**
     * The cohort with every sample in a split: splits from the manifest are kept (and checked: one split per
     * subject); a cohort without splits is split by subject with the given seed and fractions (train, validation,
     * test). A manifest that assigns some samples but not others is refused.
     */
    public static Cohort resolve(Cohort cohort, long seed, double train, double validation, double test) {
        int assigned = 0;
        for (Sample s : cohort.samples()) {
            if (s.split() != Split.UNASSIGNED) {
                assigned++;
            }
        }
        if (assigned == cohort.samples().size()) {
            check(cohort);
            return cohort;
        }
        if (assigned > 0) {
            throw new IllegalArgumentException("the manifest assigns a split to " + assigned + " of "
                    + cohort.samples().size() + " samples: give every sample a split, or none");
        }
        List<String> subjects = new ArrayList<>(cohort.subjects());
        Collections.sort(subjects);
        SplittableRandom rng = new SplittableRandom(seed);
        for (int i = subjects.size() - 1; i > 0; i--) {
            Collections.swap(subjects, i, rng.nextInt(i + 1));
        }
        int n = subjects.size();
        if (n < 3) {
            throw new IllegalArgumentException("splitting by subject needs at least 3 subjects, found " + n);
        }
        int nTest = Math.max(1, (int) Math.round(test * n));
        int nVal = Math.max(1, (int) Math.round(validation * n));
        if (nTest + nVal >= n) {
            throw new IllegalArgumentException("too few subjects (" + n + ") for the split fractions " + train + "/"
                    + validation + "/" + test);
        }
        Map<String, Split> of = new HashMap<>();
        for (int i = 0; i < n; i++) {
            of.put(subjects.get(i), i < nTest ? Split.TEST : i < nTest + nVal ? Split.VALIDATION : Split.TRAIN);
        }
        List<Sample> out = new ArrayList<>();
        for (Sample s : cohort.samples()) {
            out.add(s.withSplit(of.get(s.subject())));
        }
        return cohort.withSamples(out);
    }

    /** Fails, naming the subject and both splits, when a subject has samples in two splits. */
    public static void check(Cohort cohort) {
        Map<String, Split> seen = new HashMap<>();
        Map<String, String> firstSample = new HashMap<>();
        for (Sample s : cohort.samples()) {
            Split prev = seen.putIfAbsent(s.subject(), s.split());
            firstSample.putIfAbsent(s.subject(), s.id());
            if (prev != null && prev != s.split()) {
                throw new IllegalArgumentException("subject " + s.subject() + " is in two splits: sample "
                        + firstSample.get(s.subject()) + " in " + prev.label() + ", sample " + s.id() + " in "
                        + s.split().label() + " (splits must be by subject)");
            }
        }
    }
}
