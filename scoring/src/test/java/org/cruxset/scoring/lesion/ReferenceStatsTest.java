package org.cruxset.scoring.lesion;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.HashMap;
import java.util.Map;
import org.cruxset.scoring.decoder.InputBatch;
import org.junit.jupiter.api.Test;

class ReferenceStatsTest {

    // Source: hand computation: region 0 pools {1, 2, 3} and {5}: mean 11/4, population variance 2.1875;
    // region 1 pools {0, 0, 0} and {4}: mean 1, variance 3.
    @Test
    void poolsEverySampleAndTimePoint() {
        InputBatch b = InputBatch.of(2, new float[][] {{1, 0, 2, 0, 3, 0}, {5, 4}}, new int[] {3, 1});
        ReferenceStats r = ReferenceStats.of(b);
        assertEquals(2, r.regions());
        assertArrayEquals(new float[] {2.75f, 1f}, r.mean());
        assertArrayEquals(new float[] {2.1875f, 3f}, r.variance());
    }

    @Test
    void copiesItsArrays() {
        float[] m = {1f, 2f};
        ReferenceStats r = new ReferenceStats(m, new float[] {1f, 1f});
        m[0] = 9f;
        r.mean()[1] = 9f;
        assertArrayEquals(new float[] {1f, 2f}, r.mean());
    }

    @Test
    void metadataRoundTripsExactly() {
        float[] m = {1f / 3, -0.0f, 1e-30f, -123456.79f, Float.MIN_VALUE, 0.1f};
        float[] v = {2f / 7, 0f, Float.MAX_VALUE, 1e-7f, 3f, 0.3f};
        ReferenceStats r = new ReferenceStats(m, v);
        Map<String, String> meta = r.toMetadata();
        assertEquals(2, meta.size());
        assertTrue(meta.containsKey("cruxset.reference.mean"));
        assertTrue(meta.containsKey("cruxset.reference.variance"));
        ReferenceStats back = ReferenceStats.fromMetadata(meta);
        assertEquals(r, back);
        assertArrayEquals(m, back.mean());
        assertArrayEquals(v, back.variance());
        assertEquals(r, ReferenceStats.fromMetadata(meta, 6));
    }

    @Test
    void metadataKeysComeInAFixedOrderSoSavedModelsAreByteIdentical() {
        // An immutable Map.copyOf iterates in an order salted per JVM: a model written from it could differ in bytes
        // between two runs with the same seed.
        Map<String, String> m = new ReferenceStats(new float[] {1f}, new float[] {2f}).toMetadata();
        assertEquals(java.util.List.of(ReferenceStats.MEAN_KEY, ReferenceStats.VARIANCE_KEY),
                java.util.List.copyOf(m.keySet()));
    }

    @Test
    void malformedMetadataNamesTheKey() {
        Map<String, String> ok = new ReferenceStats(new float[] {1f, 2f}, new float[] {3f, 4f}).toMetadata();
        assertError(with(ok, ReferenceStats.MEAN_KEY, null), "cruxset.reference.mean");
        assertError(with(ok, ReferenceStats.VARIANCE_KEY, null), "cruxset.reference.variance");
        assertError(with(ok, ReferenceStats.MEAN_KEY, "1.0,abc"), "cruxset.reference.mean");
        assertError(with(ok, ReferenceStats.VARIANCE_KEY, "1.0,,2.0"), "cruxset.reference.variance");
        assertError(with(ok, ReferenceStats.VARIANCE_KEY, "1.0,2.0,3.0"), "cruxset.reference.variance");
        assertError(with(ok, ReferenceStats.VARIANCE_KEY, "1.0,-2.0"), "cruxset.reference.variance");
        assertError(with(ok, ReferenceStats.MEAN_KEY, "1.0,NaN"), "cruxset.reference.mean");
        assertError(with(ok, ReferenceStats.MEAN_KEY, " "), "cruxset.reference.mean");
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> ReferenceStats.fromMetadata(ok, 3));
        assertTrue(e.getMessage().contains("cruxset.reference.mean") && e.getMessage().contains("3 regions"),
                e.getMessage());
    }

    private static Map<String, String> with(Map<String, String> base, String key, String value) {
        Map<String, String> m = new HashMap<>(base);
        if (value == null) {
            m.remove(key);
        } else {
            m.put(key, value);
        }
        return m;
    }

    private static void assertError(Map<String, String> meta, String key) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> ReferenceStats.fromMetadata(meta));
        assertTrue(e.getMessage().contains("metadata key " + key), e.getMessage());
    }
}
