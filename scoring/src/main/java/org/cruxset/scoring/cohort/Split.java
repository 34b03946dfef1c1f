package org.cruxset.scoring.cohort;

import java.util.Locale;

/** Which part of a cohort a sample belongs to; {@code UNASSIGNED} when the manifest has no split column. */
public enum Split {
    TRAIN, VALIDATION, TEST, UNASSIGNED;

    /** Parses a manifest value ({@code train}, {@code validation}, {@code test}); returns null when unknown. */
    public static Split parse(String text) {
        return switch (text.trim().toLowerCase(Locale.ROOT)) {
            case "train" -> TRAIN;
            case "validation" -> VALIDATION;
            case "test" -> TEST;
            default -> null;
        };
    }

    /** The manifest spelling. */
    public String label() {
        return name().toLowerCase(Locale.ROOT);
    }
}
