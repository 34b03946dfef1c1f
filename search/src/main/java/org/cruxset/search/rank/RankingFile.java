package org.cruxset.search.rank;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.CohortFormatException;
import org.cruxset.scoring.lesion.LesionSpec;

/**
 * The one TSV form of a {@link Ranking}. The first line is a header comment of {@code key: value} pairs,
 * {@code # cruxset ranking; units: regions; complete: yes; part: search; value: ...}; then the column header
 * {@code rank unit value source} (tab-separated) and one row per unit, ranks 1, 2, ... in order. Units are region
 * names or {@code network:NAME}, all of one kind. Errors name the file, the line and what was expected.
 */
public final class RankingFile {
    /** The first words of the header comment. */
    public static final String MAGIC = "# cruxset ranking";
    private static final List<String> COLUMNS = List.of("rank", "unit", "value", "source");

    private RankingFile() {
    }

    /** Writes {@code r} to {@code file} (its folder is created). */
    public static void write(Path file, Ranking r) {
        StringBuilder sb = new StringBuilder();
        sb.append(MAGIC).append("; units: ").append(r.kind().label()).append("; complete: ")
                .append(r.complete() ? "yes" : "no").append("; part: ").append(r.part()).append("; value: ")
                .append(r.meaning().replace(';', ',').replace('\n', ' ')).append('\n');
        sb.append(String.join("\t", COLUMNS)).append('\n');
        for (int i = 0; i < r.size(); i++) {
            sb.append(i + 1).append('\t').append(r.units().get(i)).append('\t').append(r.values().get(i)).append('\t')
                    .append(r.sources().get(i)).append('\n');
        }
        try {
            Path parent = file.toAbsolutePath().getParent();
            Files.createDirectories(parent);
            Files.writeString(file, sb.toString(), StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(file + ": cannot write the ranking: " + e.getMessage(), e);
        }
    }

    /**
     * Reads a ranking of units of {@code atlas}; unknown, duplicated or wrongly-kinded units, bad ranks and values
     * are errors naming the line.
     */
    public static Ranking read(Path file, Atlas atlas) {
        List<String> lines;
        try {
            lines = Files.readAllLines(file, StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(file + ": cannot read the ranking: " + e.getMessage(), e);
        }
        if (lines.isEmpty() || !lines.get(0).startsWith(MAGIC)) {
            throw new CohortFormatException(file, 1, 1, "expected the header comment '" + MAGIC
                    + "; units: regions|networks; complete: yes|no; part: search|confirmation|all; value: ...'");
        }
        Map<String, String> head = new HashMap<>();
        for (String field : lines.get(0).substring(MAGIC.length()).split(";")) {
            int colon = field.indexOf(':');
            if (colon > 0) {
                head.put(field.substring(0, colon).trim().toLowerCase(Locale.ROOT), field.substring(colon + 1).trim());
            }
        }
        Ranking.Kind kind = switch (head.getOrDefault("units", "")) {
            case "regions" -> Ranking.Kind.REGIONS;
            case "networks" -> Ranking.Kind.NETWORKS;
            default -> throw new CohortFormatException(file, 1, 0, "the header must say 'units: regions' or "
                    + "'units: networks', found '" + head.getOrDefault("units", "") + "'");
        };
        boolean complete = switch (head.getOrDefault("complete", "")) {
            case "yes" -> true;
            case "no" -> false;
            default -> throw new CohortFormatException(file, 1, 0, "the header must say 'complete: yes' or "
                    + "'complete: no', found '" + head.getOrDefault("complete", "") + "'");
        };
        String part = head.getOrDefault("part", "");
        if (!List.of("search", "confirmation", "all").contains(part)) {
            throw new CohortFormatException(file, 1, 0, "the header must say 'part: search', 'part: confirmation' or "
                    + "'part: all', found '" + part + "'");
        }
        if (lines.size() < 2 || !List.of(lines.get(1).split("\t", -1)).equals(COLUMNS)) {
            throw new CohortFormatException(file, 2, 1, "expected the column header: rank, unit, value, source (tab-separated)");
        }
        List<String> units = new ArrayList<>();
        List<Double> values = new ArrayList<>();
        List<String> sources = new ArrayList<>();
        Map<String, Integer> seenAt = new LinkedHashMap<>();
        for (int i = 2; i < lines.size(); i++) {
            int lineNo = i + 1;
            String line = lines.get(i);
            if (line.isBlank()) {
                continue;
            }
            String[] f = line.split("\t", -1);
            if (f.length != 4) {
                throw new CohortFormatException(file, lineNo, 0, "expected 4 tab-separated fields (rank, unit, value, "
                        + "source), found " + f.length);
            }
            int rank;
            try {
                rank = Integer.parseInt(f[0].trim());
            } catch (NumberFormatException e) {
                throw new CohortFormatException(file, lineNo, 1, "rank '" + f[0] + "' is not a whole number");
            }
            if (rank != units.size() + 1) {
                throw new CohortFormatException(file, lineNo, 1, "rank " + rank + " out of order: expected "
                        + (units.size() + 1));
            }
            String unit = f[1].trim();
            boolean isNetwork = unit.startsWith(LesionSpec.NETWORK_PREFIX);
            if (isNetwork != (kind == Ranking.Kind.NETWORKS)) {
                throw new CohortFormatException(file, lineNo, 2, "unit '" + unit + "' is a "
                        + (isNetwork ? "network" : "region") + " but the header says 'units: " + kind.label() + "'");
            }
            if (unit.contains(",")) {
                throw new CohortFormatException(file, lineNo, 2, "unit '" + unit + "' names several regions: one "
                        + "unit per row");
            }
            try {
                LesionSpec.parse(unit, atlas);
            } catch (IllegalArgumentException e) {
                throw new CohortFormatException(file, lineNo, 2, e.getMessage());
            }
            Integer first = seenAt.putIfAbsent(unit, lineNo);
            if (first != null) {
                throw new CohortFormatException(file, lineNo, 2, "unit '" + unit + "' is ranked twice (first on line "
                        + first + ")");
            }
            double v;
            try {
                v = Double.parseDouble(f[2].trim());
            } catch (NumberFormatException e) {
                throw new CohortFormatException(file, lineNo, 3, "value '" + f[2] + "' is not a number");
            }
            units.add(unit);
            values.add(v);
            sources.add(f[3].trim());
        }
        if (units.isEmpty()) {
            throw new CohortFormatException(file, "the ranking lists no units");
        }
        int all = kind == Ranking.Kind.REGIONS ? atlas.size() : atlas.networks().size();
        if (complete && units.size() != all) {
            throw new CohortFormatException(file, 1, 0, "the header says 'complete: yes' but " + units.size() + " of "
                    + all + " " + kind.label() + " are ranked");
        }
        return new Ranking(kind, units, values, sources, complete, part, head.getOrDefault("value", ""));
    }

    /** Fails with a clear message unless {@code r} ranks every unit of its kind (for consumers that need that). */
    public static void requireComplete(Ranking r, String consumer) {
        if (!r.complete()) {
            throw new IllegalArgumentException(consumer + " needs a complete ranking (every " + r.kind().label()
                    + " unit ranked), but the ranking says 'complete: no' (" + r.size() + " units)");
        }
    }
}
