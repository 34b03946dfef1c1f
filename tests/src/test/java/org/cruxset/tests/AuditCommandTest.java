package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import org.cruxset.scoring.simulate.TruthFile;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code cruxset audit} on the demo: after a ranked and a genetic search in the same folder, the single-lesion
 * ranking's critical prefix is audited against the smallest critical set the searches found.
 */
class AuditCommandTest {
    static String[] args(Path out, String... more) {
        String[] base = {"--model", DemoData.MODEL.toString(), "--cohort", DemoData.COHORT.toString(), "--out",
            out.toString(), "--threads", "1"};
        String[] all = new String[more.length + base.length];
        System.arraycopy(more, 0, all, 0, more.length);
        System.arraycopy(base, 0, all, more.length, base.length);
        return all;
    }

    @Test
    void theSingleLesionPrefixIsShownNotMinimalWhenSearchFoundASmallerSet(@TempDir Path out) {
        int minimum = TruthFile.decoderMinimumSets(DemoData.TRUTH).get(0).size();
        Cli.run(args(out, "search", "--strategy", "ranked", "--budget", "300")).requireSuccess();
        Cli.run(args(out, "search", "--strategy", "genetic", "--budget", "800", "--seed", "2")).requireSuccess();
        CruxsetCommand.Captured a = Cli.run(args(out, "audit", "--ranking", out.resolve("ranking-single-lesion.tsv").toString(),
                "--random", "30", "--max-k", "5")).requireSuccess();
        String o = a.out();
        assertTrue(o.contains("Caution: a virtual lesion of a decoder describes the decoder"), o);
        assertTrue(o.contains("Smallest critical set in the store: " + minimum + " regions"), o);
        assertTrue(o.contains("irreducible (every one-region-smaller subset scored: none critical)"), o);
        java.util.regex.Matcher m = java.util.regex.Pattern.compile("Smallest critical prefix: \\d+ units, (\\d+) "
                + "regions").matcher(o);
        assertTrue(m.find(), o);
        int prefix = Integer.parseInt(m.group(1));
        assertTrue(prefix > minimum, "on the demo the single-lesion prefix is larger than the minimum: " + o);
        assertTrue(o.contains("Verdict: NOT MINIMAL. A search found a critical set of " + minimum + " regions"), o);
        assertTrue(o.contains("permutation p"), o);
        CruxsetCommand.Captured bad = Cli.run(args(out, "audit"));
        assertEquals(2, bad.exit(), bad.err());
        assertTrue(bad.err().contains("--ranking"), bad.err());
    }
}
