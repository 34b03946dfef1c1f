package org.cruxset.scoring.cohort;

import java.io.Closeable;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CharsetDecoder;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalInt;

/**
 * A small UTF-8 tab-separated table with a header row, read whole, that remembers the line of every row so
 * errors can point at it; see {@link #open(Path)} for streaming large files.
 */
public final class TsvTable {
    private final Path file;
    private final List<String> header;
    private final Map<String, Integer> columns;
    private final List<String[]> rows;
    private final int[] lines;

    private TsvTable(Path file, List<String> header, Map<String, Integer> columns, List<String[]> rows, int[] lines) {
        this.file = file;
        this.header = header;
        this.columns = columns;
        this.rows = rows;
        this.lines = lines;
    }

    /** Reads a whole table; the header must name every column once, and every row must have as many fields. */
    public static TsvTable read(Path file) {
        try (Cursor c = open(file)) {
            List<String> header = c.header();
            Map<String, Integer> columns = new HashMap<>();
            for (int i = 0; i < header.size(); i++) {
                Integer earlier = columns.put(header.get(i), i);
                if (earlier != null) {
                    throw new CohortFormatException(file, 1, i + 1, "column '" + header.get(i)
                            + "' appears twice in the header, at columns " + (earlier + 1) + " and " + (i + 1)
                            + "; expected each column name once");
                }
            }
            List<String[]> rows = new ArrayList<>();
            int[] lines = new int[16];
            String[] row;
            while ((row = c.next()) != null) {
                if (rows.size() == lines.length) {
                    lines = Arrays.copyOf(lines, lines.length * 2);
                }
                lines[rows.size()] = c.line();
                rows.add(row);
            }
            return new TsvTable(file, header, Map.copyOf(columns), List.copyOf(rows),
                    Arrays.copyOf(lines, rows.size()));
        }
    }

    /** Opens a table for reading row by row; the header is read at once. */
    public static Cursor open(Path file) {
        return new Cursor(file);
    }

    /** The file the table was read from. */
    public Path file() {
        return file;
    }

    /** Column names in file order, trimmed. */
    public List<String> header() {
        return header;
    }

    /** Number of data rows. */
    public int rowCount() {
        return rows.size();
    }

    /** The 1-based line number of data row {@code row} (0-based). */
    public int line(int row) {
        return lines[row];
    }

    /** The raw field of data row {@code row} in column {@code column} (both 0-based). */
    public String get(int row, int column) {
        return rows.get(row)[column];
    }

    /** The 0-based index of a column, if the header has it. */
    public OptionalInt findColumn(String name) {
        Integer c = columns.get(name);
        return c == null ? OptionalInt.empty() : OptionalInt.of(c);
    }

    /** The 0-based index of a column, or an error naming the file, the missing column and the columns found. */
    public int column(String name) {
        Integer c = columns.get(name);
        if (c == null) {
            throw new CohortFormatException(file, 1, 0, "missing column '" + name + "'; found columns "
                    + String.join(", ", header));
        }
        return c;
    }

    /** The 0-based indices of several required columns, or an error naming the first missing one. */
    public int[] requireColumns(String... names) {
        int[] out = new int[names.length];
        for (int i = 0; i < names.length; i++) {
            Integer c = columns.get(names[i]);
            if (c == null) {
                throw new CohortFormatException(file, 1, 0, "missing column '" + names[i] + "'; expected columns "
                        + String.join(", ", names) + "; found columns " + String.join(", ", header));
            }
            out[i] = c;
        }
        return out;
    }

    /** An error at data row {@code row} and column {@code column} (both 0-based; column -1 for the whole row). */
    public CohortFormatException error(int row, int column, String message) {
        return new CohortFormatException(file, lines[row], column + 1, message);
    }

    /** Reads a tab-separated file one row at a time, checking that every row has as many fields as the header. */
    public static final class Cursor implements Closeable {
        private final Path file;
        private final InputStream in;
        private final byte[] chunk = new byte[1 << 16];
        private final CharsetDecoder decoder = StandardCharsets.UTF_8.newDecoder()
                .onMalformedInput(CodingErrorAction.REPORT).onUnmappableCharacter(CodingErrorAction.REPORT);
        private final List<String> header;
        private byte[] lineBytes = new byte[256];
        private int chunkPos;
        private int chunkLimit;
        private boolean atEnd;
        private int line;
        private int firstEmptyLine;

