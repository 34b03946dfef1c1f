package org.cruxset.scoring.eval;

import java.util.ArrayList;
import java.util.Collections;
import java.util.HashSet;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Set;
import java.util.SplittableRandom;
import org.cruxset.scoring.Checks;
import org.cruxset.scoring.cohort.Sample;

/**
 * Held-out samples split by subject into a <em>search part</em>, the only data strategies see and spend their budget
 * on, and a <em>confirmation part</em> that re-scores what they report. A set chosen because it scored low on some
 * samples looks better on those samples than it is (selection bias, the winner's curse); subjects the search never saw
 * give an unbiased score. With {@code confirmFraction} 0 there is no confirmation part and every held-out sample is
 * searched (scores of selected sets are then optimistic).
 *
 * <p>The split: held-out subjects sorted by name, shuffled with {@link SplittableRandom}({@code seed}) (Fisher–Yates,
 * from the last position down, one {@code nextInt(i + 1)} per position), the first
 * {@code round(confirmFraction × subjects)} (at least 1, at most subjects − 1) to the confirmation part. Samples keep
 * their held-out order within each part.
 */
public record Parts(long seed, double confirmFraction, List<Sample> search, List<Sample> confirmation,
                    List<String> searchSubjects, List<String> confirmationSubjects) {
    /** The default split seed. */
    public static final long DEFAULT_SEED = 1;
    /** The default fraction of held-out subjects in the confirmation part. */
    public static final double DEFAULT_CONFIRM = 0.5;

    public Parts {
        search = List.copyOf(search);
        confirmation = List.copyOf(confirmation);
        searchSubjects = List.copyOf(searchSubjects);
        confirmationSubjects = List.copyOf(confirmationSubjects);
    }

    /**
     * Splits {@code heldOut} by subject. {@code confirmFraction} in [0, 1); a positive fraction needs at least two
     * held-out subjects.
     */
    public static Parts split(List<Sample> heldOut, long seed, double confirmFraction) {
        Checks.within("confirm fraction", confirmFraction, 0.0, Math.nextDown(1.0));
        if (heldOut.isEmpty()) {
            throw new IllegalArgumentException("no held-out samples to split into parts");
        }
        Set<String> distinct = new LinkedHashSet<>();
        for (Sample s : heldOut) {
            distinct.add(s.subject());
        }
        List<String> subjects = new ArrayList<>(distinct);
        Collections.sort(subjects);
        if (confirmFraction == 0) {
            return new Parts(seed, 0, heldOut, List.of(), subjects, List.of());
        }
        int n = subjects.size();
        if (n < 2) {
            throw new IllegalArgumentException("the held-out samples come from " + n + " subject: a confirmation part "
                    + "needs at least 2 held-out subjects (give --confirm 0 to search and report on all of them, "
                    + "knowing that scores of selected sets are then optimistic)");
        }
        SplittableRandom rng = new SplittableRandom(seed);
        for (int i = n - 1; i > 0; i--) {
            Collections.swap(subjects, i, rng.nextInt(i + 1));
        }
        int nConfirm = Math.max(1, Math.min(n - 1, (int) Math.round(confirmFraction * n)));
        Set<String> confirm = new HashSet<>(subjects.subList(0, nConfirm));
        List<Sample> searchSamples = new ArrayList<>();
        List<Sample> confirmSamples = new ArrayList<>();
        for (Sample s : heldOut) {
            (confirm.contains(s.subject()) ? confirmSamples : searchSamples).add(s);
        }
        List<String> searchSubjects = new ArrayList<>(subjects.subList(nConfirm, n));
        List<String> confirmSubjects = new ArrayList<>(subjects.subList(0, nConfirm));
        Collections.sort(searchSubjects);
        Collections.sort(confirmSubjects);
        return new Parts(seed, confirmFraction, searchSamples, confirmSamples, searchSubjects, confirmSubjects);
    }

    /** Whether there is a confirmation part. */
    public boolean hasConfirmation() {
        return !confirmation.isEmpty();
    }

    /** One line for reports: the sizes of both parts, the seed, and what each part is for. */
    public String describe() {
        if (!hasConfirmation()) {
            return "no confirmation part (--confirm 0): search and reports use all " + search.size()
                    + " held-out samples (" + searchSubjects.size() + " subjects), so scores of sets selected on them "
                    + "are optimistic";
        }
        return "held-out subjects split by subject (seed " + seed + "): search part " + search.size() + " samples ("
                + searchSubjects.size() + " subjects), which strategies see; confirmation part " + confirmation.size()
                + " samples (" + confirmationSubjects.size() + " subjects), never seen by a search";
    }
}
