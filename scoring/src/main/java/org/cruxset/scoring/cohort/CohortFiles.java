package org.cruxset.scoring.cohort;

import org.cruxset.scoring.Names;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.OutputStreamWriter;
import java.io.UncheckedIOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.InvalidPathException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.OptionalInt;
import java.util.Set;

/**
 * Reads and writes cohorts on disk: an atlas {@code regions.tsv}, a manifest {@code samples.tsv}, and the series
 * either as one TSV per sample or as one {@code samples.npy} array; every problem is a {@link CohortFormatException}.
 */
public final class CohortFiles {
    /** File name of the atlas inside a cohort folder. */
    public static final String REGIONS_FILE = "regions.tsv";
    /** File name of the manifest inside a cohort folder. */
    public static final String SAMPLES_FILE = "samples.tsv";
    /** File name of the series array beside a manifest without a {@code path} column. */
    public static final String ARRAY_FILE = "samples.npy";
    /** Folder, inside a written cohort, holding one series TSV per sample. */
    public static final String SERIES_FOLDER = "series";

    private static final int MAX_SUGGESTIONS = 3;
    private static final int MAX_LISTED = 10;

    private CohortFiles() {
    }

    // ------------------------------------------------------------------ atlas

    /** Reads an atlas TSV with columns {@code index} (integer), {@code name} and {@code network}; others are ignored. */
    public static Atlas readAtlas(Path regionsTsv) {
        requireFile(regionsTsv, "expected an atlas TSV with columns index, name, network");
        TsvTable t = TsvTable.read(regionsTsv);
        int[] cols = t.requireColumns("index", "name", "network");
        int ci = cols[0];
        int cn = cols[1];
        int cw = cols[2];
        if (t.rowCount() == 0) {
            throw new CohortFormatException(regionsTsv, "no regions: the file has a header but no rows; expected one"
                    + " row per region with columns index, name, network");
        }
        Map<Integer, Integer> lineByIndex = new HashMap<>();
        Map<String, Integer> lineByName = new HashMap<>();
        List<Region> regions = new ArrayList<>(t.rowCount());
        for (int r = 0; r < t.rowCount(); r++) {
            String indexText = t.get(r, ci).strip();
            int index;
            try {
                index = Integer.parseInt(indexText);
            } catch (NumberFormatException e) {
                throw t.error(r, ci, "index '" + indexText + "' is not an integer; expected a whole number such as"
                        + " 0 or 17");
            }
            Integer earlier = lineByIndex.putIfAbsent(index, t.line(r));
            if (earlier != null) {
                throw t.error(r, ci, "duplicate index " + index + ", also on line " + earlier
                        + "; expected each index once");
            }
            String name = t.get(r, cn).strip();
            if (name.isEmpty()) {
                throw t.error(r, cn, "blank name; expected a region name");
            }
            Integer earlierName = lineByName.putIfAbsent(name, t.line(r));
            if (earlierName != null) {
                throw t.error(r, cn, "duplicate region name '" + name + "', also on line " + earlierName
                        + "; expected each name once");
            }
            String network = t.get(r, cw).strip();
            if (network.isEmpty()) {
                throw t.error(r, cw, "blank network for region '" + name + "'; expected a network name");
            }
            regions.add(new Region(index, name, network));
        }
        return Atlas.of(regions);
    }

    // ------------------------------------------------------------------ cohort

    /**
     * Reads a cohort from a folder holding {@code regions.tsv} and {@code samples.tsv}, or from a manifest file
     * with {@code regions.tsv} beside it.
     */
    public static Cohort read(Path location) {
        if (!Files.exists(location)) {
            throw new CohortFormatException(location, "no such file or folder; expected a cohort folder holding "
                    + REGIONS_FILE + " and " + SAMPLES_FILE + ", or the path of a manifest file");
        }
        if (Files.isDirectory(location)) {
            Path atlas = location.resolve(REGIONS_FILE);
            Path manifest = location.resolve(SAMPLES_FILE);
            requireFile(atlas, "expected the atlas of the cohort folder " + location
                    + " (columns index, name, network)");
            requireFile(manifest, "expected the sample manifest of the cohort folder " + location
                    + " (columns sample, subject, label and path, or a " + ARRAY_FILE + " beside it)");
            return read(atlas, manifest);
        }
        Path atlas = folderOf(location).resolve(REGIONS_FILE);
        requireFile(atlas, "expected the atlas beside the manifest " + location
                + " (columns index, name, network), or give the atlas separately");
        return read(atlas, location);
    }

