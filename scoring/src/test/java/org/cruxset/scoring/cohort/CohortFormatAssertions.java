package org.cruxset.scoring.cohort;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.function.Executable;

/** Shared assertions and file helpers for the cohort format tests. */
final class CohortFormatAssertions {
    private CohortFormatAssertions() {
    }

    /** Asserts a {@link CohortFormatException} at this file, line and column whose message holds every fragment. */
    static CohortFormatException assertFormatError(Executable call, Path file, int line, int column,
            String... fragments) {
        CohortFormatException e = assertThrows(CohortFormatException.class, call);
        String message = e.getMessage();
        assertEquals(file, e.file(), () -> "file of: " + message);
        assertEquals(line, e.line(), () -> "line of: " + message);
        assertEquals(column, e.column(), () -> "column of: " + message);
        String where = file + (line > 0 ? ":" + line + (column > 0 ? ":" + column : "") : "") + ": ";
        assertTrue(message.startsWith(where), () -> "message should start with '" + where + "': " + message);
        for (String f : fragments) {
            assertTrue(message.contains(f), () -> "message lacks '" + f + "': " + message);
        }
        return e;
    }

    /** Writes UTF-8 text to {@code dir/relative}, creating folders, and returns the path. */
    static Path text(Path dir, String relative, String content) {
        Path p = dir.resolve(relative);
        try {
            if (p.getParent() != null) {
                Files.createDirectories(p.getParent());
            }
            Files.writeString(p, content, StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return p;
    }

    /** Writes raw bytes to {@code dir/relative} and returns the path. */
    static Path bytes(Path dir, String relative, byte[] content) {
        Path p = dir.resolve(relative);
        try {
            if (p.getParent() != null) {
                Files.createDirectories(p.getParent());
            }
            Files.write(p, content);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return p;
    }

    /** Joins lines with '\n' and ends with a newline. */
    static String lines(String... lines) {
        return String.join("\n", lines) + "\n";
    }
}
