package org.cruxset.scoring.kernel;

/**
 * The hot loops of the native engines: the float32 matrix product their projections and recurrences run through,
 * and the element-wise cell updates. Two implementations, {@link ScalarKernels} (plain Java the JIT vectorises where
 * it can) and {@link VectorKernels} (the JDK Vector API, register-blocked); {@link Kernels#get()} chooses. Both
 * perform the same floating-point operations in the same order, so they give identical floats.
 */
public interface EngineKernels {
    /**
     * {@code out[i][0..m) += Σ_{j<k} in[i][off + j] · w[j][0..m)} for rows {@code i < rows}; each output element
     * accumulates its k products in order of j with fused multiply-adds.
     */
    void gemm(float[][] in, int off, float[][] w, float[][] out, int rows, int k, int m);

    /** {@code w[k][m]} laid out for {@link #gemm(float[][], int, PackedMatrix, float[][], int)} on these kernels. */
    PackedMatrix pack(float[][] w, int m);

    /** The product of {@link #gemm(float[][], int, float[][], float[][], int, int, int)} with a packed matrix. */
    void gemm(float[][] in, int off, PackedMatrix w, float[][] out, int rows);

    /**
     * One step of a GRU cell with linear_before_reset for one sample: {@code x} holds the input projections of z, r,
     * h (biases included, Rb for z and r too), {@code g} the recurrent ones without Rb_h, {@code rbh3} has Rb_h at
     * [2H, 3H); updates {@code h} in place. {@code s} (3H) and {@code c} (H) are scratch.
     */
    void gruLinearBeforeReset(float[] x, float[] g, float[] rbh3, float[] h, float[] s, float[] c, int hid);

    /** The z and r gates of a GRU cell without linear_before_reset: writes z into {@code z} and {@code r⊙h} into {@code rh}. */
    void gruResetGates(float[] x, float[] g, float[] h, float[] z, float[] rh, float[] s, float[] c, int hid);

    /** The candidate and update of a GRU cell without linear_before_reset, {@code g} holding {@code R_h·(r⊙h)}; updates {@code h}. */
    void gruCandidate(float[] x, float[] g, float[] rbh, float[] z, float[] h, float[] c, int hid);

    /**
     * One step of an LSTM cell for one sample: {@code x} holds the gates' pre-activations i, o, f, c̃ (input and
     * recurrent products and both biases summed); updates {@code c} and {@code h} in place: {@code c = σ(f) ⊙ c +
     * σ(i) ⊙ tanh(c̃)}, {@code h = σ(o) ⊙ tanh(c)}. {@code s} (at least 3H) is scratch.
     */
    void lstmCell(float[] x, float[] h, float[] c, float[] s, int hid);

    /** A short name for reports: {@code vector-512}, {@code scalar}, ... */
    String name();
}
