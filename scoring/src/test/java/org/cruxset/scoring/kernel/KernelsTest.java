package org.cruxset.scoring.kernel;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

/**
 * The two kernel implementations agree to the last bit (same operations in the same order), and both match a float64
 * product within float32 rounding. Runs in the default surefire execution (Vector API module present) and in the
 * fallback execution without it, where only the scalar kernels and the choice are checked.
 */
class KernelsTest {
    private static final int[] ROWS = {1, 3, 4, 5, 8, 9, 13, 17, 64};
    private static final int[] DEPTHS = {1, 2, 3, 10, 128, 131};
    private static final int[] WIDTHS = {1, 7, 15, 16, 17, 24, 33, 47, 48, 49, 63, 96, 128, 130, 300, 384};

    @Test
    void theChoiceFollowsTheModuleAndTheProperty() {
        String expected = System.getProperty("cruxset.expectKernels");
        if (expected != null) {
            // The fallback execution: no --add-modules, so auto must give the scalar kernels.
            assertEquals(expected, Kernels.get().name());
        }
        if (Kernels.vectorAvailable()) {
            assertTrue(Kernels.get().name().startsWith("vector-"), Kernels.get().name());
            assertEquals(Kernels.vector(), Kernels.choose("vector"));
        } else {
            assertEquals("scalar", Kernels.get().name());
            IllegalStateException e = assertThrows(IllegalStateException.class, () -> Kernels.choose("vector"));
            assertTrue(e.getMessage().contains("--add-modules jdk.incubator.vector"), e.getMessage());
        }
        assertEquals("scalar", Kernels.choose("scalar").name());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> Kernels.choose("fast"));
        assertTrue(e.getMessage().contains(Kernels.PROPERTY) && e.getMessage().contains("'fast'"), e.getMessage());
    }

    @Test
    void productsMatchFloat64AndAgreeBitForBitAcrossKernels() {
        SplittableRandom rng = new SplittableRandom(11);
        for (int rows : ROWS) {
            for (int k : DEPTHS) {
                for (int m : WIDTHS) {
                    int off = rng.nextInt(3);
                    float[][] in = random(rng, rows, off + k);
                    float[][] w = random(rng, k, m);
                    float[][] start = random(rng, rows, m);
                    float[][] scalar = copy(start);
                    Kernels.scalar().gemm(in, off, w, scalar, rows, k, m);
                    float[][] packed = copy(start);
                    EngineKernels s = Kernels.scalar();
                    s.gemm(in, off, s.pack(w, m), packed, rows);
                    for (int i = 0; i < rows; i++) {
                        assertArrayEquals(scalar[i], packed[i], "scalar packed, rows " + rows + " k " + k + " m " + m);
                        for (int c = 0; c < m; c++) {
                            double ref = start[i][c];
                            double mag = Math.abs(ref);
                            for (int j = 0; j < k; j++) {
                                ref += (double) in[i][off + j] * w[j][c];
                                mag += Math.abs((double) in[i][off + j] * w[j][c]);
                            }
                            // float32 accumulation: at most about k rounding errors of the running magnitude.
                            assertEquals(ref, scalar[i][c], 1e-6 * (k + 1) * mag + 1e-30,
                                    "rows " + rows + " k " + k + " m " + m);
                        }
                    }
                    if (Kernels.vectorAvailable()) {
                        EngineKernels v = Kernels.vector();
                        float[][] vec = copy(start);
                        v.gemm(in, off, w, vec, rows, k, m);
                        float[][] vp = copy(start);
                        v.gemm(in, off, v.pack(w, m), vp, rows);
                        for (int i = 0; i < rows; i++) {
                            assertArrayEquals(scalar[i], vec[i], "vector, rows " + rows + " k " + k + " m " + m);
                            assertArrayEquals(scalar[i], vp[i], "vector packed, rows " + rows + " k " + k + " m " + m);
                        }
                    }
                }
            }
        }
    }

    @Test
    void aMatrixPackedForOtherKernelsIsRefused() {
        if (!Kernels.vectorAvailable()) {
            return;
        }
        float[][] w = new float[4][8];
        PackedMatrix forScalar = Kernels.scalar().pack(w, 8);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> Kernels.vector().gemm(new float[1][4], 0, forScalar, new float[1][8], 1));
        assertTrue(e.getMessage().contains("packed for panels of 0 columns"), e.getMessage());
    }

    @Test
    void cellUpdatesAgreeAcrossKernelsAndMatchTheirDefinition() {
        SplittableRandom rng = new SplittableRandom(5);
        for (int hid : new int[] {1, 5, 8, 16, 17, 33, 128}) {
            float[] x = scaled(rng, 3 * hid, 4);
            float[] g = scaled(rng, 3 * hid, 4);
            float[] rbh3 = new float[3 * hid];
            float[] rbh = scaled(rng, hid, 1);
            System.arraycopy(rbh, 0, rbh3, 2 * hid, hid);
            float[] h0 = scaled(rng, hid, 1);
            // Definition (ONNX GRU, linear_before_reset = 1) in float64 with exact nonlinearities.
            float[] expected = new float[hid];
            for (int j = 0; j < hid; j++) {
                double z = 1 / (1 + Math.exp(-(x[j] + g[j])));
                double r = 1 / (1 + Math.exp(-(x[hid + j] + g[hid + j])));
                double n = Math.tanh(x[2 * hid + j] + r * (g[2 * hid + j] + rbh[j]));
                expected[j] = (float) ((1 - z) * n + z * h0[j]);
            }
            float[][] lbr = new float[2][];
            float[][] zs = new float[2][];
            float[][] rhs = new float[2][];
            float[][] cand = new float[2][];
            EngineKernels[] kernels = Kernels.vectorAvailable()
                    ? new EngineKernels[] {Kernels.scalar(), Kernels.vector()}
                    : new EngineKernels[] {Kernels.scalar()};
            for (int q = 0; q < kernels.length; q++) {
                EngineKernels kk = kernels[q];
                lbr[q] = h0.clone();
                kk.gruLinearBeforeReset(x, g, rbh3, lbr[q], new float[3 * hid], new float[hid], hid);
                for (int j = 0; j < hid; j++) {
                    assertEquals(expected[j], lbr[q][j], 2e-6, kk.name() + " hidden " + hid);
                }
                zs[q] = new float[hid];
                rhs[q] = new float[hid];
                kk.gruResetGates(x, g, h0, zs[q], rhs[q], new float[3 * hid], new float[hid], hid);
                cand[q] = h0.clone();
                kk.gruCandidate(x, g, rbh, zs[q], cand[q], new float[hid], hid);
                for (int j = 0; j < hid; j++) {
                    double z = 1 / (1 + Math.exp(-(x[j] + g[j])));
                    double r = 1 / (1 + Math.exp(-(x[hid + j] + g[hid + j])));
                    assertEquals(z, zs[q][j], 2e-6, kk.name());
                    assertEquals(r * h0[j], rhs[q][j], 2e-6, kk.name());
                    double n = Math.tanh(x[2 * hid + j] + g[j] + rbh[j]);
                    assertEquals((1 - zs[q][j]) * n + zs[q][j] * h0[j], cand[q][j], 2e-6, kk.name());
                }
            }
            if (kernels.length == 2) {
                assertArrayEquals(lbr[0], lbr[1], "hidden " + hid);
                assertArrayEquals(zs[0], zs[1], "hidden " + hid);
                assertArrayEquals(rhs[0], rhs[1], "hidden " + hid);
                assertArrayEquals(cand[0], cand[1], "hidden " + hid);
            }
        }
    }

    static float[][] random(SplittableRandom rng, int rows, int cols) {
        float[][] a = new float[rows][];
        for (int i = 0; i < rows; i++) {
            a[i] = scaled(rng, cols, 1);
        }
        return a;
    }

    static float[] scaled(SplittableRandom rng, int n, double scale) {
        float[] a = new float[n];
        for (int i = 0; i < n; i++) {
            a[i] = (float) ((rng.nextDouble() * 2 - 1) * scale);
        }
        return a;
    }

    static float[][] copy(float[][] a) {
        float[][] c = new float[a.length][];
        for (int i = 0; i < a.length; i++) {
            c[i] = a[i].clone();
        }
        return c;
    }
}
