package org.cruxset.scoring.kernel;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import java.util.Optional;
import java.util.SplittableRandom;
import org.cruxset.scoring.internal.Parallel;

/**
 * What this machine can do, for the benchmark's ratios: a blocked float32 matrix product on the engine kernels,
 * measured in the running JVM, and the theoretical fused multiply-add peak where the operating system reports the
 * vector width and the clock.
 */
public final class MachineReference {
    /** Rows, depth and columns of the reference product. */
    public static final int ROWS = 2048;
    public static final int DEPTH = 512;
    public static final int COLUMNS = 768;

    private MachineReference() {
    }

    /**
     * The theoretical float32 peak: cores × 2 FMA units × 2 flops × lanes × clock. The lanes come from the CPU flags
     * (avx512f: 16, avx2 or fma: 8, else 4), the clock from "cpu MHz", both as /proc/cpuinfo reports them; two FMA
     * units per core is an assumption (common practice for current x86 server cores), and a reported base clock
     * below the boost clock understates the peak.
     */
    public record Peak(double gflops, int cores, int lanes, double ghz, String basis) {
    }

    /** The peak from /proc/cpuinfo, or empty where the file or its fields are missing. */
    public static Optional<Peak> reportedPeak() {
        Path info = Path.of("/proc/cpuinfo");
        if (!Files.isReadable(info)) {
            return Optional.empty();
        }
        try {
            return parsePeak(Files.readAllLines(info), Runtime.getRuntime().availableProcessors());
        } catch (IOException e) {
            return Optional.empty();
        }
    }

    static Optional<Peak> parsePeak(List<String> lines, int cores) {
        double mhz = Double.NaN;
        String flags = null;
        for (String line : lines) {
            int colon = line.indexOf(':');
            if (colon < 0) {
                continue;
            }
            String key = line.substring(0, colon).strip();
            String value = line.substring(colon + 1).strip();
            if (key.equals("cpu MHz") && Double.isNaN(mhz)) {
                try {
                    mhz = Double.parseDouble(value);
                } catch (NumberFormatException e) {
                    return Optional.empty();
                }
            } else if (key.equals("flags") && flags == null) {
                flags = " " + value + " ";
            }
        }
        if (Double.isNaN(mhz) || flags == null || !(mhz > 0)) {
            return Optional.empty();
        }
        int lanes = flags.contains(" avx512f ") ? 16 : flags.contains(" avx2 ") || flags.contains(" fma ") ? 8 : 4;
        double ghz = mhz / 1000;
        String basis = String.format(Locale.ROOT, "%d cores x 2 FMA units x 2 flops x %d float lanes x %.2f GHz "
                + "(lanes from the CPU flags, clock as /proc/cpuinfo reports it; 2 FMA units per core assumed)",
                cores, lanes, ghz);
        return Optional.of(new Peak(cores * 2.0 * 2 * lanes * ghz, cores, lanes, ghz, basis));
    }

    /**
     * GFLOP/s of {@code C[ROWS][COLUMNS] += A[ROWS][DEPTH] · B[DEPTH][COLUMNS]} on {@code kernels} with B packed,
     * rows split in blocks of 64 over {@code threads} threads: the best of {@code reps} timed rounds of 8 products,
     * after two untimed rounds.
     */
    public static double blockedProduct(EngineKernels kernels, int threads, int reps) {
        SplittableRandom rng = new SplittableRandom(3);
        float[][] a = new float[ROWS][DEPTH];
        float[][] b = new float[DEPTH][COLUMNS];
        float[][] c = new float[ROWS][COLUMNS];
        for (float[] row : a) {
            for (int j = 0; j < DEPTH; j++) {
                row[j] = (float) (rng.nextDouble() - 0.5);
            }
        }
        for (float[] row : b) {
            for (int j = 0; j < COLUMNS; j++) {
                row[j] = (float) (rng.nextDouble() - 0.5);
            }
        }
        PackedMatrix packed = kernels.pack(b, COLUMNS);
        int block = 64;
        int blocks = ROWS / block;
        float[][][] aBlocks = new float[blocks][][];
        float[][][] cBlocks = new float[blocks][][];
        for (int q = 0; q < blocks; q++) {
            aBlocks[q] = java.util.Arrays.copyOfRange(a, q * block, (q + 1) * block);
            cBlocks[q] = java.util.Arrays.copyOfRange(c, q * block, (q + 1) * block);
        }
        double best = Double.MAX_VALUE;
        for (int r = -2; r < reps; r++) {
            long t0 = System.nanoTime();
            Parallel.forRange(8 * blocks, threads, q -> kernels.gemm(aBlocks[q % blocks], 0, packed, cBlocks[q % blocks], block));
            double s = (System.nanoTime() - t0) / 1e9;
            if (r >= 0) {
                best = Math.min(best, s);
            }
        }
        return 8 * 2.0 * ROWS * DEPTH * COLUMNS / best / 1e9;
    }
}
