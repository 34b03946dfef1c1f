package org.cruxset.search.report;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.zip.GZIPInputStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Label images in and maps out, in both byte orders. Source: the NIfTI-1 header specification (nifti1.h, NIfTI Data
 * Format Working Group): field offsets and codes below (datatype 4 = int16, 16 = float32; magic "n+1").
 */
class NiftiLabelsTest {
    /** A 3 x 2 x 2 int16 label image written field by field from the specification. */
    static byte[] image(ByteOrder order, short[] labels, String magic) {
        ByteBuffer b = ByteBuffer.allocate(352 + 2 * labels.length).order(order);
        b.putInt(0, 348);
        short[] dim = {3, 3, 2, 2, 1, 1, 1, 1};
        for (int i = 0; i < 8; i++) {
            b.putShort(40 + 2 * i, dim[i]);
        }
        b.putShort(70, (short) 4).putShort(72, (short) 16);
        for (int i = 0; i < 4; i++) {
            b.putFloat(76 + 4 * i, i == 0 ? 1f : 2.5f);
        }
        b.putFloat(108, 352f);
        b.putShort(254, (short) 1);
        b.putFloat(280, -2.5f).putFloat(292, 90f);
        byte[] m = magic.getBytes();
        for (int i = 0; i < 4; i++) {
            b.put(344 + i, i < m.length ? m[i] : 0);
        }
        for (int i = 0; i < labels.length; i++) {
            b.putShort(352 + 2 * i, labels[i]);
        }
        return b.array();
    }

    @Test
    void readsLabelsAndWritesMapsInTheImagesSpaceInEitherByteOrder(@TempDir Path dir) throws IOException {
        short[] labels = {0, 7, 7, 3, 0, 12, 3, 3, 0, 0, 12, 7};
        for (ByteOrder order : new ByteOrder[] {ByteOrder.LITTLE_ENDIAN, ByteOrder.BIG_ENDIAN}) {
            Path f = dir.resolve("atlas-" + order + ".nii");
            Files.write(f, image(order, labels, "n+1"));
            NiftiLabels n = NiftiLabels.read(f);
            assertArrayEquals(new int[] {3, 2, 2}, n.dims());
            int[] want = new int[labels.length];
            for (int i = 0; i < labels.length; i++) {
                want[i] = labels[i];
            }
            assertArrayEquals(want, n.labels());
            assertEquals(java.util.Set.of(3, 7, 12), n.present());
            Path map = dir.resolve("map-" + order + ".nii.gz");
            n.writeMap(map, Map.of(7, 0.5, 3, -1.25), "test map");
            byte[] out;
            try (InputStream in = new GZIPInputStream(Files.newInputStream(map))) {
                out = in.readAllBytes();
            }
            ByteBuffer b = ByteBuffer.wrap(out).order(order);
            assertEquals(348, b.getInt(0));
            assertEquals(16, b.getShort(70), "float32");
            assertEquals(32, b.getShort(72));
            assertEquals(352f, b.getFloat(108));
            assertEquals(2.5f, b.getFloat(80), "voxel size kept");
            assertEquals(1, b.getShort(254), "sform code kept");
            assertEquals(-2.5f, b.getFloat(280), "sform kept");
            assertEquals("n+1", new String(out, 344, 3));
            for (int i = 0; i < labels.length; i++) {
                float v = b.getFloat(352 + 4 * i);
                float expect = labels[i] == 7 ? 0.5f : labels[i] == 3 ? -1.25f : 0f;
                assertEquals(expect, v, "voxel " + i + " (label " + labels[i] + "; 12 has no value: 0)");
            }
            assertEquals(0.5f, b.getFloat(124), "cal_max");
            assertEquals(-1.25f, b.getFloat(128), "cal_min");
        }
    }

    @Test
    void badImagesAreRefusedNamingTheFileAndTheField(@TempDir Path dir) throws IOException {
        Path pair = dir.resolve("pair.nii");
        Files.write(pair, image(ByteOrder.LITTLE_ENDIAN, new short[12], "ni1"));
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> NiftiLabels.read(pair));
        assertTrue(e.getMessage().contains(pair.toString()) && e.getMessage().contains("magic"), e.getMessage());
        Path short_ = dir.resolve("short.nii");
        Files.write(short_, new byte[100]);
        e = assertThrows(IllegalArgumentException.class, () -> NiftiLabels.read(short_));
        assertTrue(e.getMessage().contains("352 bytes"), e.getMessage());
        byte[] truncated = image(ByteOrder.LITTLE_ENDIAN, new short[12], "n+1");
        Path cut = dir.resolve("cut.nii");
        Files.write(cut, java.util.Arrays.copyOf(truncated, truncated.length - 4));
        e = assertThrows(IllegalArgumentException.class, () -> NiftiLabels.read(cut));
        assertTrue(e.getMessage().contains("vox_offset"), e.getMessage());
        ByteArrayOutputStream bad = new ByteArrayOutputStream();
        byte[] other = image(ByteOrder.LITTLE_ENDIAN, new short[12], "n+1");
        ByteBuffer.wrap(other).order(ByteOrder.LITTLE_ENDIAN).putInt(0, 540);
        bad.write(other);
        Path two = dir.resolve("nifti2.nii");
        Files.write(two, bad.toByteArray());
        e = assertThrows(IllegalArgumentException.class, () -> NiftiLabels.read(two));
        assertTrue(e.getMessage().contains("sizeof_hdr"), e.getMessage());
    }

    @Test
    void inlinedSvgGetsPrefixedIdsAndNoProlog() {
        String svg = "<?xml version=\"1.0\"?>\n<!DOCTYPE svg>\n<svg width=\"10\"><defs><clipPath id=\"clip1\"/></defs>"
                + "<g clip-path=\"url(#clip1)\"/></svg>";
        String in = Plots.inline(svg, "fronts");
        assertTrue(in.startsWith("<svg role=\"img\""), in);
        assertTrue(in.contains("id=\"fronts-clip1\"") && in.contains("url(#fronts-clip1)"), in);
    }
}