    /** Reads a cohort from an atlas TSV and a manifest TSV given separately. */
    public static Cohort read(Path atlasTsv, Path manifestTsv) {
        Atlas atlas = readAtlas(atlasTsv);
        requireFile(manifestTsv, "expected a sample manifest with columns sample, subject, label and path (or a "
                + ARRAY_FILE + " beside it)");
        TsvTable t = TsvTable.read(manifestTsv);
        int[] cols = t.requireColumns("sample", "subject", "label");
        OptionalInt pathCol = t.findColumn("path");
        OptionalInt splitCol = t.findColumn("split");
        OptionalInt lengthCol = t.findColumn("length");
        int n = t.rowCount();
        if (n == 0) {
            throw new CohortFormatException(manifestTsv, "no samples: the manifest has a header but no rows;"
                    + " expected one row per sample");
        }
        String[] ids = new String[n];
        String[] subjects = new String[n];
        String[] labels = new String[n];
        Split[] splits = new Split[n];
        Map<String, Integer> lineById = new HashMap<>();
        Map<String, List<Integer>> linesByLabel = new LinkedHashMap<>();
        for (int r = 0; r < n; r++) {
            ids[r] = nonBlank(t, r, cols[0], "sample id");
            Integer earlier = lineById.putIfAbsent(ids[r], t.line(r));
            if (earlier != null) {
                throw t.error(r, cols[0], "duplicate sample id '" + ids[r] + "' on lines " + earlier + " and "
                        + t.line(r) + "; expected each sample id once");
            }
            subjects[r] = nonBlank(t, r, cols[1], "subject");
            labels[r] = nonBlank(t, r, cols[2], "label");
            linesByLabel.computeIfAbsent(labels[r], k -> new ArrayList<>()).add(t.line(r));
            if (splitCol.isPresent()) {
                String text = t.get(r, splitCol.getAsInt());
                Split s = Split.parse(text);
                if (s == null || s == Split.UNASSIGNED) {
                    throw t.error(r, splitCol.getAsInt(), "split '" + text.strip()
                            + "' is not allowed; expected one of train, validation, test");
                }
                splits[r] = s;
            } else {
                splits[r] = Split.UNASSIGNED;
            }
        }
        for (Map.Entry<String, List<Integer>> e : linesByLabel.entrySet()) {
            if (e.getValue().size() < 2) {
                int line = e.getValue().get(0);
                throw new CohortFormatException(manifestTsv, line, cols[2] + 1, "label '" + e.getKey()
                        + "' has only 1 sample (line " + line + "); expected at least 2 samples per label");
            }
        }
        int[] lengths = lengthCol.isPresent() ? parseLengths(t, lengthCol.getAsInt()) : null;
        List<Sample> samples = new ArrayList<>(n);
        if (pathCol.isPresent()) {
            Path dir = folderOf(manifestTsv);
            int pc = pathCol.getAsInt();
            for (int r = 0; r < n; r++) {
                Path file = resolveSeries(t, r, pc, dir);
                float[] values = readSeries(file, atlas, atlasTsv);
                int length = values.length / atlas.size();
                if (lengths != null && lengths[r] != length) {
                    throw t.error(r, lengthCol.getAsInt(), "length " + lengths[r] + " does not match the " + length
                            + " time points in " + file + "; expected the length column to equal the number of"
                            + " data rows of the sample file (or no length column)");
                }
                samples.add(new Sample(ids[r], subjects[r], labels[r], splits[r], length, atlas.size(), values));
            }
        } else {
            Path npy = folderOf(manifestTsv).resolve(ARRAY_FILE);
            if (!Files.isRegularFile(npy)) {
                throw new CohortFormatException(npy, "file not found; the manifest " + manifestTsv + " has no 'path'"
                        + " column, so the series are expected in this array (samples x time x regions)");
            }
            try (NpyReader.Stream in = NpyReader.open(npy)) {
                int[] shape = in.shape();
                if (shape.length != 3) {
                    throw new CohortFormatException(npy, "expected a 3-D array samples x time x regions, found shape "
                            + NpyArray.shapeText(shape) + " (" + shape.length + "-D)");
                }
                if (shape[0] != n) {
                    throw new CohortFormatException(npy, "the array holds " + shape[0] + " samples (shape "
                            + NpyArray.shapeText(shape) + ") but the manifest " + manifestTsv + " has " + n
                            + " sample rows; expected one array sample per manifest row, in order");
                }
                if (shape[2] != atlas.size()) {
                    throw new CohortFormatException(npy, "the array holds " + shape[2] + " regions (shape "
                            + NpyArray.shapeText(shape) + ") but the atlas " + atlasTsv + " has " + atlas.size()
                            + "; expected the last axis to hold the atlas regions in index order");
                }
                int time = shape[1];
                int regions = shape[2];
                for (int r = 0; r < n; r++) {
                    int length = time;
                    if (lengths != null) {
                        length = lengths[r];
                        if (length > time) {
                            throw t.error(r, lengthCol.getAsInt(), "length " + length + " exceeds the "
                                    + time + " time points of " + npy + " (shape " + NpyArray.shapeText(shape)
                                    + "); expected a length between 1 and " + time);
                        }
                    } else if (time == 0) {
                        throw new CohortFormatException(npy, "no time points: the array has shape "
                                + NpyArray.shapeText(shape) + "; expected at least one time point per sample");
                    }
                    float[] values = new float[length * regions];
                    in.readFloats(values, 0, values.length);
                    in.skip((long) (time - length) * regions);
                    checkFinite(npy, values, regions, r, ids[r], t.line(r), atlas);
                    samples.add(new Sample(ids[r], subjects[r], labels[r], splits[r], length, regions, values));
                }
            }
        }
        return new Cohort(atlas, samples);
    }

