package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Tag;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * Many sets through the scorer and store under a small fixed heap: the run must finish (memory does not grow with the
 * sets scored) and report sets per second and store size. CI runs 60,000 sets under -Xmx128m (an unbounded score cache
 * would need about 140 MB for them); {@code -Plong} runs 1,000,000 under -Xmx512m.
 */
class SoakTest {
    private static String soak(Path dir, String heap, long sets) throws Exception {
        List<String> cmd = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                heap, "-Dcruxset.scoreCacheMB=16", "-cp", System.getProperty("java.class.path"),
                "org.cruxset.search.cli.CruxsetCommand", "bench", "--suite", "soak", "--sets", Long.toString(sets)));
        Path log = dir.resolve("soak.log");
        Process p = new ProcessBuilder(cmd).redirectErrorStream(true).redirectOutput(log.toFile()).start();
        assertTrue(p.waitFor(60, TimeUnit.MINUTES), "the soak run finishes");
        String out = Files.readString(log);
        assertEquals(0, p.exitValue(), out);
        System.out.println(out);
        return out;
    }

    private static void check(String out, long sets) {
        Matcher m = Pattern.compile("Scored ([0-9,]+) sets of ([0-9]+) samples in .* s: ([0-9]+) sets/s\\. Store ([0-9,]+) "
                + "bytes: ([0-9]+) bytes per scored set").matcher(out);
        assertTrue(m.find(), out);
        assertEquals(sets, Long.parseLong(m.group(1).replace(",", "")));
        int samples = Integer.parseInt(m.group(2));
        double perSet = Double.parseDouble(m.group(5));
        assertTrue(perSet >= 8.0 * samples && perSet < 8.0 * samples + 2048, "about 8 bytes per sample plus a row's "
                + "overhead: " + perSet + " bytes per set at " + samples + " samples");
    }

    @Test
    void sixtyThousandSetsUnderAHundredAndTwentyEightMegabytes(@TempDir Path dir) throws Exception {
        check(soak(dir, "-Xmx128m", 60_000), 60_000);
    }

    @Test
    @Tag("long")
    void aMillionSetsUnderFiveHundredAndTwelveMegabytes(@TempDir Path dir) throws Exception {
        check(soak(dir, "-Xmx512m", 1_000_000), 1_000_000);
    }
}