        private Cursor(Path file) {
            this.file = file;
            try {
                this.in = Files.newInputStream(file);
            } catch (NoSuchFileException e) {
                throw new CohortFormatException(file, "file not found; expected a tab-separated file with a header"
                        + " row");
            } catch (IOException e) {
                throw new UncheckedIOException("cannot open " + file + ": " + e.getMessage(), e);
            }
            try {
                String first = readLine();
                if (first == null) {
                    throw new CohortFormatException(file, "empty file; expected a tab-separated header row");
                }
                if (!first.isEmpty() && first.charAt(0) == '\uFEFF') {
                    first = first.substring(1);
                }
                if (first.isBlank()) {
                    throw new CohortFormatException(file, 1, 0, "empty first line; expected a tab-separated header"
                            + " row of column names");
                }
                String[] names = split(first, count(first));
                for (int i = 0; i < names.length; i++) {
                    names[i] = names[i].strip();
                    if (names[i].isEmpty()) {
                        throw new CohortFormatException(file, 1, i + 1, "blank column name in the header;"
                                + " expected a name for every column (is there a stray tab?)");
                    }
                }
                this.header = List.of(names);
            } catch (RuntimeException e) {
                closeQuietly();
                throw e;
            }
        }

        /** The file being read. */
        public Path file() {
            return file;
        }

        /** Column names in file order, trimmed. */
        public List<String> header() {
            return header;
        }

        /** The 1-based line number of the row last returned by {@link #next()} (1 for the header). */
        public int line() {
            return line;
        }

        /** The next data row's raw fields, or null at the end; empty lines are allowed only at the end. */
        public String[] next() {
            while (true) {
                String raw = readLine();
                if (raw == null) {
                    return null;
                }
                if (raw.isEmpty()) {
                    if (firstEmptyLine == 0) {
                        firstEmptyLine = line;
                    }
                    continue;
                }
                if (firstEmptyLine != 0) {
                    throw new CohortFormatException(file, firstEmptyLine, 0, "empty line; expected "
                            + header.size() + " fields (empty lines are allowed only at the end of the file)");
                }
                int n = count(raw);
                if (n != header.size()) {
                    if (n > header.size()) {
                        throw new CohortFormatException(file, line, header.size() + 1, "expected " + header.size()
                                + " fields, found " + n + " (the header has " + header.size() + " columns)");
                    }
                    throw new CohortFormatException(file, line, n + 1, "expected " + header.size()
                            + " fields, found " + n + "; column " + (n + 1) + " '" + header.get(n) + "' is missing");
                }
                return split(raw, n);
            }
        }

        /** An error at the current line and a 0-based column (-1 for the whole line). */
        public CohortFormatException error(int column, String message) {
            return new CohortFormatException(file, line, column + 1, message);
        }

        /** The next line without its terminator ('\n' or "\r\n"), decoded as UTF-8, or null at the end. */
        private String readLine() {
            if (atEnd) {
                return null;
            }
            int n = 0;
            boolean ascii = true;
            boolean newline = false;
            try {
                while (!newline) {
                    if (chunkPos == chunkLimit) {
                        chunkLimit = in.read(chunk);
                        chunkPos = 0;
                        if (chunkLimit <= 0) {
                            chunkLimit = 0;
                            atEnd = true;
                            break;
                        }
                    }
                    int start = chunkPos;
                    int end = start;
                    while (end < chunkLimit) {
                        byte c = chunk[end];
                        if (c == '\n') {
                            newline = true;
                            break;
                        }
                        if (c < 0) {
                            ascii = false;
                        }
                        end++;
                    }
                    int len = end - start;
                    if (n + len > lineBytes.length) {
                        lineBytes = Arrays.copyOf(lineBytes, Math.max(lineBytes.length * 2, n + len));
                    }
                    System.arraycopy(chunk, start, lineBytes, n, len);
                    n += len;
                    chunkPos = newline ? end + 1 : end;
                }
            } catch (IOException e) {
                throw new UncheckedIOException("cannot read " + file + ": " + e.getMessage(), e);
            }
            if (!newline && n == 0) {
                return null;
            }
            line++;
            if (n > 0 && lineBytes[n - 1] == '\r') {
                n--;
            }
            if (ascii) {
                return new String(lineBytes, 0, n, StandardCharsets.ISO_8859_1);
            }
            try {
                return decoder.decode(ByteBuffer.wrap(lineBytes, 0, n)).toString();
            } catch (CharacterCodingException e) {
                throw new CohortFormatException(file, line, 0, "not valid UTF-8 text; expected a UTF-8"
                        + " tab-separated file");
            }
        }

        private static int count(String s) {
            int n = 1;
            for (int i = s.indexOf('\t'); i >= 0; i = s.indexOf('\t', i + 1)) {
                n++;
            }
            return n;
        }

        private static String[] split(String s, int n) {
            String[] out = new String[n];
            int start = 0;
            for (int i = 0; i < n - 1; i++) {
                int tab = s.indexOf('\t', start);
                out[i] = s.substring(start, tab);
                start = tab + 1;
            }
            out[n - 1] = s.substring(start);
            return out;
        }

        private void closeQuietly() {
            try {
                in.close();
            } catch (IOException ignored) {
                // the original failure is more useful
            }
        }

        @Override
        public void close() {
            try {
                in.close();
            } catch (IOException e) {
                throw new UncheckedIOException("cannot close " + file + ": " + e.getMessage(), e);
            }
        }
    }
}
