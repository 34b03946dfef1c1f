package org.cruxset.scoring.simulate;

import java.util.ArrayList;
import java.util.List;

/**
 * Where a simulation planted its structure (region names), the signal-to-noise ratios it realised (variance of
 * the planted component over variance of the rest of the region's series, pooled over samples and time points;
 * for the pair, of one member's class component over its background plus masker), and the
 * designed minimal critical sets: the whole redundant group plus one member of the synergistic pair.
 */
public record PlantedDesign(List<String> redundant, List<String> pair, List<String> decoys,
                            double redundantSnr, double pairSnr, double decoyVarianceRatio) {
    public PlantedDesign {
        redundant = List.copyOf(redundant);
        pair = List.copyOf(pair);
        decoys = List.copyOf(decoys);
        if (pair.size() != 2) {
            throw new IllegalArgumentException("the synergistic pair must have 2 regions, found " + pair.size());
        }
    }

    /** Planted regions and decoys: the pool lesioned exhaustively to find the decoder's own truth. */
    public List<String> pool() {
        List<String> out = new ArrayList<>(redundant);
        out.addAll(pair);
        out.addAll(decoys);
        return out;
    }

    /** The designed minimal critical sets. */
    public List<List<String>> designedMinimalSets() {
        List<List<String>> out = new ArrayList<>();
        for (String p : pair) {
            List<String> s = new ArrayList<>(redundant);
            s.add(p);
            out.add(List.copyOf(s));
        }
        return out;
    }
}
