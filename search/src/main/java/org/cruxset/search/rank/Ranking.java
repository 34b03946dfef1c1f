package org.cruxset.search.rank;

import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Objects;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.lesion.LesionSpec;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Units (regions, or {@code network:NAME} groups) in order of importance, most important first, with a value each and
 * the name of what produced it. {@code complete} says whether every unit of its kind is ranked; {@code part} which
 * held-out part it was computed on ({@code search}, {@code confirmation} or {@code all}); {@code meaning} what the
 * values are. Every producer writes this type and every consumer reads it ({@link RankingFile} is its TSV form).
 */
public record Ranking(Kind kind, List<String> units, List<Double> values, List<String> sources, boolean complete,
                      String part, String meaning) {
    /** What the units are. */
    public enum Kind {
        REGIONS, NETWORKS;

        /** The spelling in files. */
        public String label() {
            return name().toLowerCase(Locale.ROOT);
        }
    }

    public Ranking {
        Objects.requireNonNull(kind, "kind");
        units = List.copyOf(units);
        values = List.copyOf(values);
        sources = List.copyOf(sources);
        Objects.requireNonNull(part, "part");
        Objects.requireNonNull(meaning, "meaning");
        if (values.size() != units.size() || sources.size() != units.size()) {
            throw new IllegalArgumentException("a ranking needs one value and one source per unit: " + units.size()
                    + " units, " + values.size() + " values, " + sources.size() + " sources");
        }
        if (units.stream().distinct().count() != units.size()) {
            throw new IllegalArgumentException("a ranking lists each unit once, found duplicates in " + units);
        }
    }

    /** Number of units. */
    public int size() {
        return units.size();
    }

    /** The atlas-position sets of the prefixes of length 1 .. size(), nested, each the union of its units. */
    public List<RegionSet> prefixes(Atlas atlas) {
        return prefixes(units, atlas);
    }

    /** The atlas-position sets of the prefixes of {@code units} (names or {@code network:NAME}), nested. */
    public static List<RegionSet> prefixes(List<String> units, Atlas atlas) {
        List<RegionSet> out = new ArrayList<>(units.size());
        RegionSet acc = RegionSet.empty(atlas.size());
        for (String u : units) {
            acc = acc.union(LesionSpec.parse(u, atlas));
            out.add(acc);
        }
        return out;
    }
}
