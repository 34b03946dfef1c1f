package org.cruxset.scoring.eval;

import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.HexFormat;

/** SHA-256 of scored data in model input space: sample ids, labels, lengths and every value, plus class labels. */
public final class DataHash {
    private DataHash() {
    }

    /** The hash of {@code inputs} as lowercase hex. */
    public static String of(ModelInputs inputs) {
        MessageDigest md;
        try {
            md = MessageDigest.getInstance("SHA-256");
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException(e);
        }
        ByteBuffer head = ByteBuffer.allocate(16).order(ByteOrder.LITTLE_ENDIAN);
        head.putInt(inputs.size()).putInt(inputs.batch().regions()).putInt(inputs.classLabels().size()).putInt(1);
        md.update(head.array());
        for (String c : inputs.classLabels()) {
            text(md, c);
        }
        ByteBuffer buf = ByteBuffer.allocate(1 << 16).order(ByteOrder.LITTLE_ENDIAN);
        for (int s = 0; s < inputs.size(); s++) {
            text(md, inputs.sampleIds().get(s));
            text(md, inputs.subjects().get(s));
            ByteBuffer b = ByteBuffer.allocate(8).order(ByteOrder.LITTLE_ENDIAN);
            b.putInt(inputs.label(s)).putInt(inputs.batch().length(s));
            md.update(b.array());
            float[] x = inputs.batch().series(s);
            int i = 0;
            while (i < x.length) {
                buf.clear();
                while (i < x.length && buf.remaining() >= 4) {
                    buf.putFloat(x[i++]);
                }
                md.update(buf.array(), 0, buf.position());
            }
        }
        return HexFormat.of().formatHex(md.digest());
    }

    private static void text(MessageDigest md, String s) {
        byte[] b = s.getBytes(StandardCharsets.UTF_8);
        md.update(ByteBuffer.allocate(4).order(ByteOrder.LITTLE_ENDIAN).putInt(b.length).array());
        md.update(b);
    }
}
