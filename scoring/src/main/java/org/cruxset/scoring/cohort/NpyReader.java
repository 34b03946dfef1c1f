package org.cruxset.scoring.cohort;

import java.io.Closeable;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * Reads NumPy .npy files (format versions 1.0, 2.0 and 3.0) holding float32 or float64 values in either byte
 * order, C-ordered, converting every value to float; anything else is refused with a {@link CohortFormatException}.
 */
public final class NpyReader {
    /** The dtypes this reader accepts, as spelled in a .npy header. */
    public static final List<String> SUPPORTED_DTYPES = List.of("<f4", ">f4", "<f8", ">f8");

    static final byte[] MAGIC = {(byte) 0x93, 'N', 'U', 'M', 'P', 'Y'};
    private static final int BUFFER_BYTES = 1 << 20;

    private NpyReader() {
    }

    /** Reads a whole .npy file; I/O failures other than a missing file surface as {@link UncheckedIOException}. */
    public static NpyArray read(Path file) {
        try (Stream in = open(file)) {
            long n = in.elementCount();
            float[] data = new float[(int) n];
            in.readFloats(data, 0, data.length);
            return new NpyArray(in.shape(), data);
        }
    }

    /** Reads only the header of a .npy file and returns its shape. */
    public static int[] readShape(Path file) {
        try (Stream in = open(file)) {
            return in.shape();
        }
    }

    /** Opens a .npy file, parses and checks its header, and positions the stream at the first value. */
    static Stream open(Path file) {
        FileChannel ch;
        try {
            ch = FileChannel.open(file, StandardOpenOption.READ);
        } catch (NoSuchFileException e) {
            throw new CohortFormatException(file, "file not found; expected a .npy array file");
        } catch (IOException e) {
            throw new UncheckedIOException("cannot open " + file + ": " + e.getMessage(), e);
        }
        try {
            return new Stream(file, ch);
        } catch (RuntimeException e) {
            closeQuietly(ch);
            throw e;
        } catch (IOException e) {
            closeQuietly(ch);
            throw new UncheckedIOException("cannot read " + file + ": " + e.getMessage(), e);
        }
    }

    private static void closeQuietly(FileChannel ch) {
        try {
            ch.close();
        } catch (IOException ignored) {
            // nothing more to report than the original failure
        }
    }

    /** An open .npy file positioned at its data, read in C order in as many chunks as the caller likes. */
    static final class Stream implements Closeable {
        private final Path file;
        private final FileChannel channel;
        private final int[] shape;
        private final String dtype;
        private final int itemSize;
        private final long elementCount;
        private final ByteBuffer buffer;
        private long consumed;

