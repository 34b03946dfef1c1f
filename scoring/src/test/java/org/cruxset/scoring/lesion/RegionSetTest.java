package org.cruxset.scoring.lesion;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class RegionSetTest {
    @Test
    void containsAllAcrossWordBoundaries() {
        RegionSet a = RegionSet.of(130, 1, 63, 64, 129);
        assertTrue(a.containsAll(RegionSet.of(130, 63, 64)));
        assertTrue(a.containsAll(RegionSet.empty(130)));
        assertTrue(a.containsAll(a));
        assertFalse(a.containsAll(RegionSet.of(130, 1, 65)));
        assertFalse(RegionSet.empty(130).containsAll(a));
        assertThrows(IllegalArgumentException.class, () -> a.containsAll(RegionSet.of(64, 1)));
    }

    @Test
    void containsAllAgreesWithSetDifference() {
        // Reference: B ⊆ A exactly when B \ A is empty (set algebra).
        SplittableRandom rng = new SplittableRandom(5);
        for (int t = 0; t < 2000; t++) {
            RegionSet a = random(rng, 150, 0.6);
            RegionSet b = rng.nextBoolean() ? random(rng, 150, 0.1) : a.intersect(random(rng, 150, 0.5));
            assertEquals(b.minus(a).isEmpty(), a.containsAll(b), a + " " + b);
        }
    }

    static RegionSet random(SplittableRandom rng, int n, double p) {
        RegionSet s = RegionSet.empty(n);
        for (int i = 0; i < n; i++) {
            if (rng.nextDouble() < p) {
                s = s.with(i);
            }
        }
        return s;
    }
}
