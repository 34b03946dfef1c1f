package org.cruxset.scoring.cohort;

import static org.cruxset.scoring.cohort.CohortFormatAssertions.assertFormatError;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.lines;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.text;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class CohortFilesTest {
    /** Atlas rows out of index order; input order is PFC (0), AMY_L (1), AMY_R (2), V1 (3). */
    static final String ATLAS = lines(
            "index\tname\tnetwork\tcolour",
            "3\tV1\tVisual\tred",
            "1\tAMY_L\tLimbic\tblue",
            "2\tAMY_R\tLimbic\tblue",
            "0\tPFC\tDefault\tgreen");

    static final String MANIFEST = lines(
            "sample\tsubject\tlabel\tsplit\tpath",
            "s1\tsub1\tA\ttrain\tseries/s1.tsv",
            "s2\tsub2\tA\tvalidation\tseries/s2.tsv",
            "s3\tsub3\tB\ttest\tseries/s3.tsv",
            "s4\tsub4\tB\ttrain\tseries/s4.tsv");

    @TempDir
    Path dir;

    /** Writes the standard four-sample TSV cohort; s1's header is in another order than the atlas. */
    Path cohort() {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", MANIFEST);
        text(dir, "series/s1.tsv", lines("V1\tPFC\tAMY_R\tAMY_L", "3\t0\t2\t1", "13\t10\t12\t11", "23\t20\t22\t21"));
        text(dir, "series/s2.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "0.5\t1.5\t2.5\t3.5", "-1e-3\t0\t-0\t1E3"));
        text(dir, "series/s3.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t1\t1\t1"));
        text(dir, "series/s4.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t2\t3\t4", "5\t6\t7\t8", "9\t10\t11\t12",
                "13\t14\t15\t16"));
        return dir;
    }

    // ------------------------------------------------------------------ reading and round trips

    @Test
    void readsTsvFormReorderingColumnsIntoAtlasOrderWithVariableLengths() {
        Cohort c = CohortFiles.read(cohort());
        assertEquals(List.of("PFC", "AMY_L", "AMY_R", "V1"), c.atlas().names());
        assertEquals(List.of("Default", "Limbic", "Visual"), List.copyOf(c.atlas().networks().keySet()));
        assertEquals(4, c.samples().size());
        Sample s1 = c.samples().get(0);
        assertEquals("s1", s1.id());
        assertEquals("sub1", s1.subject());
        assertEquals("A", s1.label());
        assertEquals(Split.TRAIN, s1.split());
        assertEquals(3, s1.length());
        assertArrayEquals(new float[] {0, 1, 2, 3, 10, 11, 12, 13, 20, 21, 22, 23}, s1.values());
        assertEquals(Split.VALIDATION, c.samples().get(1).split());
        assertArrayEquals(new float[] {0.5f, 1.5f, 2.5f, 3.5f, -1e-3f, 0f, -0f, 1000f}, c.samples().get(1).values());
        assertEquals(Split.TEST, c.samples().get(2).split());
        assertEquals(1, c.samples().get(2).length());
        assertEquals(4, c.samples().get(3).length());
        assertEquals(List.of("A", "B"), c.classes());
    }

    @Test
    void readsFromManifestPathAndFromSeparateAtlas() throws IOException {
        cohort();
        Cohort fromFolder = CohortFiles.read(dir);
        Cohort fromManifest = CohortFiles.read(dir.resolve("samples.tsv"));
        Path elsewhere = Files.createDirectories(dir.resolve("atlases")).resolve("my-atlas.tsv");
        Files.move(dir.resolve("regions.tsv"), elsewhere);
        Cohort separate = CohortFiles.read(elsewhere, dir.resolve("samples.tsv"));
        assertSameCohort(fromFolder, fromManifest);
        assertSameCohort(fromFolder, separate);
    }

    @Test
    void absoluteSamplePathsAndMissingSplitColumn() {
        cohort();
        String m = lines("sample\tsubject\tlabel\tpath",
                "s1\tsub1\tA\t" + dir.resolve("series/s1.tsv").toAbsolutePath(),
                "s2\tsub1\tA\t../series/s2.tsv",
                "s3\tsub2\tB\t../series/s3.tsv",
                "s4\tsub2\tB\t../series/s4.tsv");
        Path manifest = text(dir, "other/manifest.tsv", m);
        text(dir, "other/regions.tsv", ATLAS);
        Cohort c = CohortFiles.read(manifest);
        assertEquals(4, c.samples().size());
        for (Sample s : c.samples()) {
            assertEquals(Split.UNASSIGNED, s.split());
        }
        assertEquals(List.of("sub1", "sub2"), c.subjects());
    }

    @Test
    void tsvRoundTripIsExact() throws IOException {
        Cohort original = randomCohort(11, true);
        Path out = dir.resolve("out");
        CohortFiles.write(original, out, false);
        assertTrue(Files.isRegularFile(out.resolve("series/s_0.tsv")));
        assertTrue(Files.readString(out.resolve("samples.tsv")).startsWith("sample\tsubject\tlabel\tsplit\tpath\n"));
        assertSameCohort(original, CohortFiles.read(out));
    }

    @Test
    void npyRoundTripIsExactWithPaddingAndLengthColumn() throws IOException {
        Cohort original = randomCohort(12, true);
        Path out = dir.resolve("out");
        CohortFiles.write(original, out, true);
        assertFalse(Files.exists(out.resolve("series")));
        assertTrue(Files.readString(out.resolve("samples.tsv")).startsWith("sample\tsubject\tlabel\tsplit\tlength\n"));
        int longest = 0;
        for (Sample s : original.samples()) {
            longest = Math.max(longest, s.length());
        }
        NpyArray a = NpyReader.read(out.resolve("samples.npy"));
        assertArrayEquals(new int[] {original.samples().size(), longest, original.atlas().size()}, a.shape());
        Sample first = original.samples().get(0);
        if (first.length() < longest) {
            assertEquals(0f, a.get(0, longest - 1, 0));
        }
        assertSameCohort(original, CohortFiles.read(out));
    }

    @Test
    void unassignedCohortIsWrittenWithoutSplitColumnAndReadsBack() throws IOException {
        Cohort original = randomCohort(13, false);
        Path out = dir.resolve("out");
        CohortFiles.write(original, out, false);
        assertTrue(Files.readString(out.resolve("samples.tsv")).startsWith("sample\tsubject\tlabel\tpath\n"));
        assertSameCohort(original, CohortFiles.read(out));
        Path npy = dir.resolve("npy");
        CohortFiles.write(original, npy, true);
        assertSameCohort(original, CohortFiles.read(npy));
    }

    @Test
    void writeGivesUnsafeSampleIdsSafeUniqueFileNames() {
        Atlas atlas = CohortFiles.readAtlas(text(dir, "regions.tsv", ATLAS));
        List<Sample> samples = List.of(
                sample("a/b", "x", "A", 1, 4), sample("a_b", "x", "A", 2, 4),
                sample("..", "y", "B", 1, 4), sample("A/B", "y", "B", 3, 4));
        Cohort c = new Cohort(atlas, samples);
        Path out = dir.resolve("out");
        CohortFiles.write(c, out, false);
        assertSameCohort(c, CohortFiles.read(out));
    }

    @Test
    void writeRefusesNonFiniteValuesAndTabsInNames() {
        Atlas atlas = CohortFiles.readAtlas(text(dir, "regions.tsv", ATLAS));
        Sample bad = sample("s", "x", "A", 2, 4).withValues(new float[] {0, 0, 0, 0, 0, Float.NaN, 0, 0});
        Cohort c = new Cohort(atlas, List.of(bad, sample("t", "x", "A", 1, 4)));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> CohortFiles.write(c, dir.resolve("o"), false));
        assertTrue(e.getMessage().contains("sample 's'") && e.getMessage().contains("time point 2")
                && e.getMessage().contains("region 'AMY_L'"), e.getMessage());
        Cohort tabs = new Cohort(atlas, List.of(sample("s\t1", "x", "A", 1, 4), sample("t", "x", "A", 1, 4)));
        assertThrows(IllegalArgumentException.class, () -> CohortFiles.write(tabs, dir.resolve("o2"), true));
    }

    @Test
    void npyFormReadsSamplesInManifestOrderAndIgnoresPaddingEvenIfNaN() {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", lines("sample\tsubject\tlabel\tlength", "a\tx\tA\t2", "b\tx\tA\t3", "c\ty\tB\t1",
                "d\ty\tB\t3"));
        float[] data = new float[4 * 3 * 4];
        for (int i = 0; i < data.length; i++) {
            data[i] = i;
        }
        for (int r = 0; r < 4; r++) {
            data[(0 * 3 + 2) * 4 + r] = Float.NaN;
            data[(2 * 3 + 1) * 4 + r] = Float.POSITIVE_INFINITY;
            data[(2 * 3 + 2) * 4 + r] = Float.NaN;
        }
        NpyWriter.write(dir.resolve("samples.npy"), new int[] {4, 3, 4}, data);
        Cohort c = CohortFiles.read(dir);
        assertEquals(2, c.samples().get(0).length());
        assertArrayEquals(new float[] {0, 1, 2, 3, 4, 5, 6, 7}, c.samples().get(0).values());
        assertEquals(3, c.samples().get(1).length());
        assertEquals(12f, c.samples().get(1).at(0, 0));
        assertArrayEquals(new float[] {24, 25, 26, 27}, c.samples().get(2).values());
        assertEquals(47f, c.samples().get(3).at(2, 3));
    }

    @Test
    void npyFormWithoutLengthColumnUsesFullLength() {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", lines("sample\tsubject\tlabel", "a\tx\tA", "b\tx\tA"));
        NpyWriter.write(dir.resolve("samples.npy"), new int[] {2, 5, 4}, new float[40]);
        Cohort c = CohortFiles.read(dir);
        assertEquals(5, c.samples().get(0).length());
        assertEquals(5, c.samples().get(1).length());
    }

    @Test
    void nearestNamesUseLevenshteinDistance() {
        Atlas atlas = CohortFiles.readAtlas(text(dir, "regions.tsv", ATLAS));
        assertEquals(3, org.cruxset.scoring.Names.levenshtein("kitten", "sitting"));
        assertEquals("'AMY_L', 'AMY_R', 'PFC'", CohortFiles.nearest(atlas, "amy_l"));
    }

    // ------------------------------------------------------------------ atlas errors

    @Test
    void atlasNonIntegerIndex() {
        Path f = text(dir, "regions.tsv", lines("index\tname\tnetwork", "0\tA\tN", "1.5\tB\tN"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 3, 1, "index '1.5' is not an integer",
                "expected a whole number");
    }

    @Test
    void atlasDuplicateIndex() {
        Path f = text(dir, "regions.tsv", lines("index\tname\tnetwork", "0\tA\tN", "1\tB\tN", "0\tC\tN"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 4, 1, "duplicate index 0, also on line 2",
                "expected each index once");
    }

    @Test
    void atlasDuplicateName() {
        Path f = text(dir, "regions.tsv", lines("network\tname\tindex", "N\tA\t0", "N\tA\t1"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 3, 2, "duplicate region name 'A', also on line 2",
                "expected each name once");
    }

    @Test
    void atlasBlankName() {
        Path f = text(dir, "regions.tsv", lines("index\tname\tnetwork", "0\tA\tN", "1\t \tN"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 3, 2, "blank name; expected a region name");
    }

    @Test
    void atlasBlankNetwork() {
        Path f = text(dir, "regions.tsv", lines("index\tname\tnetwork", "0\tA\t", "1\tB\tN"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 2, 3, "blank network for region 'A'",
                "expected a network name");
    }

    @Test
    void atlasMissingColumn() {
        Path f = text(dir, "regions.tsv", lines("index\tname", "0\tA"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 1, 0, "missing column 'network'",
                "expected columns index, name, network", "found columns index, name");
    }

    @Test
    void atlasNoRows() {
        Path f = text(dir, "regions.tsv", lines("index\tname\tnetwork"));
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 0, 0, "no regions", "expected one row per region");
    }

    @Test
    void atlasMissingFile() {
        Path f = dir.resolve("regions.tsv");
        assertFormatError(() -> CohortFiles.readAtlas(f), f, 0, 0, "file not found",
                "expected an atlas TSV with columns index, name, network");
    }

    // ------------------------------------------------------------------ location and manifest errors

    @Test
    void locationDoesNotExist() {
        Path f = dir.resolve("nowhere");
        assertFormatError(() -> CohortFiles.read(f), f, 0, 0, "no such file or folder",
                "expected a cohort folder holding regions.tsv and samples.tsv");
    }

    @Test
    void folderWithoutManifest() {
        text(dir, "regions.tsv", ATLAS);
        assertFormatError(() -> CohortFiles.read(dir), dir.resolve("samples.tsv"), 0, 0, "file not found",
                "expected the sample manifest");
    }

    @Test
    void manifestWithoutAtlasBesideIt() {
        Path m = text(dir, "samples.tsv", MANIFEST);
        assertFormatError(() -> CohortFiles.read(m), dir.resolve("regions.tsv"), 0, 0, "file not found",
                "expected the atlas beside the manifest", "or give the atlas separately");
    }

    @Test
    void manifestMissingColumn() {
        cohort();
        Path m = text(dir, "samples.tsv", lines("sample\tsubject\tpath", "s1\tsub1\tseries/s1.tsv"));
        assertFormatError(() -> CohortFiles.read(dir), m, 1, 0, "missing column 'label'",
                "expected columns sample, subject, label", "found columns sample, subject, path");
    }

    @Test
    void manifestNoRows() {
        cohort();
        Path m = text(dir, "samples.tsv", lines("sample\tsubject\tlabel\tpath"));
        assertFormatError(() -> CohortFiles.read(dir), m, 0, 0, "no samples", "expected one row per sample");
    }

    @Test
    void manifestBadSplitValue() {
        cohort();
        Path m = text(dir, "samples.tsv", MANIFEST.replace("validation", "valid"));
        assertFormatError(() -> CohortFiles.read(dir), m, 3, 4, "split 'valid' is not allowed",
                "expected one of train, validation, test");
    }

    @Test
    void manifestRaggedRow() {
        cohort();
        Path m = text(dir, "samples.tsv", MANIFEST.replace("s3\tsub3\tB\ttest", "s3\tsub3\tB"));
        assertFormatError(() -> CohortFiles.read(dir), m, 4, 5, "expected 5 fields, found 4");
    }

    @Test
    void manifestBlankSampleId() {
        cohort();
        Path m = text(dir, "samples.tsv", MANIFEST.replace("s2\tsub2", " \tsub2"));
        assertFormatError(() -> CohortFiles.read(dir), m, 3, 1, "blank sample id; expected a non-empty sample id");
    }

    @Test
    void manifestDuplicateSampleIds() {
        cohort();
        Path m = text(dir, "samples.tsv", MANIFEST.replace("s4\tsub4", "s2\tsub4"));
        assertFormatError(() -> CohortFiles.read(dir), m, 5, 1, "duplicate sample id 's2' on lines 3 and 5",
                "expected each sample id once");
    }

    @Test
    void manifestLabelWithFewerThanTwoSamples() {
        cohort();
        Path m = text(dir, "samples.tsv", MANIFEST.replace("s3\tsub3\tB", "s3\tsub3\tC"));
        assertFormatError(() -> CohortFiles.read(dir), m, 4, 3, "label 'C' has only 1 sample (line 4)",
                "expected at least 2 samples per label");
    }

    @Test
    void manifestMissingSampleFile() throws IOException {
        cohort();
        Files.delete(dir.resolve("series/s3.tsv"));
        Path m = dir.resolve("samples.tsv");
        assertFormatError(() -> CohortFiles.read(dir), m, 4, 5, "sample file not found: " + dir.resolve("series/s3.tsv"),
                "expected a TSV of time points x regions");
    }

    @Test
    void manifestLengthDisagreesWithTsvRows() {
        cohort();
        String m = lines("sample\tsubject\tlabel\tpath\tlength", "s1\tx\tA\tseries/s1.tsv\t3",
                "s2\tx\tA\tseries/s2.tsv\t5", "s3\ty\tB\tseries/s3.tsv\t1", "s4\ty\tB\tseries/s4.tsv\t4");
        Path f = text(dir, "samples.tsv", m);
        assertFormatError(() -> CohortFiles.read(dir), f, 3, 5, "length 5 does not match the 2 time points",
                "expected the length column to equal the number of data rows");
    }

    // ------------------------------------------------------------------ series TSV errors

    @Test
    void seriesNaNValue() {
        cohort();
        Path f = text(dir, "series/s4.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t2\t3\t4", "5\tNaN\t7\t8"));
        assertFormatError(() -> CohortFiles.read(dir), f, 3, 2, "value 'NaN' for region 'AMY_L' at time point 2",
                "is not finite; expected a finite number");
    }

    @Test
    void seriesInfValue() {
        cohort();
        Path f = text(dir, "series/s1.tsv", lines("V1\tPFC\tAMY_R\tAMY_L", "3\t0\t2\t1", "-inf\t1\t1\t1"));
        assertFormatError(() -> CohortFiles.read(dir), f, 3, 1, "value '-inf' for region 'V1' at time point 2",
                "is not finite");
    }

    @Test
    void seriesValueOverflowingFloat() {
        cohort();
        Path f = text(dir, "series/s3.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t1\t1e39\t1"));
        assertFormatError(() -> CohortFiles.read(dir), f, 2, 3, "value '1e39' for region 'AMY_R' at time point 1",
                "overflows float", "expected a finite number");
    }

    @Test
    void seriesNonNumericValue() {
        cohort();
        Path f = text(dir, "series/s3.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t1,5\t1\t1"));
        assertFormatError(() -> CohortFiles.read(dir), f, 2, 2, "'1,5' for region 'AMY_L' at time point 1",
                "is not a number; expected a decimal number");
    }

    @Test
    void seriesEmptyField() {
        cohort();
        Path f = text(dir, "series/s3.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t1\t1\t"));
        assertFormatError(() -> CohortFiles.read(dir), f, 2, 4, "empty field for region 'V1' at time point 1",
                "is not a number");
    }

    @Test
    void seriesRaggedRow() {
        cohort();
        Path f = text(dir, "series/s2.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t2\t3\t4", "1\t2\t3"));
        assertFormatError(() -> CohortFiles.read(dir), f, 3, 4, "expected 4 fields, found 3",
                "column 4 'V1' is missing");
    }

    @Test
    void seriesEmptyLineBetweenRows() {
        cohort();
        Path f = text(dir, "series/s2.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "1\t2\t3\t4", "", "1\t2\t3\t4"));
        assertFormatError(() -> CohortFiles.read(dir), f, 3, 0, "empty line; expected 4 fields");
    }

    @Test
    void seriesUnknownRegionSuggestsNearestNames() {
        cohort();
        Path f = text(dir, "series/s2.tsv", lines("PFC\tAMYG_L\tAMY_R\tV1", "1\t2\t3\t4"));
        assertFormatError(() -> CohortFiles.read(dir), f, 1, 2, "unknown region 'AMYG_L'",
                "expected a region of the atlas " + dir.resolve("regions.tsv"),
                "nearest valid names: 'AMY_L', 'AMY_R', 'PFC'");
    }

    @Test
    void seriesDuplicatedRegion() {
        cohort();
        Path f = text(dir, "series/s2.tsv", lines("PFC\tAMY_L\tAMY_R\tPFC", "1\t2\t3\t4"));
        assertFormatError(() -> CohortFiles.read(dir), f, 1, 4, "region 'PFC' appears twice in the header",
                "at columns 1 and 4", "expected each atlas region once");
    }

    @Test
    void seriesHeaderMissingAtlasRegions() {
        cohort();
        Path f = text(dir, "series/s2.tsv", lines("PFC\tV1", "1\t2"));
        assertFormatError(() -> CohortFiles.read(dir), f, 1, 0, "the header lacks 2 of the 4 atlas regions:",
                "'AMY_L', 'AMY_R'", "expected exactly the regions of " + dir.resolve("regions.tsv"));
    }

    @Test
    void seriesHeaderMissingManyRegionsListsTenAndCountsTheRest() {
        StringBuilder atlas = new StringBuilder("index\tname\tnetwork\n");
        for (int i = 0; i < 15; i++) {
            atlas.append(i).append("\tR").append(i).append("\tN\n");
        }
        text(dir, "regions.tsv", atlas.toString());
        text(dir, "samples.tsv", lines("sample\tsubject\tlabel\tpath", "a\tx\tA\ta.tsv", "b\tx\tA\ta.tsv"));
        Path f = text(dir, "a.tsv", lines("R3\tR7", "1\t2"));
        assertFormatError(() -> CohortFiles.read(dir), f, 1, 0, "lacks 13 of the 15 atlas regions",
                "'R0', 'R1', 'R2', 'R4', 'R5', 'R6', 'R8', 'R9', 'R10', 'R11' and 3 more");
    }

    @Test
    void seriesWithoutTimePoints() {
        cohort();
        Path f = text(dir, "series/s3.tsv", lines("PFC\tAMY_L\tAMY_R\tV1", "", ""));
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "no time points",
                "expected one row per time point");
    }

    @Test
    void seriesEmptyFile() {
        cohort();
        Path f = text(dir, "series/s3.tsv", "");
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "empty file", "expected a tab-separated header row");
    }

    // ------------------------------------------------------------------ array form errors

    static Path writeNpy(Path file, int[] shape, float[] data) {
        NpyWriter.write(file, shape, data);
        return file;
    }

    Path npyCohort(String manifest, int[] shape) {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", manifest);
        float[] data = new float[(int) NpyArray.elementCount(shape)];
        return writeNpy(dir.resolve("samples.npy"), shape, data);
    }

    static final String NPY_MANIFEST = lines("sample\tsubject\tlabel\tlength", "a\tx\tA\t2", "b\tx\tA\t3",
            "c\ty\tB\t1", "d\ty\tB\t3");

    @Test
    void npyMissingArrayFile() {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", NPY_MANIFEST);
        assertFormatError(() -> CohortFiles.read(dir), dir.resolve("samples.npy"), 0, 0, "file not found",
                "has no 'path' column", "samples x time x regions");
    }

    @Test
    void npySampleCountDiffersFromManifestRows() {
        Path f = npyCohort(NPY_MANIFEST, new int[] {3, 3, 4});
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "the array holds 3 samples (shape (3, 3, 4))",
                "has 4 sample rows", "expected one array sample per manifest row");
    }

    @Test
    void npyRegionCountDiffersFromAtlas() {
        Path f = npyCohort(NPY_MANIFEST, new int[] {4, 3, 5});
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "the array holds 5 regions (shape (4, 3, 5))",
                "the atlas " + dir.resolve("regions.tsv") + " has 4", "atlas regions in index order");
    }

    @Test
    void npyNotThreeDimensional() {
        Path f = npyCohort(NPY_MANIFEST, new int[] {4, 12});
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0,
                "expected a 3-D array samples x time x regions, found shape (4, 12) (2-D)");
    }

    @Test
    void npyNaNWithinLength() {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", NPY_MANIFEST);
        float[] data = new float[4 * 3 * 4];
        data[(1 * 3 + 2) * 4 + 3] = Float.NaN;
        Path f = writeNpy(dir.resolve("samples.npy"), new int[] {4, 3, 4}, data);
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "value NaN at [1, 2, 3]",
                "sample 'b' of manifest line 3, time point 3, region 'V1'", "expected finite values");
    }

    @Test
    void npyLengthNotAnInteger() {
        Path m = dir.resolve("samples.tsv");
        npyCohort(NPY_MANIFEST.replace("b\tx\tA\t3", "b\tx\tA\tthree"), new int[] {4, 3, 4});
        assertFormatError(() -> CohortFiles.read(dir), m, 3, 4, "length 'three' is not an integer",
                "expected the number of valid time points");
    }

    @Test
    void npyLengthBelowOne() {
        Path m = dir.resolve("samples.tsv");
        npyCohort(NPY_MANIFEST.replace("c\ty\tB\t1", "c\ty\tB\t0"), new int[] {4, 3, 4});
        assertFormatError(() -> CohortFiles.read(dir), m, 4, 4, "length 0 is too small", "at least 1");
    }

    @Test
    void npyLengthBeyondTimeDimension() {
        Path m = dir.resolve("samples.tsv");
        npyCohort(NPY_MANIFEST.replace("d\ty\tB\t3", "d\ty\tB\t4"), new int[] {4, 3, 4});
        assertFormatError(() -> CohortFiles.read(dir), m, 5, 4, "length 4 exceeds the 3 time points",
                "expected a length between 1 and 3");
    }

    @Test
    void npyWithoutTimePoints() {
        Path f = npyCohort(lines("sample\tsubject\tlabel", "a\tx\tA", "b\tx\tA"), new int[] {2, 0, 4});
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "no time points", "shape (2, 0, 4)",
                "expected at least one time point per sample");
    }

    @Test
    void npyWithUnsupportedDtypeNamesTheCohortArray() {
        text(dir, "regions.tsv", ATLAS);
        text(dir, "samples.tsv", NPY_MANIFEST);
        byte[] b = NpyReaderTest.npy(1, 0, "{'descr': '<i8', 'fortran_order': False, 'shape': (4, 3, 4), }\n",
                new byte[4 * 3 * 4 * 8]);
        Path f = CohortFormatAssertions.bytes(dir, "samples.npy", b);
        assertFormatError(() -> CohortFiles.read(dir), f, 0, 0, "unsupported dtype '<i8' (int64)");
    }

    // ------------------------------------------------------------------ helpers

    static Sample sample(String id, String subject, String label, int length, int regions) {
        float[] v = new float[length * regions];
        for (int i = 0; i < v.length; i++) {
            v[i] = id.hashCode() % 97 + i * 0.125f;
        }
        return new Sample(id, subject, label, Split.UNASSIGNED, length, regions, v);
    }

    /** A random cohort with awkward floats (subnormals, extremes, negative zero) and lengths 1 to 40. */
    Cohort randomCohort(long seed, boolean withSplits) {
        Atlas atlas = CohortFiles.readAtlas(text(dir, "atlas-" + seed + ".tsv", ATLAS));
        SplittableRandom rnd = new SplittableRandom(seed);
        float[] awkward = {Float.MIN_VALUE, -Float.MIN_VALUE, Float.MAX_VALUE, -Float.MAX_VALUE, -0.0f,
                Float.MIN_NORMAL, 1e-40f, 0.1f, 1f / 3f, 16777217f};
        List<Sample> samples = new ArrayList<>();
        Split[] splits = {Split.TRAIN, Split.VALIDATION, Split.TEST};
        for (int i = 0; i < 9; i++) {
            int length = 1 + rnd.nextInt(40);
            float[] v = new float[length * atlas.size()];
            for (int k = 0; k < v.length; k++) {
                v[k] = rnd.nextInt(8) == 0 ? awkward[rnd.nextInt(awkward.length)]
                        : Float.intBitsToFloat(rnd.nextInt(0x7f000000)) * (rnd.nextBoolean() ? 1 : -1);
            }
            Split split = withSplits ? splits[i % 3] : Split.UNASSIGNED;
            samples.add(new Sample("s_" + i, "sub" + i / 3, i % 2 == 0 ? "rest" : "task", split, length,
                    atlas.size(), v));
        }
        return new Cohort(atlas, samples);
    }

    static void assertSameCohort(Cohort expected, Cohort actual) {
        assertEquals(expected.atlas(), actual.atlas());
        assertEquals(expected.atlas().regions(), actual.atlas().regions());
        assertEquals(expected.samples().size(), actual.samples().size());
        for (int i = 0; i < expected.samples().size(); i++) {
            Sample e = expected.samples().get(i);
            Sample a = actual.samples().get(i);
            assertEquals(e.id(), a.id());
            assertEquals(e.subject(), a.subject());
            assertEquals(e.label(), a.label());
            assertEquals(e.split(), a.split());
            assertEquals(e.length(), a.length(), e.id());
            assertEquals(e.regions(), a.regions());
            assertArrayEquals(e.values(), a.values(), e.id());
        }
    }
}
