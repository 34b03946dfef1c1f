package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** The bundled demo runs and its committed decoder agrees with the committed truth. */
class DemoTest {
    @Test
    void demoShowsACriticalSetAndASurvivingControl() {
        Cli.Run r = Cli.run("demo", "--demo", Cli.root().resolve("demo-data").toString(), "--threads", "2").requireSuccess();
        assertTrue(r.out().contains("not causal brain function"), r.out());
        assertTrue(r.out().contains("-> CRITICAL: accuracy not significantly above chance"), r.out());
        assertTrue(r.out().contains("not critical: decoding survives"), r.out());
    }
}