    private static int[] parseLengths(TsvTable t, int col) {
        int[] out = new int[t.rowCount()];
        for (int r = 0; r < out.length; r++) {
            String text = t.get(r, col).strip();
            int v;
            try {
                v = Integer.parseInt(text);
            } catch (NumberFormatException e) {
                throw t.error(r, col, "length '" + text + "' is not an integer; expected the number of valid time"
                        + " points, at least 1");
            }
            if (v < 1) {
                throw t.error(r, col, "length " + v + " is too small; expected the number of valid time points,"
                        + " at least 1");
            }
            out[r] = v;
        }
        return out;
    }

    private static void checkFinite(Path npy, float[] values, int regions, int sample, String id, int line,
            Atlas atlas) {
        for (int i = 0; i < values.length; i++) {
            float v = values[i];
            if (Float.isNaN(v) || Float.isInfinite(v)) {
                int time = i / regions;
                int region = i % regions;
                throw new CohortFormatException(npy, "value " + v + " at [" + sample + ", " + time + ", " + region
                        + "] (sample '" + id + "' of manifest line " + line + ", time point " + (time + 1)
                        + ", region '" + atlas.region(region).name() + "') is not finite; expected finite values"
                        + " within each sample's length");
            }
        }
    }

    private static String nonBlank(TsvTable t, int row, int col, String what) {
        String v = t.get(row, col).strip();
        if (v.isEmpty()) {
            throw t.error(row, col, "blank " + what + "; expected a non-empty " + what);
        }
        return v;
    }

