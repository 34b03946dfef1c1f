package org.cruxset.scoring.cohort;

import java.io.Closeable;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;

/** Writes float32 little-endian C-ordered .npy files in format version 1.0, byte for byte as numpy.save does. */
public final class NpyWriter {
    private static final int ALIGN = 64;
    private static final int BUFFER_BYTES = 1 << 20;

    private NpyWriter() {
    }

    /** Writes an array to {@code file}, replacing it; I/O failures surface as {@link UncheckedIOException}. */
    public static void write(Path file, NpyArray array) {
        write(file, array.shape(), array.data());
    }

    /** Writes {@code data} (C order) with the given shape to {@code file}, replacing it. */
    public static void write(Path file, int[] shape, float[] data) {
        long n = NpyArray.elementCount(shape);
        if (n != data.length) {
            throw new IllegalArgumentException("data must hold " + n + " floats for shape "
                    + NpyArray.shapeText(shape) + ", found " + data.length);
        }
        try (Sink out = open(file, shape)) {
            out.writeFloats(data, 0, data.length);
        }
    }

    /** The version 1.0 header numpy writes for a float32 little-endian C-ordered array of this shape. */
    static byte[] header(int[] shape) {
        String dict = "{'descr': '<f4', 'fortran_order': False, 'shape': " + NpyArray.shapeText(shape) + ", }";
        int withNewline = dict.length() + 1;
        int pad = ALIGN - ((10 + withNewline) % ALIGN);
        int headerLength = dict.length() + pad + 1;
        if (headerLength > 0xffff) {
            throw new IllegalArgumentException("shape " + NpyArray.shapeText(shape)
                    + " needs a header longer than format version 1.0 allows (65535 bytes)");
        }
        ByteBuffer b = ByteBuffer.allocate(10 + headerLength).order(ByteOrder.LITTLE_ENDIAN);
        b.put(NpyReader.MAGIC).put((byte) 1).put((byte) 0).putShort((short) headerLength);
        b.put(dict.getBytes(StandardCharsets.ISO_8859_1));
        for (int i = 0; i < pad; i++) {
            b.put((byte) ' ');
        }
        b.put((byte) '\n');
        return b.array();
    }

    /** Opens {@code file} for an array of {@code shape}; the caller then writes exactly all values in C order. */
    static Sink open(Path file, int[] shape) {
        byte[] header = header(shape);
        long count = NpyArray.elementCount(shape);
        try {
            FileChannel ch = FileChannel.open(file, StandardOpenOption.CREATE, StandardOpenOption.WRITE,
                    StandardOpenOption.TRUNCATE_EXISTING);
            Sink sink = new Sink(file, ch, count);
            sink.writeHeader(header);
            return sink;
        } catch (IOException e) {
            throw new UncheckedIOException("cannot write " + file + ": " + e.getMessage(), e);
        }
    }

    /** An open .npy file accepting values in C order. */
    static final class Sink implements Closeable {
        private final Path file;
        private final FileChannel channel;
        private final long expected;
        private final ByteBuffer buffer = ByteBuffer.allocate(BUFFER_BYTES).order(ByteOrder.LITTLE_ENDIAN);
        private long written;
        private boolean failed;

        private Sink(Path file, FileChannel channel, long expected) {
            this.file = file;
            this.channel = channel;
            this.expected = expected;
        }

        private void writeHeader(byte[] header) throws IOException {
            ByteBuffer h = ByteBuffer.wrap(header);
            while (h.hasRemaining()) {
                channel.write(h);
            }
        }

        /** Appends {@code count} values from {@code src} starting at {@code offset}. */
        void writeFloats(float[] src, int offset, int count) {
            check(count);
            int done = 0;
            while (done < count) {
                if (buffer.remaining() < 4) {
                    flush();
                }
                int k = Math.min(count - done, buffer.remaining() / 4);
                buffer.asFloatBuffer().put(src, offset + done, k);
                buffer.position(buffer.position() + 4 * k);
                done += k;
            }
            written += count;
        }

        /** Appends {@code count} zeros. */
        void writeZeros(int count) {
            check(count);
            for (int i = 0; i < count; i++) {
                if (buffer.remaining() < 4) {
                    flush();
                }
                buffer.putFloat(0f);
            }
            written += count;
        }

        private void check(int count) {
            if (count < 0 || written + count > expected) {
                failed = true;
                throw new IllegalArgumentException("cannot write " + count + " more values to " + file
                        + ": the shape holds " + expected + " and " + written + " are written");
            }
        }

        private void flush() {
            buffer.flip();
            try {
                while (buffer.hasRemaining()) {
                    channel.write(buffer);
                }
            } catch (IOException e) {
                failed = true;
                throw new UncheckedIOException("cannot write " + file + ": " + e.getMessage(), e);
            }
            buffer.clear();
        }

        @Override
        public void close() {
            try {
                if (!failed) {
                    flush();
                }
                channel.close();
            } catch (IOException e) {
                throw new UncheckedIOException("cannot close " + file + ": " + e.getMessage(), e);
            }
            if (!failed && written != expected) {
                throw new IllegalStateException("wrote " + written + " values to " + file + ", the shape holds "
                        + expected);
            }
        }
    }
}
