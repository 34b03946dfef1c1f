package org.cruxset.search.report;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.TreeSet;
import java.util.zip.GZIPInputStream;
import java.util.zip.GZIPOutputStream;

/**
 * An atlas as a NIfTI-1 label image (single file, {@code .nii} or {@code .nii.gz}; voxel value = the region's
 * {@code index} in {@code regions.tsv}, 0 for background), and maps of region values written in its space.
 *
 * <p>Source: the NIfTI-1 header specification (nifti1.h of the NIfTI Data Format Working Group, 2004): a 348-byte
 * header, {@code dim} at byte 40, {@code datatype} at 70, {@code bitpix} at 72, {@code pixdim} at 76,
 * {@code vox_offset} at 108, {@code scl_slope}/{@code scl_inter} at 112/116, {@code cal_max}/{@code cal_min} at
 * 124/128, {@code descrip} at 148, the qform and sform fields from 252, {@code magic} "n+1\0" at 344, then four
 * extension bytes, so data starts at byte 352. Maps keep the label image's header (its space, voxel sizes and
 * orientation) and byte order, with float32 data.
 */
public final class NiftiLabels {
    static final int HEADER = 348;
    static final int DATA_OFFSET = 352;

    private final Path file;
    private final byte[] header;
    private final ByteOrder order;
    private final int[] dims;
    private final int[] labels;

    private NiftiLabels(Path file, byte[] header, ByteOrder order, int[] dims, int[] labels) {
        this.file = file;
        this.header = header;
        this.order = order;
        this.dims = dims;
        this.labels = labels;
    }

    /** The image's three spatial sizes. */
    public int[] dims() {
        return dims.clone();
    }

    /** The label of every voxel, x fastest (NIfTI order). */
    public int[] labels() {
        return labels.clone();
    }

    /** The distinct non-zero labels. */
    public TreeSet<Integer> present() {
        TreeSet<Integer> out = new TreeSet<>();
        for (int l : labels) {
            if (l != 0) {
                out.add(l);
            }
        }
        return out;
    }