    private static Path resolveSeries(TsvTable t, int row, int col, Path dir) {
        String text = t.get(row, col).strip();
        if (text.isEmpty()) {
            throw t.error(row, col, "blank path; expected the path of the sample's series TSV, relative to "
                    + (dir.toString().isEmpty() ? "the manifest's folder" : dir.toString()) + " or absolute");
        }
        Path p;
        try {
            p = Path.of(text);
        } catch (InvalidPathException e) {
            throw t.error(row, col, "invalid path '" + text + "' (" + e.getReason() + "); expected the path of the"
                    + " sample's series TSV");
        }
        Path file = p.isAbsolute() ? p : dir.resolve(p);
        if (!Files.isRegularFile(file)) {
            throw t.error(row, col, "sample file not found: " + file + " (path '" + text + "'); expected a TSV of"
                    + " time points x regions, relative to the manifest's folder or absolute");
        }
        return file;
    }

    /** Reads one series TSV: a header of atlas region names in any order, then one row of floats per time point. */
    private static float[] readSeries(Path file, Atlas atlas, Path atlasTsv) {
        int regions = atlas.size();
        try (TsvTable.Cursor c = TsvTable.open(file)) {
            List<String> header = c.header();
            int width = header.size();
            int[] position = new int[width];
            int[] columnOfPosition = new int[regions];
            Arrays.fill(columnOfPosition, -1);
            for (int col = 0; col < width; col++) {
                String name = header.get(col);
                OptionalInt p = position(atlas, name);
                if (p.isEmpty()) {
                    throw new CohortFormatException(file, 1, col + 1, "unknown region '" + name + "'; expected a"
                            + " region of the atlas " + atlasTsv + "; nearest valid names: " + nearest(atlas, name));
                }
                int pos = p.getAsInt();
                if (columnOfPosition[pos] >= 0) {
                    throw new CohortFormatException(file, 1, col + 1, "region '" + name + "' appears twice in the"
                            + " header, at columns " + (columnOfPosition[pos] + 1) + " and " + (col + 1)
                            + "; expected each atlas region once");
                }
                columnOfPosition[pos] = col;
                position[col] = pos;
            }
            if (width != regions) {
                List<String> missing = new ArrayList<>();
                for (int pos = 0; pos < regions; pos++) {
                    if (columnOfPosition[pos] < 0) {
                        missing.add(atlas.region(pos).name());
                    }
                }
                throw new CohortFormatException(file, 1, 0, "the header lacks " + missing.size() + " of the "
                        + regions + " atlas regions: " + listSome(missing) + "; expected exactly the regions of "
                        + atlasTsv + ", in any order");
            }
            float[] values = new float[Math.max(regions * 64, 1)];
            int rows = 0;
            String[] fields;
            while ((fields = c.next()) != null) {
                if ((long) (rows + 1) * regions > values.length) {
                    long grown = Math.min((long) values.length * 2, Integer.MAX_VALUE - 8);
                    if (grown < (long) (rows + 1) * regions) {
                        throw c.error(-1, "too many time points; expected at most "
                                + (Integer.MAX_VALUE - 8) / regions);
                    }
                    values = Arrays.copyOf(values, (int) grown);
                }
                int base = rows * regions;
                for (int col = 0; col < width; col++) {
                    values[base + position[col]] = parseValue(c, fields[col], col, header.get(col), rows + 1);
                }
                rows++;
            }
            if (rows == 0) {
                throw new CohortFormatException(file, "no time points: the file has a header but no data rows;"
                        + " expected one row per time point");
            }
            return values.length == rows * regions ? values : Arrays.copyOf(values, rows * regions);
        }
    }

    private static float parseValue(TsvTable.Cursor c, String text, int col, String region, int timePoint) {
        float v;
        try {
            v = Float.parseFloat(text);
        } catch (NumberFormatException e) {
            if (isNonFiniteSpelling(text)) {
                throw c.error(col, "value '" + text.strip() + "' for region '" + region + "' at time point "
                        + timePoint + " is not finite; expected a finite number");
            }
            String shown = text.strip().isEmpty() ? "empty field" : "'" + text + "'";
            throw c.error(col, shown + " for region '" + region + "' at time point " + timePoint
                    + " is not a number; expected a decimal number such as 0.25 or -1.5e-3");
        }
        if (Float.isNaN(v) || Float.isInfinite(v)) {
            throw c.error(col, "value '" + text.strip() + "' for region '" + region + "' at time point " + timePoint
                    + " is not finite" + (Float.isInfinite(v) && !isNonFiniteSpelling(text)
                    ? " (it overflows float)" : "") + "; expected a finite number");
        }
        return v;
    }

