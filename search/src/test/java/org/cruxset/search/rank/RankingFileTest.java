package org.cruxset.search.rank;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.CohortFormatException;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.lesion.RegionSet;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The ranking TSV: round trip, prefixes, and errors that name the line. */
class RankingFileTest {
    static Atlas atlas() {
        List<Region> rs = new ArrayList<>();
        String[] nets = {"arbor", "beacon"};
        for (int i = 0; i < 6; i++) {
            rs.add(new Region(i + 1, nets[i / 3] + "-0" + (i % 3 + 1), nets[i / 3]));
        }
        return Atlas.of(rs);
    }

    private static final String HEAD = "# cruxset ranking; units: regions; complete: no; part: search; value: drop\n"
            + "rank\tunit\tvalue\tsource\n";

    private static CohortFormatException bad(Path dir, String text) throws Exception {
        Path f = dir.resolve("r.tsv");
        Files.writeString(f, text);
        return assertThrows(CohortFormatException.class, () -> RankingFile.read(f, atlas()));
    }

    @Test
    void roundTripsAndGivesNestedPrefixes(@TempDir Path dir) {
        Ranking r = new Ranking(Ranking.Kind.REGIONS, List.of("beacon-02", "arbor-01", "arbor-03"), List.of(0.5, 0.25,
                -0.125), List.of("single-lesion", "single-lesion", "manual"), false, "search", "drop; in p(true)");
        Path f = dir.resolve("ranking.tsv");
        RankingFile.write(f, r);
        Ranking back = RankingFile.read(f, atlas());
        assertEquals(r.units(), back.units());
        assertEquals(r.values(), back.values());
        assertEquals(r.sources(), back.sources());
        assertEquals("drop, in p(true)", back.meaning());
        List<RegionSet> p = back.prefixes(atlas());
        assertEquals(RegionSet.of(6, 4), p.get(0));
        assertEquals(RegionSet.of(6, 0, 2, 4), p.get(2));
        Ranking nets = new Ranking(Ranking.Kind.NETWORKS, List.of("network:beacon", "network:arbor"), List.of(2.0, 1.0),
                List.of("x", "x"), true, "all", "v");
        RankingFile.write(f, nets);
        assertEquals(RegionSet.of(6, 3, 4, 5), RankingFile.read(f, atlas()).prefixes(atlas()).get(0));
    }

    @Test
    void badRankingsNameTheLine(@TempDir Path dir) throws Exception {
        CohortFormatException unknown = bad(dir, HEAD + "1\tarbor-01\t0.5\ts\n2\tarbor-9\t0.1\ts\n");
        assertEquals(4, unknown.line());
        assertTrue(unknown.getMessage().contains("arbor-9") && unknown.getMessage().contains("arbor-01"),
                unknown.getMessage());
        CohortFormatException twice = bad(dir, HEAD + "1\tarbor-01\t0.5\ts\n2\tarbor-01\t0.1\ts\n");
        assertTrue(twice.getMessage().contains("ranked twice (first on line 3)"), twice.getMessage());
        CohortFormatException kind = bad(dir, HEAD + "1\tnetwork:arbor\t0.5\ts\n");
        assertEquals(3, kind.line());
        assertTrue(kind.getMessage().contains("is a network but the header says 'units: regions'"), kind.getMessage());
        CohortFormatException order = bad(dir, HEAD + "2\tarbor-01\t0.5\ts\n");
        assertTrue(order.getMessage().contains("rank 2 out of order: expected 1"), order.getMessage());
        CohortFormatException value = bad(dir, HEAD + "1\tarbor-01\thigh\ts\n");
        assertTrue(value.getMessage().contains("value 'high' is not a number"), value.getMessage());
        CohortFormatException header = bad(dir, "rank\tunit\tvalue\tsource\n1\tarbor-01\t1\ts\n");
        assertEquals(1, header.line());
        CohortFormatException complete = bad(dir, HEAD.replace("complete: no", "complete: yes") + "1\tarbor-01\t1\ts\n");
        assertTrue(complete.getMessage().contains("1 of 6 regions are ranked"), complete.getMessage());
    }

    @Test
    void aConsumerThatNeedsACompleteRankingSaysSo() {
        Ranking partial = new Ranking(Ranking.Kind.REGIONS, List.of("arbor-01"), List.of(1.0), List.of("s"), false,
                "search", "v");
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> RankingFile.requireComplete(partial, "the audit"));
        assertTrue(e.getMessage().startsWith("the audit needs a complete ranking"), e.getMessage());
    }
}
