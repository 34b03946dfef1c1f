package org.cruxset.scoring.store;

import java.util.ArrayList;
import java.util.Collections;
import java.util.HashSet;
import java.util.List;
import java.util.Objects;
import java.util.Set;
import org.cruxset.scoring.Checks;

/**
 * A split of held-out subjects into a search part and a confirmation part, as the results store records it: the split
 * seed and confirmation fraction, each part's data hash ({@code confirmationHash} is null when there is no
 * confirmation part) and subjects (kept sorted).
 */
public record PartSplit(long seed, double confirmFraction, String searchHash,
                        String confirmationHash, List<String> searchSubjects, List<String> confirmationSubjects) {
    /** The store's name of the search part. */
    public static final String SEARCH = "search";
    /** The store's name of the confirmation part. */
    public static final String CONFIRMATION = "confirmation";

    public PartSplit {
        Objects.requireNonNull(searchHash, "searchHash");
        Checks.within("confirmFraction", confirmFraction, 0.0, Math.nextDown(1.0));
        searchSubjects = sorted(searchSubjects);
        confirmationSubjects = sorted(confirmationSubjects);
        if (searchSubjects.isEmpty()) {
            throw new IllegalArgumentException("the search part must hold at least one subject");
        }
        if ((confirmationHash == null) != confirmationSubjects.isEmpty()) {
            throw new IllegalArgumentException("a confirmation part needs both a data hash and subjects, found hash "
                    + confirmationHash + " and " + confirmationSubjects.size() + " subject(s)");
        }
        Set<String> both = new HashSet<>(searchSubjects);
        both.retainAll(confirmationSubjects);
        if (!both.isEmpty()) {
            throw new IllegalArgumentException("subjects in both parts: " + both);
        }
    }

    private static List<String> sorted(List<String> subjects) {
        List<String> out = new ArrayList<>(subjects);
        Collections.sort(out);
        return List.copyOf(out);
    }

    /** Whether there is a confirmation part. */
    public boolean hasConfirmation() {
        return confirmationHash != null;
    }
}
