package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** Every command's help renders cleanly (no formatting warnings) and states what it does. */
class HelpTest {
    /** Runs {@code args} and returns what picocli itself printed to the process's standard error meanwhile. */
    private static String systemErrDuring(String... args) {
        java.io.PrintStream saved = System.err;
        java.io.ByteArrayOutputStream buf = new java.io.ByteArrayOutputStream();
        System.setErr(new java.io.PrintStream(buf, true, java.nio.charset.StandardCharsets.UTF_8));
        try {
            Cli.run(args);
        } finally {
            System.setErr(saved);
        }
        return buf.toString(java.nio.charset.StandardCharsets.UTF_8);
    }

    @org.junit.jupiter.api.Test
    void theCommandListRendersWithoutWarnings() {
        String warnings = systemErrDuring("--help");
        assertFalse(warnings.contains("WARN"), warnings);
    }

    @ParameterizedTest
    @ValueSource(strings = {"demo", "simulate", "train", "info", "score", "scan", "curve", "saliency", "shapley",
        "search", "export", "bench"})
    void helpRendersWithoutWarnings(String command) {
        String warnings = systemErrDuring(command, "--help");
        assertFalse(warnings.contains("WARN"), warnings);
        CruxsetCommand.Captured r = Cli.run(command, "--help");
        assertEquals(0, r.exit(), r.err());
        assertFalse(r.err().contains("WARN") || r.out().contains("WARN"), r.err() + r.out());
        assertTrue(r.out().startsWith("Usage: cruxset " + command), r.out());
    }
}
