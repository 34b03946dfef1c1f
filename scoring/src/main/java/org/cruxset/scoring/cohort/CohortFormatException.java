package org.cruxset.scoring.cohort;

import java.nio.file.Path;

/** Bad cohort or atlas input; the message names the file, the line and column where known, and what was expected. */
public final class CohortFormatException extends RuntimeException {
    private static final long serialVersionUID = 1L;
    private final Path file;
    private final int line;
    private final int column;

    /** A problem at a line and column (1-based; 0 when not applicable). */
    public CohortFormatException(Path file, int line, int column, String message) {
        super(format(file, line, column, message));
        this.file = file;
        this.line = line;
        this.column = column;
    }

    /** A problem with the file as a whole. */
    public CohortFormatException(Path file, String message) {
        this(file, 0, 0, message);
    }

    private static String format(Path file, int line, int column, String message) {
        StringBuilder sb = new StringBuilder();
        sb.append(file);
        if (line > 0) {
            sb.append(':').append(line);
            if (column > 0) {
                sb.append(':').append(column);
            }
        }
        return sb.append(": ").append(message).toString();
    }

    public Path file() {
        return file;
    }

    public int line() {
        return line;
    }

    public int column() {
        return column;
    }
}