        private Stream(Path file, FileChannel channel) throws IOException {
            this.file = file;
            this.channel = channel;
            long fileSize = channel.size();
            ByteBuffer prefix = ByteBuffer.allocate(12).order(ByteOrder.LITTLE_ENDIAN);
            prefix.limit(10);
            while (prefix.hasRemaining() && channel.read(prefix) >= 0) {
                // keep reading until the fixed prefix is complete or the file ends
            }
            for (int i = 0; i < Math.min(MAGIC.length, prefix.position()); i++) {
                if (prefix.get(i) != MAGIC[i]) {
                    throw new CohortFormatException(file, "not a .npy file: expected the magic string \\x93NUMPY,"
                            + " found bytes " + hex(prefix, 6));
                }
            }
            if (prefix.position() < 10) {
                throw new CohortFormatException(file, "truncated header: the file has " + fileSize
                        + " bytes; a .npy file starts with a prefix of at least 10 bytes");
            }
            int major = prefix.get(6) & 0xff;
            int minor = prefix.get(7) & 0xff;
            long headerLength;
            int prefixLength;
            if (major == 1 && minor == 0) {
                headerLength = prefix.getShort(8) & 0xffff;
                prefixLength = 10;
            } else if ((major == 2 || major == 3) && minor == 0) {
                readFully(prefix, 2, fileSize);
                headerLength = prefix.getInt(8) & 0xffffffffL;
                prefixLength = 12;
            } else {
                throw new CohortFormatException(file, "unsupported .npy format version " + major + "." + minor
                        + "; supported versions are 1.0, 2.0 and 3.0");
            }
            if (prefixLength + headerLength > fileSize) {
                throw new CohortFormatException(file, "truncated header: the header length field says "
                        + headerLength + " bytes, but only " + (fileSize - prefixLength)
                        + " bytes follow the prefix");
            }
            ByteBuffer headerBytes = ByteBuffer.allocate((int) headerLength);
            while (headerBytes.hasRemaining()) {
                if (channel.read(headerBytes) < 0) {
                    throw new CohortFormatException(file, "truncated header: expected " + headerLength + " bytes");
                }
            }
            String header = new String(headerBytes.array(), major == 3 ? StandardCharsets.UTF_8
                    : StandardCharsets.ISO_8859_1);
            Map<String, Object> dict = HeaderParser.parseDict(file, header);
            for (String key : dict.keySet()) {
                if (!key.equals("descr") && !key.equals("fortran_order") && !key.equals("shape")) {
                    throw new CohortFormatException(file, "unexpected header key '" + key
                            + "'; expected exactly the keys 'descr', 'fortran_order' and 'shape'");
                }
            }
            Object descr = require(dict, "descr");
            Object fortran = require(dict, "fortran_order");
            Object shapeValue = require(dict, "shape");
            if (!(descr instanceof String d)) {
                throw new CohortFormatException(file, "unsupported dtype: found a structured dtype "
                        + HeaderParser.render(descr) + "; supported dtypes are " + supportedText());
            }
            if (!SUPPORTED_DTYPES.contains(d)) {
                throw new CohortFormatException(file, "unsupported dtype '" + d + "'" + describe(d)
                        + "; supported dtypes are " + supportedText());
            }
            this.dtype = d;
            this.itemSize = d.endsWith("8") ? 8 : 4;
            if (!(fortran instanceof Boolean f)) {
                throw new CohortFormatException(file, "header value 'fortran_order' must be True or False, found "
                        + HeaderParser.render(fortran));
            }
            if (f) {
                throw new CohortFormatException(file, "the array is stored in Fortran order (fortran_order: True);"
                        + " C order expected; save with np.ascontiguousarray");
            }
            if (!(shapeValue instanceof HeaderParser.Tuple t)) {
                throw new CohortFormatException(file, "header value 'shape' must be a tuple of integers, found "
                        + HeaderParser.render(shapeValue));
            }
            int[] dims = new int[t.items().size()];
            for (int i = 0; i < dims.length; i++) {
                Object item = t.items().get(i);
                if (!(item instanceof Long v) || v < 0 || v > Integer.MAX_VALUE) {
                    throw new CohortFormatException(file, "header value 'shape' must hold integers in [0, "
                            + Integer.MAX_VALUE + "], found " + HeaderParser.render(shapeValue));
                }
                dims[i] = (int) (long) v;
            }
            this.shape = dims;
            this.elementCount = NpyArray.elementCount(dims);
            if (elementCount > Integer.MAX_VALUE) {
                throw new CohortFormatException(file, "shape " + NpyArray.shapeText(dims) + " holds more than "
                        + Integer.MAX_VALUE + " values; expected an array small enough for one Java float array");
            }
            long expected = elementCount * itemSize;
            long found = fileSize - prefixLength - headerLength;
            if (found < expected) {
                throw new CohortFormatException(file, "truncated data: shape " + NpyArray.shapeText(dims)
                        + " with dtype '" + d + "' needs " + expected + " bytes after the header, found " + found);
            }
            if (found > expected) {
                throw new CohortFormatException(file, "unexpected trailing data: shape " + NpyArray.shapeText(dims)
                        + " with dtype '" + d + "' needs exactly " + expected + " bytes after the header, found "
                        + found);
            }
            int capacity = (int) Math.min(BUFFER_BYTES, Math.max(expected, 8));
            this.buffer = ByteBuffer.allocate(capacity)
                    .order(d.charAt(0) == '<' ? ByteOrder.LITTLE_ENDIAN : ByteOrder.BIG_ENDIAN);
            buffer.limit(0);
        }

