package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/** {@code bench --suite engine} on a tiny workload prints every figure the benchmarks section quotes. */
class BenchCommandTest {
    @ParameterizedTest
    @ValueSource(strings = {"gru", "lstm"})
    void theEngineSuitePrintsRatesWorkReferencePeakAndMemory(String cell) {
        CruxsetCommand.Captured r = Cli.run("bench", "--cell", cell, "--samples", "12", "--steps", "6", "--regions", "20", "--hidden",
                "16", "--classes", "3", "--lesion-size", "3", "--sets", "8", "--threads", "2");
        assertEquals(0, r.exit(), r.err());
        String out = r.out();
        int gates = cell.equals("lstm") ? 4 : 3;
        // Useful work: (2·16·gH + 2·3·gH) per sample-step × 72 sample-steps.
        double gflop = (2.0 * 16 * gates * 16 + 2.0 * 3 * gates * 16) * 72 / 1e9;
        assertTrue(out.contains(String.format(java.util.Locale.ROOT, "Useful work per scored set: %.2f GFLOP", gflop)),
                out);
        assertTrue(out.contains("1 " + cell.toUpperCase(java.util.Locale.ROOT) + " layer of 16 units"), out);
        for (String engine : new String[] {"native", "onnxruntime \\(1 intra-op thread per run, 2 callers\\)",
            "onnxruntime \\(2 intra-op threads, 1 caller\\)"}) {
            Matcher m = Pattern.compile(engine + ": +8 sets in +[0-9.]+ s = +([0-9.]+) scored sets/s = +([0-9.]+) "
                    + "GFLOP/s useful").matcher(out);
            assertTrue(m.find(), engine + " in\n" + out);
            double rate = Double.parseDouble(m.group(1));
            assertEquals(rate * gflop, Double.parseDouble(m.group(2)), 0.05 + 0.01 * rate * gflop, out);
        }
        assertTrue(out.contains("(the faster ONNX Runtime configuration)"), out);
        assertTrue(Pattern.compile("Machine reference: blocked float32 product \\[2048 x 512\\] x \\[512 x 768\\] on "
                + "the native kernels, 2 threads: [0-9.]+ GFLOP/s").matcher(out).find(), out);
        assertTrue(out.contains("Theoretical FMA peak: "), out);
        assertTrue(out.contains("Projection cache: "), out);
        assertTrue(out.contains("Native kernels: vector-"), out);
        assertTrue(out.contains("Peak memory: heap "), out);
        assertTrue(out.contains("Gradient pass") == cell.equals("gru"), out);
        Matcher diff = Pattern.compile("Max \\|p_native - p_onnxruntime \\(1 intra-op[^|]*\\| over the 8 sets both "
                + "scored: ([0-9.e+-]+)").matcher(out);
        assertTrue(diff.find(), out);
        assertTrue(Double.parseDouble(diff.group(1)) <= 1e-4, out);
    }
}
