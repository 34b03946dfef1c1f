package org.cruxset.scoring.cohort;

import static org.cruxset.scoring.cohort.CohortFormatAssertions.assertFormatError;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.lines;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.text;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.core.json.JsonReadFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.json.JsonMapper;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.HashSet;
import java.util.Set;
import org.cruxset.scoring.testing.ExternalTools;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

// Source: NumPy .npy format specification (numpy.lib.format), written by numpy itself as the reference writer
/** Checks the reader and writer against files that numpy writes and reads at test time. */
class NumpyInteropTest {
    /**
     * Writes fixtures with numpy.lib.format.write_array and prints, per file, numpy's own values: the float32 bit
     * patterns after numpy's float64-to-float32 rounding, and the values themselves as JSON.
     */
    private static final String WRITE_FIXTURES = """
            import json, sys
            import numpy as np
            from numpy.lib import format as npf

            rng = np.random.default_rng(20240611)
            cases = []
            specials = [-0.0, 1e-45, -3.4e38, 3.4e38, 1.0 / 3.0, 16777217.0, 1e-300, 1e39, -1e39]

            def save(name, arr, version):
                with open(name, "wb") as f:
                    npf.write_array(f, arr, version=version)

            def expect(name, arr, version):
                with np.errstate(over="ignore", under="ignore"):
                    as32 = np.ascontiguousarray(arr).astype("<f4")
                cases.append({"file": name, "version": list(version), "descr": arr.dtype.str,
                              "shape": list(arr.shape), "bits": as32.view("<u4").ravel().tolist(),
                              "values": arr.ravel().tolist()})

            base = rng.standard_normal((2, 3, 4)) * 100.0
            base.ravel()[:len(specials)] = specials
            for version in [(1, 0), (2, 0), (3, 0)]:
                for descr in ["<f4", ">f4", "<f8", ">f8"]:
                    with np.errstate(over="ignore", under="ignore"):
                        arr = base.astype(descr)
                    name = "v%d_%s.npy" % (version[0], descr.replace("<", "le").replace(">", "be"))
                    save(name, arr, version)
                    expect(name, arr, version)

            for i, shape in enumerate([(), (5,), (0, 3), (2, 1, 3, 2), (300, 7)]):
                arr = rng.standard_normal(shape).astype("<f4")
                name = "shape%d.npy" % i
                np.save(name, arr)
                expect(name, arr, (1, 0))

            arr = np.array([[np.nan, np.inf], [-np.inf, 2.5]], dtype=">f8")
            np.save("nonfinite.npy", arr)
            expect("nonfinite.npy", arr, (1, 0))

            np.save("fortran.npy", np.asfortranarray(rng.standard_normal((3, 4)).astype("<f4")))
            np.save("int32.npy", np.arange(12, dtype="<i4").reshape(3, 4))

            cohort = rng.standard_normal((4, 6, 3)).astype(">f8")
            cohort[1, 4:, :] = np.nan
            save("cohort/samples.npy", cohort, (2, 0))
            expect("cohort/samples.npy", cohort, (2, 0))

            np.save("numpy_written.npy", base.astype("<f4"))

            with open("expected.json", "w") as f:
                json.dump(cases, f)
            print(len(cases))
            """;

    /** Loads a file written by the Java writer with numpy and prints its dtype, shape and values. */
    private static final String READ_BACK = """
            import json, sys
            import numpy as np
            arr = np.load(sys.argv[1])
            print(json.dumps({"descr": arr.dtype.str, "shape": list(arr.shape),
                              "fortran": bool(np.isfortran(arr)) and arr.ndim > 1,
                              "bits": arr.view("<u4").ravel().tolist()}))
            """;

    @TempDir
    Path dir;

    private static final JsonMapper JSON = JsonMapper.builder()
            .enable(JsonReadFeature.ALLOW_NON_NUMERIC_NUMBERS).build();