    private static boolean isNonFiniteSpelling(String text) {
        String s = text.strip().toLowerCase(Locale.ROOT);
        if (s.startsWith("+") || s.startsWith("-")) {
            s = s.substring(1);
        }
        return s.equals("nan") || s.equals("inf") || s.equals("infinity");
    }

    private static OptionalInt position(Atlas atlas, String name) {
        return atlas.position(name).map(OptionalInt::of).orElse(OptionalInt.empty());
    }

    /** Up to three atlas names closest to {@code name} by case-insensitive Levenshtein distance. */
    static String nearest(Atlas atlas, String name) {
        return Names.quoted(Names.nearest(atlas.names(), name, MAX_SUGGESTIONS));
    }

    private static String listSome(List<String> names) {
        StringBuilder sb = new StringBuilder();
        for (int i = 0; i < Math.min(MAX_LISTED, names.size()); i++) {
            sb.append(i > 0 ? ", " : "").append('\'').append(names.get(i)).append('\'');
        }
        if (names.size() > MAX_LISTED) {
            sb.append(" and ").append(names.size() - MAX_LISTED).append(" more");
        }
        return sb.toString();
    }

    private static Path folderOf(Path file) {
        Path parent = file.getParent();
        return parent == null ? Path.of("") : parent;
    }

    private static void requireFile(Path file, String expected) {
        if (!Files.exists(file)) {
            throw new CohortFormatException(file, "file not found; " + expected);
        }
        if (!Files.isRegularFile(file)) {
            throw new CohortFormatException(file, "not a regular file; " + expected);
        }
    }

    // ------------------------------------------------------------------ writing

    /**
     * Writes {@code cohort} into {@code dir} as {@code regions.tsv}, {@code samples.tsv} and either
     * {@code series/<sample>.tsv} files or one zero-padded float32 {@code samples.npy} with a {@code length} column.
     */
    public static void write(Cohort cohort, Path dir, boolean asNpy) {
        Atlas atlas = cohort.atlas();
        List<Sample> samples = cohort.samples();
        for (Region r : atlas.regions()) {
            requireText("region name", r.name(), "index " + r.index());
            requireText("network", r.network(), "region '" + r.name() + "'");
        }
        boolean withSplit = false;
        Set<String> ids = new HashSet<>();
        for (Sample s : samples) {
            requireText("sample id", s.id(), "a sample");
            requireText("subject", s.subject(), "sample '" + s.id() + "'");
            requireText("label", s.label(), "sample '" + s.id() + "'");
            if (!ids.add(s.id())) {
                throw new IllegalArgumentException("cohort: sample id '" + s.id() + "' appears twice; expected"
                        + " unique ids");
            }
            requireFinite(s, atlas);
            withSplit |= s.split() != Split.UNASSIGNED;
        }
        try {
            Files.createDirectories(dir);
            try (Writer w = newWriter(dir.resolve(REGIONS_FILE))) {
                w.write("index\tname\tnetwork\n");
                for (Region r : atlas.regions()) {
                    w.write(r.index() + "\t" + r.name() + "\t" + r.network() + "\n");
                }
            }
            List<String> paths = new ArrayList<>(samples.size());
            if (asNpy) {
                int longest = 0;
                for (Sample s : samples) {
                    longest = Math.max(longest, s.length());
                }
                int regions = atlas.size();
                try (NpyWriter.Sink out = NpyWriter.open(dir.resolve(ARRAY_FILE),
                        new int[] {samples.size(), longest, regions})) {
                    for (Sample s : samples) {
                        out.writeFloats(s.values(), 0, s.values().length);
                        out.writeZeros((longest - s.length()) * regions);
                    }
                }
            } else {
                Path series = dir.resolve(SERIES_FOLDER);
                Files.createDirectories(series);
                Set<String> used = new HashSet<>();
                String header = String.join("\t", atlas.names()) + "\n";
                for (Sample s : samples) {
                    String name = fileName(s.id(), used);
                    paths.add(SERIES_FOLDER + "/" + name);
                    writeSeries(series.resolve(name), header, s);
                }
            }
            try (Writer w = newWriter(dir.resolve(SAMPLES_FILE))) {
                w.write("sample\tsubject\tlabel" + (withSplit ? "\tsplit" : "") + (asNpy ? "\tlength" : "\tpath")
                        + "\n");
                for (int i = 0; i < samples.size(); i++) {
                    Sample s = samples.get(i);
                    StringBuilder sb = new StringBuilder();
                    sb.append(s.id()).append('\t').append(s.subject()).append('\t').append(s.label());
                    if (withSplit) {
                        sb.append('\t').append(s.split().label());
                    }
                    sb.append('\t').append(asNpy ? Integer.toString(s.length()) : paths.get(i)).append('\n');
                    w.write(sb.toString());
                }
            }
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write cohort to " + dir + ": " + e.getMessage(), e);
        }
    }