    /**
     * Reads a label image.
     *
     * @throws IllegalArgumentException naming the file and the field when it is not a single-file NIfTI-1 image of
     *                                  integer labels in three dimensions
     */
    public static NiftiLabels read(Path file) {
        byte[] bytes;
        try (InputStream in = open(file)) {
            bytes = in.readAllBytes();
        } catch (IOException e) {
            throw new UncheckedIOException("cannot read the atlas image " + file + ": " + e.getMessage(), e);
        }
        if (bytes.length < DATA_OFFSET) {
            throw bad(file, "size", "at least 352 bytes (a NIfTI-1 header), found " + bytes.length);
        }
        ByteBuffer b = ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN);
        if (b.getInt(0) != HEADER) {
            b.order(ByteOrder.BIG_ENDIAN);
            if (b.getInt(0) != HEADER) {
                throw bad(file, "sizeof_hdr", "348 (NIfTI-1) in either byte order; NIfTI-2 and other formats are not read");
            }
        }
        String magic = new String(bytes, 344, 3, StandardCharsets.US_ASCII);
        if (!"n+1".equals(magic)) {
            throw bad(file, "magic", "\"n+1\" (a single-file .nii image), found \"" + magic.replace("\0", "")
                    + "\"; convert .hdr/.img pairs to .nii first");
        }
        int rank = b.getShort(40);
        int[] d = new int[3];
        for (int i = 0; i < 3; i++) {
            d[i] = i < rank ? b.getShort(42 + 2 * i) : 1;
            if (d[i] < 1) {
                throw bad(file, "dim[" + (i + 1) + "]", "a positive size, found " + d[i]);
            }
        }
        for (int i = 3; i < rank; i++) {
            if (b.getShort(42 + 2 * i) > 1) {
                throw bad(file, "dim[" + (i + 1) + "]", "1: a label image is three-dimensional, found "
                        + b.getShort(42 + 2 * i));
            }
        }
        int datatype = b.getShort(70);
        int offset = (int) b.getFloat(108);
        float slope = b.getFloat(112);
        float inter = b.getFloat(116);
        boolean scaled = slope != 0 && !(slope == 1 && inter == 0);
        long voxels = (long) d[0] * d[1] * d[2];
        int width = switch (datatype) {
            case 2, 256 -> 1;
            case 4, 512 -> 2;
            case 8, 16, 768 -> 4;
            case 64 -> 8;
            default -> throw bad(file, "datatype", "an integer or float type (2, 4, 8, 16, 64, 256, 512 or 768), found "
                    + datatype);
        };
        if (offset < DATA_OFFSET || offset + voxels * width > bytes.length) {
            throw bad(file, "vox_offset", "data of " + voxels + " voxels x " + width + " bytes from byte " + offset
                    + " within the file's " + bytes.length + " bytes");
        }
        int[] out = new int[(int) voxels];
        for (int v = 0; v < voxels; v++) {
            int at = offset + v * width;
            double x = switch (datatype) {
                case 2 -> bytes[at] & 0xFF;
                case 256 -> bytes[at];
                case 4 -> b.getShort(at);
                case 512 -> b.getShort(at) & 0xFFFF;
                case 8 -> b.getInt(at);
                case 768 -> b.getInt(at) & 0xFFFFFFFFL;
                case 16 -> b.getFloat(at);
                default -> b.getDouble(at);
            };
            if (scaled) {
                x = x * slope + inter;
            }
            long l = Math.round(x);
            if (Math.abs(x - l) > 1e-3 || Double.isNaN(x)) {
                throw bad(file, "voxel " + v, "an integer label (the region's index in regions.tsv), found " + x);
            }
            out[v] = (int) l;
        }
        byte[] h = new byte[HEADER];
        System.arraycopy(bytes, 0, h, 0, HEADER);
        return new NiftiLabels(file, h, b.order(), d, out);
    }

    private static InputStream open(Path file) throws IOException {
        InputStream in = Files.newInputStream(file);
        return file.getFileName().toString().endsWith(".gz") ? new GZIPInputStream(in) : in;
    }

    private static IllegalArgumentException bad(Path file, String field, String expected) {
        return new IllegalArgumentException("atlas image " + file + ", NIfTI-1 field " + field + ": expected "
                + expected);
    }

    /**
     * Writes a float32 map in the label image's space ({@code .nii.gz}): each voxel gets its label's value, 0 where
     * the label is 0 or has no value.
     */
    public void writeMap(Path out, Map<Integer, Double> valueByLabel, String description) {
        ByteBuffer h = ByteBuffer.allocate(DATA_OFFSET).order(order);
        h.put(header);
        h.putShort(40, (short) 3);
        for (int i = 0; i < 3; i++) {
            h.putShort(42 + 2 * i, (short) dims[i]);
        }
        for (int i = 3; i < 7; i++) {
            h.putShort(42 + 2 * i, (short) 1);
        }
        h.putShort(68, (short) 0);
        h.putShort(70, (short) 16);
        h.putShort(72, (short) 32);
        h.putFloat(108, DATA_OFFSET);
        h.putFloat(112, 1f);
        h.putFloat(116, 0f);
        float lo = 0;
        float hi = 0;
        ByteBuffer data = ByteBuffer.allocate(4 * labels.length).order(order);
        for (int l : labels) {
            Double v = l == 0 ? null : valueByLabel.get(l);
            float f = v == null || v.isNaN() ? 0f : v.floatValue();
            lo = Math.min(lo, f);
            hi = Math.max(hi, f);
            data.putFloat(f);
        }
        h.putFloat(124, hi);
        h.putFloat(128, lo);
        h.putInt(140, 0);
        h.putInt(144, 0);
        byte[] text = description.getBytes(StandardCharsets.US_ASCII);
        for (int i = 0; i < 80; i++) {
            h.put(148 + i, i < Math.min(79, text.length) ? text[i] : 0);
        }
        h.put(344, (byte) 'n').put(345, (byte) '+').put(346, (byte) '1').put(347, (byte) 0);
        for (int i = HEADER; i < DATA_OFFSET; i++) {
            h.put(i, (byte) 0);
        }
        try {
            Files.createDirectories(out.toAbsolutePath().getParent());
            ByteArrayOutputStream buf = new ByteArrayOutputStream();
            try (OutputStream gz = new GZIPOutputStream(buf)) {
                gz.write(h.array());
                gz.write(data.array());
            }
            Files.write(out, buf.toByteArray());
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + out + " (a map in the space of " + file + "): "
                    + e.getMessage(), e);
        }
    }
}
