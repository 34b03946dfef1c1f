package org.cruxset.scoring.cohort;

import static org.cruxset.scoring.cohort.CohortFormatAssertions.assertFormatError;
import static org.cruxset.scoring.cohort.CohortFormatAssertions.bytes;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.io.IOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class NpyReaderTest {
    @TempDir
    Path dir;

    /** Builds a .npy file by hand: magic, version, header length field, header text, data. */
    static byte[] npy(int major, int minor, String header, byte[] data) {
        byte[] h = header.getBytes(major == 3 ? StandardCharsets.UTF_8 : StandardCharsets.ISO_8859_1);
        int lengthBytes = major == 1 ? 2 : 4;
        ByteBuffer b = ByteBuffer.allocate(8 + lengthBytes + h.length + data.length).order(ByteOrder.LITTLE_ENDIAN);
        b.put(NpyReader.MAGIC).put((byte) major).put((byte) minor);
        if (lengthBytes == 2) {
            b.putShort((short) h.length);
        } else {
            b.putInt(h.length);
        }
        return b.put(h).put(data).array();
    }

    static byte[] floats(ByteOrder order, float... v) {
        ByteBuffer b = ByteBuffer.allocate(4 * v.length).order(order);
        for (float x : v) {
            b.putFloat(x);
        }
        return b.array();
    }

    static byte[] doubles(ByteOrder order, double... v) {
        ByteBuffer b = ByteBuffer.allocate(8 * v.length).order(order);
        for (double x : v) {
            b.putDouble(x);
        }
        return b.array();
    }

    @Test
    void writerRoundTripsEveryRank() {
        SplittableRandom rnd = new SplittableRandom(7);
        for (int[] shape : new int[][] {{}, {5}, {2, 3}, {3, 4, 5}, {2, 0, 3}, {1, 2, 3, 4}}) {
            float[] data = new float[(int) NpyArray.elementCount(shape)];
            for (int i = 0; i < data.length; i++) {
                data[i] = (float) (rnd.nextGaussian() * 1e3);
            }
            Path f = dir.resolve("a" + shape.length + "-" + Arrays.toString(shape).hashCode() + ".npy");
            NpyWriter.write(f, new NpyArray(shape, data));
            NpyArray back = NpyReader.read(f);
            assertArrayEquals(shape, back.shape());
            assertArrayEquals(data, back.data());
            assertArrayEquals(shape, NpyReader.readShape(f));
        }
    }

    @Test
    void writerHeaderIsAlignedLikeNumpy() throws IOException {
        Path f = dir.resolve("x.npy");
        NpyWriter.write(f, new int[] {2, 3}, new float[6]);
        byte[] all = Files.readAllBytes(f);
        int headerLength = (all[8] & 0xff) | (all[9] & 0xff) << 8;
        assertEquals(0, (10 + headerLength) % 64);
        assertEquals(10 + headerLength + 24, all.length);
        String header = new String(all, 10, headerLength, StandardCharsets.ISO_8859_1);
        assertEquals("{'descr': '<f4', 'fortran_order': False, 'shape': (2, 3), }", header.strip());
        assertEquals('\n', header.charAt(header.length() - 1));
    }

    @Test
    void readsAllVersionsDtypesAndByteOrders() {
        float[] expected = {1.5f, -2.25f, 3e-8f, 65504f, -0.0f, 7f};
        double[] asDoubles = new double[expected.length];
        for (int i = 0; i < expected.length; i++) {
            asDoubles[i] = expected[i];
        }
        int n = 0;
        for (int major = 1; major <= 3; major++) {
            for (String descr : NpyReader.SUPPORTED_DTYPES) {
                ByteOrder order = descr.charAt(0) == '<' ? ByteOrder.LITTLE_ENDIAN : ByteOrder.BIG_ENDIAN;
                byte[] data = descr.endsWith("4") ? floats(order, expected) : doubles(order, asDoubles);
                String header = "{'descr': '" + descr + "', 'fortran_order': False, 'shape': (2, 3), }   \n";
                Path f = bytes(dir, "v" + major + "-" + (n++) + ".npy", npy(major, 0, header, data));
                NpyArray a = NpyReader.read(f);
                assertArrayEquals(new int[] {2, 3}, a.shape(), descr + " v" + major);
                assertArrayEquals(expected, a.data(), descr + " v" + major);
                assertEquals(-2.25f, a.get(0, 1));
            }
        }
    }

    @Test
    void headerParserAcceptsOtherKeyOrderDoubleQuotesAndLongSuffix() {
        String header = "{\"shape\": (3L,), \"fortran_order\": False, \"descr\": \"<f8\"}\n";
        Path f = bytes(dir, "q.npy", npy(1, 0, header, doubles(ByteOrder.LITTLE_ENDIAN, 1, 2, 3)));
        NpyArray a = NpyReader.read(f);
        assertArrayEquals(new int[] {3}, a.shape());
        assertArrayEquals(new float[] {1, 2, 3}, a.data());
    }

    @Test
    void version3HeaderIsDecodedAsUtf8() {
        String header = "{'descr': [('\u00e9t\u00e9', '<f4')], 'fortran_order': False, 'shape': (1,), }\n";
        Path f = bytes(dir, "u.npy", npy(3, 0, header, floats(ByteOrder.LITTLE_ENDIAN, 4f)));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "structured dtype [('\u00e9t\u00e9', '<f4')]");
    }

    @Test
    void refusesBadMagic() {
        Path f = bytes(dir, "bad.npy", "PK\u0003\u0004 this is a zip".getBytes(StandardCharsets.ISO_8859_1));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "not a .npy file", "expected the magic string \\x93NUMPY",
                "found bytes 50 4b 03 04");
    }

    @Test
    void refusesUnsupportedVersion() {
        String header = "{'descr': '<f4', 'fortran_order': False, 'shape': (1,), }\n";
        byte[] b = npy(2, 0, header, floats(ByteOrder.LITTLE_ENDIAN, 1f));
        b[6] = 4;
        Path f = bytes(dir, "v4.npy", b);
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "unsupported .npy format version 4.0",
                "supported versions are 1.0, 2.0 and 3.0");
        b[6] = 1;
        b[7] = 1;
        Path g = bytes(dir, "v11.npy", b);
        assertFormatError(() -> NpyReader.read(g), g, 0, 0, "version 1.1");
    }

    @Test
    void refusesTruncatedData() {
        String header = "{'descr': '<f4', 'fortran_order': False, 'shape': (2, 3), }\n";
        Path f = bytes(dir, "t.npy", npy(1, 0, header, floats(ByteOrder.LITTLE_ENDIAN, 1, 2, 3, 4, 5)));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "truncated data", "(2, 3)", "'<f4'",
                "needs 24 bytes after the header, found 20");
    }

    @Test
    void refusesTrailingData() {
        String header = "{'descr': '<f4', 'fortran_order': False, 'shape': (2,), }\n";
        Path f = bytes(dir, "t.npy", npy(1, 0, header, floats(ByteOrder.LITTLE_ENDIAN, 1, 2, 3)));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "unexpected trailing data",
                "needs exactly 8 bytes after the header, found 12");
    }

    @Test
    void refusesTruncatedHeader() {
        Path f = bytes(dir, "short.npy", new byte[] {(byte) 0x93, 'N', 'U', 'M', 'P', 'Y', 1});
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "truncated header", "the file has 7 bytes");
        byte[] b = npy(1, 0, "{'descr': '<f4', 'fortran_order': False, 'shape': (1,), }\n", new byte[0]);
        Path g = bytes(dir, "short2.npy", Arrays.copyOf(b, 30));
        assertFormatError(() -> NpyReader.read(g), g, 0, 0, "truncated header", "header length field says");
    }

    @Test
    void refusesFortranOrder() {
        String header = "{'descr': '<f4', 'fortran_order': True, 'shape': (2, 2), }\n";
        Path f = bytes(dir, "f.npy", npy(1, 0, header, floats(ByteOrder.LITTLE_ENDIAN, 1, 2, 3, 4)));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "Fortran order",
                "C order expected; save with np.ascontiguousarray");
    }

    @Test
    void refusesOtherDtypesNamingFoundAndSupported() {
        String header = "{'descr': '<i4', 'fortran_order': False, 'shape': (2,), }\n";
        Path f = bytes(dir, "i.npy", npy(1, 0, header, new byte[8]));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "unsupported dtype '<i4' (int32)",
                "supported dtypes are '<f4', '>f4' (float32) and '<f8', '>f8' (float64)");
        String h2 = "{'descr': '<f2', 'fortran_order': False, 'shape': (2,), }\n";
        Path g = bytes(dir, "h.npy", npy(1, 0, h2, new byte[4]));
        assertFormatError(() -> NpyReader.read(g), g, 0, 0, "unsupported dtype '<f2' (float16)");
    }

    @Test
    void refusesStructuredDtype() {
        String header = "{'descr': [('a', '<f4'), ('b', '<i4')], 'fortran_order': False, 'shape': (1,), }\n";
        Path f = bytes(dir, "s.npy", npy(1, 0, header, new byte[8]));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "structured dtype [('a', '<f4'), ('b', '<i4')]",
                "supported dtypes are");
    }

    @Test
    void refusesMissingOrExtraHeaderKeys() {
        String header = "{'descr': '<f4', 'shape': (1,), }\n";
        Path f = bytes(dir, "k.npy", npy(1, 0, header, new byte[4]));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "lacks the key 'fortran_order'");
        String h2 = "{'descr': '<f4', 'fortran_order': False, 'shape': (1,), 'extra': 1}\n";
        Path g = bytes(dir, "k2.npy", npy(1, 0, h2, new byte[4]));
        assertFormatError(() -> NpyReader.read(g), g, 0, 0, "unexpected header key 'extra'");
    }

    @Test
    void refusesMalformedHeader() {
        String header = "{'descr': '<f4', 'fortran_order': False, 'shape': (1, }\n";
        Path f = bytes(dir, "m.npy", npy(1, 0, header, new byte[4]));
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "malformed .npy header at character");
        String h2 = "{'descr': '<f4', 'fortran_order': False, 'shape': (1.5,), }\n";
        Path g = bytes(dir, "m2.npy", npy(1, 0, h2, new byte[4]));
        assertFormatError(() -> NpyReader.read(g), g, 0, 0, "expected an integer");
    }

    @Test
    void refusesMissingFile() {
        Path f = dir.resolve("none.npy");
        assertFormatError(() -> NpyReader.read(f), f, 0, 0, "file not found");
    }

    @Test
    void arrayCopiesItsInputs() {
        float[] data = {1, 2};
        int[] shape = {2};
        NpyArray a = new NpyArray(shape, data);
        data[0] = 9;
        shape[0] = 9;
        a.data()[1] = 9;
        assertArrayEquals(new float[] {1, 2}, a.data());
        assertArrayEquals(new int[] {2}, a.shape());
        assertThrows(IllegalArgumentException.class, () -> new NpyArray(new int[] {3}, new float[2]));
    }
}
