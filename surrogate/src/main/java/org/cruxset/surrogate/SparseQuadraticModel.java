package org.cruxset.surrogate;

import java.util.List;
import java.util.Objects;
import java.util.SplittableRandom;
import org.apache.commons.math3.distribution.GammaDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Sparse Bayesian regression of the score on first- and second-order terms of the lesion bits with a horseshoe
 * shrinkage prior, sampled by Gibbs sampling so that posterior draws are available (the surrogate model of BOCS,
 * Baptista &amp; Poloczek 2018, ICML). Model: y = b₀ + x·β + ε, ε ~ N(0, σ²), β_j ~ N(0, σ² τ² λ_j²), λ_j and τ
 * half-Cauchy, with the auxiliary-variable sampler of Makalic &amp; Schmidt 2016 (IEEE Signal Processing Letters 23):
 * every conditional is normal or inverse-gamma. The intercept b₀ has a flat prior. Each fit runs {@code burnIn} sweeps
 * then keeps {@code draws}; its cost (features, sweeps, seconds) is stated by {@link #describe()}. Refits from
 * scratch. Seeded: the same pairs and seed give the same draws.
 */
public final class SparseQuadraticModel implements SurrogateModel {
    private final QuadraticFeatures features;
    private final int burnIn;
    private final int draws;
    private final long seed;
    /** Kept draws: intercept then coefficients, per draw. */
    private double[][] samples;
    private double[] sigma2;
    private double seconds;
    private int fitted;

    /** A model over {@code features}, sampling {@code burnIn} + {@code draws} sweeps per fit from {@code seed}. */
    public SparseQuadraticModel(QuadraticFeatures features, int burnIn, int draws, long seed) {
        this.features = Objects.requireNonNull(features, "features");
        if (burnIn < 0 || draws < 1) {
            throw new IllegalArgumentException("burnIn must be at least 0 and draws at least 1, found " + burnIn
                    + " and " + draws);
        }
        this.burnIn = burnIn;
        this.draws = draws;
        this.seed = seed;
    }

    @Override
    public void fit(List<RegionSet> sets, double[] y) {
        if (sets.size() != y.length || sets.isEmpty()) {
            throw new IllegalArgumentException(sets.size() + " sets and " + y.length + " scores: need as many, at least 1");
        }
        long t0 = System.nanoTime();
        int n = sets.size();
        int p = features.size() + 1;
        double[][] x = new double[n][];
        for (int r = 0; r < n; r++) {
            double[] f = features.of(sets.get(r));
            double[] row = new double[p];
            row[0] = 1;
            System.arraycopy(f, 0, row, 1, f.length);
            x[r] = row;
        }
        double[][] gram = Linear.gram(x);
        double[] xy = Linear.xty(x, y);
        SplittableRandom rng = new SplittableRandom(seed);
        Well19937c gammaRng = new Well19937c(rng.nextLong());
        double[] lambda2 = new double[p];
        double[] nu = new double[p];
        java.util.Arrays.fill(lambda2, 1);
        java.util.Arrays.fill(nu, 1);
        double tau2 = 1;
        double xi = 1;
        double s2 = variance(y);
        double[] beta = new double[p];
        samples = new double[draws][];
        sigma2 = new double[draws];
        double[][] a = new double[p][p];
        for (int sweep = 0; sweep < burnIn + draws; sweep++) {
            // β | rest ~ N(M⁻¹Xᵀy, σ² M⁻¹), M = XᵀX + diag(1 / (τ² λ²)) (the intercept's prior precision ~ 0).
            for (int i = 0; i < p; i++) {
                System.arraycopy(gram[i], 0, a[i], 0, p);
            }
            a[0][0] += 1e-8;
            for (int j = 1; j < p; j++) {
                // Prior precisions kept within [1e-6, 1e12]: with fewer sets than features a heavy-tailed draw of
                // λ² would otherwise leave the system singular (a clamp, as horseshoe samplers commonly use).
                a[j][j] += Math.min(1e12, Math.max(1e-6, 1 / (tau2 * lambda2[j])));
            }
            double[][] l = Linear.cholesky(a);
            double[] mean = Linear.backward(l, Linear.forward(l, xy));
            double[] z = new double[p];
            for (int j = 0; j < p; j++) {
                z[j] = rng.nextGaussian();
            }
            double[] noise = Linear.backward(l, z);
            double sd = Math.sqrt(s2);
            for (int j = 0; j < p; j++) {
                beta[j] = mean[j] + sd * noise[j];
            }
            // σ² | rest ~ IG((n + p − 1)/2, (‖y − Xβ‖² + Σ β_j² / (τ² λ_j²)) / 2).
            double rss = 0;
            for (int r = 0; r < n; r++) {
                double e = y[r] - Linear.dot(x[r], beta);
                rss += e * e;
            }
            double shrink = 0;
            for (int j = 1; j < p; j++) {
                shrink += beta[j] * beta[j] / lambda2[j];
            }
            s2 = inverseGamma(gammaRng, (n + p - 1) / 2.0, (rss + shrink / tau2) / 2);
            // λ_j², ν_j, τ², ξ (Makalic & Schmidt 2016).
            for (int j = 1; j < p; j++) {
                lambda2[j] = inverseGamma(gammaRng, 1, 1 / nu[j] + beta[j] * beta[j] / (2 * tau2 * s2));
                nu[j] = inverseGamma(gammaRng, 1, 1 + 1 / lambda2[j]);
            }
            double sum = 0;
            for (int j = 1; j < p; j++) {
                sum += beta[j] * beta[j] / lambda2[j];
            }
            tau2 = inverseGamma(gammaRng, p / 2.0, 1 / xi + sum / (2 * s2));
            xi = inverseGamma(gammaRng, 1, 1 + 1 / tau2);
            if (sweep >= burnIn) {
                samples[sweep - burnIn] = beta.clone();
                sigma2[sweep - burnIn] = s2;
            }
        }
        fitted = n;
        seconds = (System.nanoTime() - t0) / 1e9;
    }

    private static double inverseGamma(Well19937c rng, double shape, double rate) {
        return 1 / new GammaDistribution(rng, shape, 1 / rate).sample();
    }

    private static double variance(double[] y) {
        double m = 0;
        for (double v : y) {
            m += v;
        }
        m /= y.length;
        double s = 0;
        for (double v : y) {
            s += (v - m) * (v - m);
        }
        return y.length > 1 && s > 0 ? s / (y.length - 1) : 1;
    }

    /** Posterior mean coefficients of the features (the intercept left out), in {@link QuadraticFeatures} order. */
    public double[] coefficients() {
        requireFit();
        double[] out = new double[features.size()];
        for (double[] d : samples) {
            for (int j = 0; j < out.length; j++) {
                out[j] += d[j + 1] / samples.length;
            }
        }
        return out;
    }

    /** One posterior draw's prediction of each set (for Thompson sampling): draw {@code k} of the kept ones. */
    public double[] draw(List<RegionSet> sets, int k) {
        requireFit();
        double[] beta = samples[Math.floorMod(k, samples.length)];
        double[] out = new double[sets.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = value(features.of(sets.get(i)), beta);
        }
        return out;
    }

    @Override
    public Prediction predict(List<RegionSet> sets) {
        requireFit();
        double[] mean = new double[sets.size()];
        double[] sd = new double[sets.size()];
        double noise = 0;
        for (double s : sigma2) {
            noise += s / sigma2.length;
        }
        for (int i = 0; i < mean.length; i++) {
            double[] f = features.of(sets.get(i));
            double m = 0;
            double m2 = 0;
            for (double[] d : samples) {
                double v = value(f, d);
                m += v;
                m2 += v * v;
            }
            m /= samples.length;
            mean[i] = m;
            sd[i] = Math.sqrt(Math.max(0, m2 / samples.length - m * m) + noise);
        }
        return new Prediction(mean, sd);
    }

    private static double value(double[] f, double[] beta) {
        double v = beta[0];
        for (int j = 0; j < f.length; j++) {
            if (f[j] != 0) {
                v += f[j] * beta[j + 1];
            }
        }
        return v;
    }

    private void requireFit() {
        if (samples == null) {
            throw new IllegalStateException("the model has not been fitted");
        }
    }

    @Override
    public String describe() {
        return String.format(java.util.Locale.ROOT, "sparse quadratic (horseshoe, Gibbs): %d features (%d regions, "
                        + "pairs within a pool of %d), %d + %d sweeps, last fit on %d sets in %.2f s", features.size(),
                features.regions(), features.pool().length, burnIn, draws, fitted, seconds);
    }
}
