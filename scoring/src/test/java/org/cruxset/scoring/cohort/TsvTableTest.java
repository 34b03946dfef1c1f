package org.cruxset.scoring.cohort;

import static org.cruxset.scoring.cohort.CohortFormatAssertions.assertFormatError;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.bytes;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.text;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class TsvTableTest {
    @TempDir
    Path dir;

    @Test
    void readsRowsWithLineNumbersTrimmingCarriageReturnsAndTrailingEmptyLines() {
        Path f = text(dir, "t.tsv", "\uFEFFa\t b \tc\r\n1\t2\t3\r\n4\t\t6\r\n\r\n\n");
        TsvTable t = TsvTable.read(f);
        assertEquals(List.of("a", "b", "c"), t.header());
        assertEquals(2, t.rowCount());
        assertEquals(2, t.line(0));
        assertEquals(3, t.line(1));
        assertEquals("3", t.get(0, 2));
        assertEquals("", t.get(1, 1));
        assertEquals(1, t.column("b"));
        assertTrue(t.findColumn("z").isEmpty());
        assertArrayEquals(new int[] {2, 0}, t.requireColumns("c", "a"));
    }

    @Test
    void raggedRowWithTooFewFieldsIsAnError() {
        Path f = text(dir, "t.tsv", "a\tb\tc\n1\t2\t3\n4\t5\n");
        assertFormatError(() -> TsvTable.read(f), f, 3, 3, "expected 3 fields, found 2", "column 3 'c' is missing");
    }

    @Test
    void raggedRowWithTooManyFieldsIsAnError() {
        Path f = text(dir, "t.tsv", "a\tb\n1\t2\t3\n");
        assertFormatError(() -> TsvTable.read(f), f, 2, 3, "expected 2 fields, found 3");
    }

    @Test
    void emptyLineInTheMiddleIsAnError() {
        Path f = text(dir, "t.tsv", "a\tb\n1\t2\n\n3\t4\n");
        assertFormatError(() -> TsvTable.read(f), f, 3, 0, "empty line; expected 2 fields");
    }

    @Test
    void missingColumnNamesTheColumnsFound() {
        Path f = text(dir, "t.tsv", "a\tb\n1\t2\n");
        TsvTable t = TsvTable.read(f);
        assertFormatError(() -> t.column("label"), f, 1, 0, "missing column 'label'", "found columns a, b");
        assertFormatError(() -> t.requireColumns("a", "label"), f, 1, 0, "missing column 'label'",
                "expected columns a, label", "found columns a, b");
    }

    @Test
    void duplicateColumnIsAnError() {
        Path f = text(dir, "t.tsv", "a\tb\ta\n1\t2\t3\n");
        assertFormatError(() -> TsvTable.read(f), f, 1, 3, "column 'a' appears twice", "columns 1 and 3");
    }

    @Test
    void blankColumnNameIsAnError() {
        Path f = text(dir, "t.tsv", "a\tb\t\n1\t2\t3\n");
        assertFormatError(() -> TsvTable.read(f), f, 1, 3, "blank column name");
    }

    @Test
    void emptyFileIsAnError() {
        Path f = text(dir, "t.tsv", "");
        assertFormatError(() -> TsvTable.read(f), f, 0, 0, "empty file; expected a tab-separated header row");
    }

    @Test
    void invalidUtf8IsAnError() {
        Path f = bytes(dir, "t.tsv", new byte[] {'a', '\n', (byte) 0xff, (byte) 0xfe, '\n'});
        assertFormatError(() -> TsvTable.read(f), f, 2, 0, "not valid UTF-8");
    }

    @Test
    void missingFileIsAnError() {
        Path f = dir.resolve("nope.tsv");
        assertFormatError(() -> TsvTable.read(f), f, 0, 0, "file not found");
    }
}