        private void readFully(ByteBuffer prefix, int count, long fileSize) throws IOException {
            int end = prefix.position() + count;
            prefix.limit(end);
            while (prefix.hasRemaining()) {
                if (channel.read(prefix) < 0) {
                    throw new CohortFormatException(file, "truncated header: the file has " + fileSize
                            + " bytes; a .npy file starts with a prefix of at least " + end + " bytes");
                }
            }
        }

        private Object require(Map<String, Object> dict, String key) {
            Object v = dict.get(key);
            if (v == null && !dict.containsKey(key)) {
                throw new CohortFormatException(file, "header lacks the key '" + key
                        + "'; expected the keys 'descr', 'fortran_order' and 'shape', found " + dict.keySet());
            }
            return v;
        }

        /** The file being read. */
        Path file() {
            return file;
        }

        /** A copy of the array shape. */
        int[] shape() {
            return shape.clone();
        }

        /** The dtype as spelled in the header. */
        String dtype() {
            return dtype;
        }

        /** Number of values in the array. */
        long elementCount() {
            return elementCount;
        }

        /** Reads the next {@code count} values in C order into {@code dest} from {@code offset}. */
        void readFloats(float[] dest, int offset, int count) {
            if (consumed + count > elementCount) {
                throw new IllegalArgumentException("cannot read " + count + " more values from " + file + ": only "
                        + (elementCount - consumed) + " remain");
            }
            int done = 0;
            try {
                while (done < count) {
                    if (buffer.remaining() < itemSize) {
                        buffer.compact();
                        int r = channel.read(buffer);
                        buffer.flip();
                        if (r < 0 && buffer.remaining() < itemSize) {
                            throw new CohortFormatException(file, "truncated data: the file ended after "
                                    + (consumed + done) + " of " + elementCount + " values");
                        }
                        continue;
                    }
                    int k = Math.min(count - done, buffer.remaining() / itemSize);
                    if (itemSize == 4) {
                        buffer.asFloatBuffer().get(dest, offset + done, k);
                        buffer.position(buffer.position() + 4 * k);
                    } else {
                        for (int i = 0; i < k; i++) {
                            dest[offset + done + i] = (float) buffer.getDouble();
                        }
                    }
                    done += k;
                }
            } catch (IOException e) {
                throw new UncheckedIOException("cannot read " + file + ": " + e.getMessage(), e);
            }
            consumed += count;
        }

        /** Skips the next {@code count} values without reading them. */
        void skip(long count) {
            if (count < 0 || consumed + count > elementCount) {
                throw new IllegalArgumentException("cannot skip " + count + " values in " + file + ": only "
                        + (elementCount - consumed) + " remain");
            }
            long bytes = count * itemSize;
            try {
                if (bytes <= buffer.remaining()) {
                    buffer.position(buffer.position() + (int) bytes);
                } else {
                    long beyond = bytes - buffer.remaining();
                    buffer.position(0).limit(0);
                    channel.position(channel.position() + beyond);
                }
            } catch (IOException e) {
                throw new UncheckedIOException("cannot read " + file + ": " + e.getMessage(), e);
            }
            consumed += count;
        }

        @Override
        public void close() {
            try {
                channel.close();
            } catch (IOException e) {
                throw new UncheckedIOException("cannot close " + file + ": " + e.getMessage(), e);
            }
        }
    }

    private static String supportedText() {
        return "'<f4', '>f4' (float32) and '<f8', '>f8' (float64)";
    }

