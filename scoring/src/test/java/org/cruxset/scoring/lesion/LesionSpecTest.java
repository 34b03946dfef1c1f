package org.cruxset.scoring.lesion;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Region;
import org.junit.jupiter.api.Test;

class LesionSpecTest {
    static final Atlas ATLAS = Atlas.of(List.of(
            new Region(10, "arbor-01", "arbor"), new Region(11, "arbor-02", "arbor"),
            new Region(12, "beacon-01", "beacon"), new Region(13, "7", "beacon"), new Region(14, "cinder-01", "cinder")));

    @Test
    void namesNetworksAndIndicesCombine() {
        assertEquals(RegionSet.of(5, 0, 1, 4), LesionSpec.parse("network:arbor, cinder-01", ATLAS));
        assertEquals(RegionSet.of(5, 2), LesionSpec.parse("12", ATLAS));
        assertEquals(RegionSet.of(5, 3), LesionSpec.parse("7", ATLAS), "a region named like a number stays a name");
        assertEquals("arbor-01,cinder-01", LesionSpec.names(RegionSet.of(5, 0, 4), ATLAS));
    }

    @Test
    void unknownNamesListTheNearestValidNames() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> LesionSpec.parse("arbor-1", ATLAS));
        assertTrue(e.getMessage().contains("unknown region 'arbor-1'") && e.getMessage().contains("'arbor-01'"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> LesionSpec.parse("network:becon", ATLAS));
        assertTrue(e.getMessage().contains("nearest networks: 'beacon'"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> LesionSpec.parse("99", ATLAS));
        assertTrue(e.getMessage().contains("indices run from 10 to 14"), e.getMessage());
        e = assertThrows(IllegalArgumentException.class, () -> LesionSpec.parse("arbor-01,,", ATLAS));
        assertTrue(e.getMessage().contains("empty entry"), e.getMessage());
    }
}