    @Test
    void readerMatchesNumpyForEveryVersionDtypeAndByteOrder() throws IOException {
        Path python = ExternalTools.requirePython("numpy");
        Files.createDirectories(dir.resolve("cohort"));
        String printed = ExternalTools.runPython(python, dir, WRITE_FIXTURES).strip();
        JsonNode cases = JSON.readTree(dir.resolve("expected.json").toFile());
        assertEquals(Integer.parseInt(printed), cases.size());
        Set<String> seen = new HashSet<>();
        for (JsonNode c : cases) {
            Path file = dir.resolve(c.get("file").asText());
            String what = file.getFileName() + " (" + c.get("descr").asText() + ", version "
                    + c.get("version").get(0).asInt() + "." + c.get("version").get(1).asInt() + ")";
            seen.add(c.get("descr").asText() + "/" + c.get("version").get(0).asInt());
            NpyArray a = NpyReader.read(file);
            int[] shape = new int[c.get("shape").size()];
            for (int i = 0; i < shape.length; i++) {
                shape[i] = c.get("shape").get(i).asInt();
            }
            assertArrayEquals(shape, a.shape(), what);
            JsonNode bits = c.get("bits");
            JsonNode values = c.get("values");
            assertEquals(bits.size(), a.size(), what);
            for (int i = 0; i < a.size(); i++) {
                int expectedBits = (int) bits.get(i).asLong();
                float actual = a.flat(i);
                assertEquals(expectedBits, Float.floatToRawIntBits(actual), what + " value " + i + ": numpy "
                        + Float.intBitsToFloat(expectedBits) + ", reader " + actual);
                assertEquals((float) values.get(i).asDouble(), actual, 0f, what + " value " + i);
            }
        }
        for (String descr : NpyReader.SUPPORTED_DTYPES) {
            for (int major = 1; major <= 3; major++) {
                assertTrue(seen.contains(descr + "/" + major), "fixture for " + descr + " version " + major);
            }
        }

        Path fortran = dir.resolve("fortran.npy");
        assertFormatError(() -> NpyReader.read(fortran), fortran, 0, 0, "Fortran order",
                "C order expected; save with np.ascontiguousarray");
        Path int32 = dir.resolve("int32.npy");
        assertFormatError(() -> NpyReader.read(int32), int32, 0, 0, "unsupported dtype '<i4' (int32)",
                "supported dtypes are '<f4', '>f4' (float32) and '<f8', '>f8' (float64)");

        Path ours = dir.resolve("java_written.npy");
        NpyWriter.write(ours, NpyReader.read(dir.resolve("numpy_written.npy")));
        assertArrayEquals(Files.readAllBytes(dir.resolve("numpy_written.npy")), Files.readAllBytes(ours),
                "the writer should produce the same bytes as numpy.save for a float32 array");
    }

    @Test
    void cohortReaderTakesAFloat64BigEndianVersion2ArrayFromNumpy() throws IOException {
        Path python = ExternalTools.requirePython("numpy");
        Files.createDirectories(dir.resolve("cohort"));
        ExternalTools.runPython(python, dir, WRITE_FIXTURES);
        JsonNode cases = JSON.readTree(dir.resolve("expected.json").toFile());
        JsonNode expected = null;
        for (JsonNode c : cases) {
            if (c.get("file").asText().equals("cohort/samples.npy")) {
                expected = c;
            }
        }
        Path cohortDir = dir.resolve("cohort");
        text(cohortDir, "regions.tsv", lines("index\tname\tnetwork", "0\tA\tN1", "1\tB\tN1", "2\tC\tN2"));
        text(cohortDir, "samples.tsv", lines("sample\tsubject\tlabel\tsplit\tlength", "a\tx\tL1\ttrain\t6",
                "b\tx\tL1\ttest\t4", "c\ty\tL2\ttrain\t6", "d\ty\tL2\tvalidation\t5"));
        Cohort c = CohortFiles.read(cohortDir);
        int[] lengths = {6, 4, 6, 5};
        for (int s = 0; s < 4; s++) {
            Sample sample = c.samples().get(s);
            assertEquals(lengths[s], sample.length());
            for (int t = 0; t < sample.length(); t++) {
                for (int r = 0; r < 3; r++) {
                    int bits = (int) expected.get("bits").get((s * 6 + t) * 3 + r).asLong();
                    assertEquals(bits, Float.floatToRawIntBits(sample.at(t, r)), "sample " + s + " t " + t + " r " + r);
                }
            }
        }
    }

    @Test
    void numpyReadsWhatTheWriterWrites() throws IOException {
        Path python = ExternalTools.requirePython("numpy");
        float[] data = new float[2 * 3 * 5];
        for (int i = 0; i < data.length; i++) {
            data[i] = (float) Math.sin(i) * 1e3f;
        }
        data[0] = -0.0f;
        data[1] = Float.MIN_VALUE;
        Path file = dir.resolve("from_java.npy");
        NpyWriter.write(file, new int[] {2, 3, 5}, data);
        JsonNode r = JSON.readTree(ExternalTools.runPython(python, dir, READ_BACK, file.toString()));
        assertEquals("<f4", r.get("descr").asText());
        assertEquals("[2,3,5]", r.get("shape").toString());
        assertEquals(false, r.get("fortran").asBoolean());
        for (int i = 0; i < data.length; i++) {
            assertEquals(Float.floatToRawIntBits(data[i]), (int) r.get("bits").get(i).asLong(), "value " + i);
        }
    }
}
