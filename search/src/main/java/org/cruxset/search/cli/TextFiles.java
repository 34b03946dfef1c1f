package org.cruxset.search.cli;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

/** Writing the TSV files commands leave in their output folder. */
final class TextFiles {
    /** What writes a file's text. */
    interface Body {
        void write(Writer w) throws IOException;
    }

    private TextFiles() {
    }

    /** Writes {@code file} (UTF-8, folders created), naming the file when it cannot. */
    static void write(Path file, Body body) {
        try {
            Files.createDirectories(file.toAbsolutePath().getParent());
            try (Writer w = Files.newBufferedWriter(file, StandardCharsets.UTF_8)) {
                body.write(w);
            }
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + file + ": " + e.getMessage(), e);
        }
    }

    /** A number for a TSV cell: six significant digits, NA for NaN. */
    static String num(double v) {
        return Double.isNaN(v) ? "NA" : String.format(Locale.ROOT, "%.6g", v);
    }
}
