package org.cruxset.scoring.store;

import java.util.Objects;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * The identity of one evaluation: which model (SHA-256 of its file), which scored data (SHA-256 of the samples in
 * model input space, their ids and labels), which preprocessing, which lesion mode and seed, and which set. Two
 * evaluations with equal keys give equal per-sample outcomes, so a stored one is reused instead of decoding again.
 * {@code modeSeed} is 0 for modes that draw no random numbers.
 */
public record EvaluationKey(String modelHash, String dataHash, String preprocessing, LesionMode mode, long modeSeed,
                            RegionSet set) {
    public EvaluationKey {
        Objects.requireNonNull(modelHash, "modelHash");
        Objects.requireNonNull(dataHash, "dataHash");
        Objects.requireNonNull(preprocessing, "preprocessing");
        Objects.requireNonNull(mode, "mode");
        Objects.requireNonNull(set, "set");
        if (!mode.isRandom()) {
            modeSeed = 0;
        }
    }

    /** The set as a lowercase hex string of its bit words, most significant word first (a stable text key). */
    public String setHex() {
        return setHex(set);
    }

    /** A set as lowercase hex of its bit words, most significant word first (as {@link #setHex()}). */
    public static String setHex(RegionSet set) {
        long[] w = set.words();
        StringBuilder sb = new StringBuilder(w.length * 16);
        for (int i = w.length - 1; i >= 0; i--) {
            String h = Long.toHexString(w[i]);
            sb.append("0000000000000000", h.length(), 16).append(h);
        }
        return sb.toString();
    }

    /** Parses {@link #setHex()} back into a set over {@code universe} regions. */
    public static RegionSet parseSetHex(String hex, int universe) {
        int words = (universe + 63) >>> 6;
        if (hex.length() != words * 16) {
            throw new IllegalArgumentException("set key '" + hex + "' must have " + words * 16 + " hex digits for "
                    + universe + " regions, found " + hex.length());
        }
        long[] w = new long[words];
        for (int i = 0; i < words; i++) {
            String part = hex.substring(hex.length() - (i + 1) * 16, hex.length() - i * 16);
            w[i] = Long.parseUnsignedLong(part, 16);
        }
        return RegionSet.ofWords(universe, w);
    }
}