    private static void writeSeries(Path file, String header, Sample s) throws IOException {
        try (Writer w = newWriter(file)) {
            w.write(header);
            float[] v = s.values();
            int regions = s.regions();
            StringBuilder sb = new StringBuilder(regions * 12);
            for (int t = 0; t < s.length(); t++) {
                sb.setLength(0);
                int base = t * regions;
                for (int r = 0; r < regions; r++) {
                    if (r > 0) {
                        sb.append('\t');
                    }
                    sb.append(Float.toString(v[base + r]));
                }
                sb.append('\n');
                w.write(sb.toString());
            }
        }
    }

    private static Writer newWriter(Path file) throws IOException {
        return new BufferedWriter(new OutputStreamWriter(Files.newOutputStream(file),
                StandardCharsets.UTF_8), 1 << 16);
    }

    /** A file name for a sample id, unique (ignoring case) among {@code used}. */
    private static String fileName(String id, Set<String> used) {
        StringBuilder sb = new StringBuilder();
        for (int i = 0; i < id.length() && sb.length() < 120; i++) {
            char c = id.charAt(i);
            boolean ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '.'
                    || c == '_' || c == '-';
            sb.append(ok ? c : '_');
        }
        String base = sb.toString();
        if (base.isEmpty() || base.charAt(0) == '.') {
            base = "_" + base;
        }
        String name = base + ".tsv";
        for (int k = 2; !used.add(name.toLowerCase(Locale.ROOT)); k++) {
            name = base + "_" + k + ".tsv";
        }
        return name;
    }

    private static void requireText(String what, String value, String owner) {
        if (value.isBlank()) {
            throw new IllegalArgumentException(what + " of " + owner + " must not be blank");
        }
        for (int i = 0; i < value.length(); i++) {
            char c = value.charAt(i);
            if (c == '\t' || c == '\n' || c == '\r') {
                throw new IllegalArgumentException(what + " of " + owner + " must not contain tabs or line breaks,"
                        + " found '" + value.replace("\t", "\\t").replace("\n", "\\n").replace("\r", "\\r") + "'");
            }
        }
        if (!value.equals(value.strip())) {
            throw new IllegalArgumentException(what + " of " + owner + " must not start or end with spaces, found '"
                    + value + "'");
        }
    }

    private static void requireFinite(Sample s, Atlas atlas) {
        float[] v = s.values();
        for (int i = 0; i < v.length; i++) {
            if (Float.isNaN(v[i]) || Float.isInfinite(v[i])) {
                throw new IllegalArgumentException("sample '" + s.id() + "': value " + v[i] + " at time point "
                        + (i / s.regions() + 1) + ", region '" + atlas.region(i % s.regions()).name()
                        + "' is not finite; the cohort files hold finite values only");
            }
        }
    }
}