    private static String hex(ByteBuffer b, int n) {
        StringBuilder sb = new StringBuilder();
        int end = Math.min(n, b.position());
        for (int i = 0; i < end; i++) {
            if (i > 0) {
                sb.append(' ');
            }
            sb.append(String.format("%02x", b.get(i) & 0xff));
        }
        return sb.toString();
    }

    /** A human name for a dtype string such as {@code <i4}, or an empty string when not recognised. */
    private static String describe(String d) {
        if (d.length() < 3) {
            return "";
        }
        String kind = switch (d.charAt(1)) {
            case 'f' -> "float";
            case 'i' -> "int";
            case 'u' -> "uint";
            case 'c' -> "complex";
            case 'b' -> "bool";
            case 'U' -> "unicode string";
            case 'S' -> "byte string";
            case 'O' -> "Python object";
            case 'M' -> "datetime";
            case 'm' -> "timedelta";
            default -> null;
        };
        if (kind == null) {
            return "";
        }
        try {
            int bytes = Integer.parseInt(d.substring(2));
            if (kind.equals("float") || kind.equals("int") || kind.equals("uint") || kind.equals("complex")) {
                return " (" + kind + bytes * 8 + ")";
            }
            return " (" + kind + ")";
        } catch (NumberFormatException e) {
            return " (" + kind + ")";
        }
    }

    /** A parser for the Python literal dictionary in a .npy header. */
    static final class HeaderParser {
        /** A Python tuple. */
        record Tuple(List<Object> items) {
        }

        private final Path file;
        private final String text;
        private int pos;

        private HeaderParser(Path file, String text) {
            this.file = file;
            this.text = text;
        }

        /** Parses the header text, which must hold one dictionary with string keys. */
        static Map<String, Object> parseDict(Path file, String text) {
            HeaderParser p = new HeaderParser(file, text);
            p.skipSpace();
            if (p.peek() != '{') {
                throw p.error("expected the header to start with '{'");
            }
            Object v = p.value();
            p.skipSpace();
            if (p.pos < text.length()) {
                throw p.error("expected the end of the header after the dictionary");
            }
            @SuppressWarnings("unchecked")
            Map<String, Object> dict = (Map<String, Object>) v;
            return dict;
        }

        /** Spells a parsed value the way Python would. */
        static String render(Object v) {
            if (v == null) {
                return "None";
            }
            if (v instanceof String s) {
                return "'" + s + "'";
            }
            if (v instanceof Boolean b) {
                return b ? "True" : "False";
            }
            if (v instanceof Tuple t) {
                StringBuilder sb = new StringBuilder("(");
                for (int i = 0; i < t.items().size(); i++) {
                    sb.append(i > 0 ? ", " : "").append(render(t.items().get(i)));
                }
                return sb.append(t.items().size() == 1 ? ",)" : ")").toString();
            }
            if (v instanceof List<?> l) {
                StringBuilder sb = new StringBuilder("[");
                for (int i = 0; i < l.size(); i++) {
                    sb.append(i > 0 ? ", " : "").append(render(l.get(i)));
                }
                return sb.append(']').toString();
            }
            if (v instanceof Map<?, ?> m) {
                StringBuilder sb = new StringBuilder("{");
                boolean first = true;
                for (Map.Entry<?, ?> e : m.entrySet()) {
                    sb.append(first ? "" : ", ").append(render(e.getKey())).append(": ").append(render(e.getValue()));
                    first = false;
                }
                return sb.append('}').toString();
            }
            return String.valueOf(v);
        }

        private CohortFormatException error(String what) {
            String shown = text.strip();
            if (shown.length() > 200) {
                shown = shown.substring(0, 200) + "...";
            }
            return new CohortFormatException(file, "malformed .npy header at character " + (pos + 1) + ": " + what
                    + "; header was: " + shown);
        }

        private char peek() {
            return pos < text.length() ? text.charAt(pos) : '\0';
        }

        private void skipSpace() {
            while (pos < text.length() && Character.isWhitespace(text.charAt(pos))) {
                pos++;
            }
        }

        private void expect(char c) {
            skipSpace();
            if (peek() != c) {
                throw error("expected '" + c + "'");
            }
            pos++;
        }

        private Object value() {
            skipSpace();
            char c = peek();
            switch (c) {
                case '{':
                    return dict();
                case '(':
                    return new Tuple(sequence('(', ')'));
                case '[':
                    return sequence('[', ']');
                case '\'':
                case '"':
                    return string();
                default:
                    break;
            }
            if (c == '-' || c == '+' || (c >= '0' && c <= '9')) {
                return integer();
            }
            if (Character.isLetter(c)) {
                int start = pos;
                while (pos < text.length() && Character.isLetterOrDigit(text.charAt(pos))) {
                    pos++;
                }
                String word = text.substring(start, pos);
                switch (word) {
                    case "True":
                        return Boolean.TRUE;
                    case "False":
                        return Boolean.FALSE;
                    case "None":
                        return null;
                    default:
                        pos = start;
                        throw error("expected True, False, None, a number, a string, a tuple, a list or a"
                                + " dictionary, found '" + word + "'");
                }
            }
            throw error(c == '\0' ? "unexpected end of header" : "unexpected character '" + c + "'");
        }

        private Map<String, Object> dict() {
            expect('{');
            Map<String, Object> out = new LinkedHashMap<>();
            skipSpace();
            while (peek() != '}') {
                skipSpace();
                if (peek() != '\'' && peek() != '"') {
                    throw error("expected a quoted dictionary key");
                }
                String key = string();
                expect(':');
                Object v = value();
                if (out.containsKey(key)) {
                    throw error("duplicate dictionary key '" + key + "'");
                }
                out.put(key, v);
                skipSpace();
                if (peek() == ',') {
                    pos++;
                    skipSpace();
                } else if (peek() != '}') {
                    throw error("expected ',' or '}'");
                }
            }
            pos++;
            return out;
        }

        private List<Object> sequence(char open, char close) {
            expect(open);
            List<Object> out = new ArrayList<>();
            skipSpace();
            while (peek() != close) {
                out.add(value());
                skipSpace();
                if (peek() == ',') {
                    pos++;
                    skipSpace();
                } else if (peek() != close) {
                    throw error("expected ',' or '" + close + "'");
                }
            }
            pos++;
            return out;
        }

        private String string() {
            char quote = text.charAt(pos++);
            StringBuilder sb = new StringBuilder();
            while (true) {
                if (pos >= text.length()) {
                    throw error("unterminated string");
                }
                char c = text.charAt(pos++);
                if (c == quote) {
                    return sb.toString();
                }
                if (c == '\\' && pos < text.length()) {
                    char e = text.charAt(pos++);
                    switch (e) {
                        case 'n' -> sb.append('\n');
                        case 't' -> sb.append('\t');
                        case 'r' -> sb.append('\r');
                        case '0' -> sb.append('\0');
                        default -> sb.append(e);
                    }
                } else {
                    sb.append(c);
                }
            }
        }

        private Long integer() {
            int start = pos;
            if (peek() == '-' || peek() == '+') {
                pos++;
            }
            int digits = pos;
            while (pos < text.length() && Character.isDigit(text.charAt(pos))) {
                pos++;
            }
            if (pos == digits) {
                pos = start;
                throw error("expected an integer");
            }
            String number = text.substring(start, pos);
            if (peek() == 'L' || peek() == 'l') {
                pos++;
            }
            if (peek() == '.' || peek() == 'e' || peek() == 'E') {
                throw error("expected an integer, found a decimal number starting '" + number + peek() + "'");
            }
            try {
                return Long.parseLong(number.startsWith("+") ? number.substring(1) : number);
            } catch (NumberFormatException e) {
                throw error("integer '" + number + "' is out of range");
            }
        }
    }
}
