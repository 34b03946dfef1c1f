package org.cruxset.surrogate;

import java.util.List;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * The baseline surrogate: the score as an intercept plus one effect per lesioned region (first order only), fitted by
 * Bayesian ridge regression with a Gaussian prior of precision {@code ridge} on the effects (flat on the intercept)
 * and the noise variance estimated from the residuals. Predictive sd: sqrt(σ̂² (1 + xᵀ M⁻¹ x)), M = XᵀX + ridge·I.
 * Closed form; refits from scratch.
 */
public final class AdditiveModel implements SurrogateModel {
    private final int regions;
    private final double ridge;
    private double[] beta;
    private double[][] chol;
    private double noise;
    private int fitted;
    private long drawSeed;
    private final java.util.Map<Integer, double[]> drawn = new java.util.HashMap<>();

    /** A model over {@code regions} regions with prior precision {@code ridge} (> 0) on each region's effect. */
    public AdditiveModel(int regions, double ridge) {
        if (regions < 1 || !(ridge > 0)) {
            throw new IllegalArgumentException("regions must be at least 1 and ridge positive, found " + regions
                    + " and " + ridge);
        }
        this.regions = regions;
        this.ridge = ridge;
    }

    private double[] row(RegionSet s) {
        if (s.universe() != regions) {
            throw new IllegalArgumentException("set over " + s.universe() + " regions, the model over " + regions);
        }
        double[] x = new double[regions + 1];
        x[0] = 1;
        for (int p : s.positions()) {
            x[p + 1] = 1;
        }
        return x;
    }

    @Override
    public void fit(List<RegionSet> sets, double[] y) {
        if (sets.size() != y.length || sets.isEmpty()) {
            throw new IllegalArgumentException(sets.size() + " sets and " + y.length + " scores: need as many, at least 1");
        }
        double[][] x = new double[sets.size()][];
        for (int i = 0; i < x.length; i++) {
            x[i] = row(sets.get(i));
        }
        double[][] m = Linear.gram(x);
        m[0][0] += 1e-8;
        for (int j = 1; j <= regions; j++) {
            m[j][j] += ridge;
        }
        chol = Linear.cholesky(m);
        beta = Linear.backward(chol, Linear.forward(chol, Linear.xty(x, y)));
        double rss = 0;
        for (int i = 0; i < x.length; i++) {
            double e = y[i] - Linear.dot(x[i], beta);
            rss += e * e;
        }
        noise = rss / Math.max(1, x.length - 1);
        fitted = x.length;
        drawn.clear();
        drawSeed = java.util.Arrays.hashCode(y) * 31L + x.length;
    }

    /**
     * Draw {@code k} of the posterior of the coefficients, β + σ̂ L⁻ᵀ z (M = L Lᵀ, z standard normal from a seed fixed
     * by the fit and k), evaluated on {@code sets}.
     */
    @Override
    public double[] draw(List<RegionSet> sets, int k) {
        if (beta == null) {
            throw new IllegalStateException("the model has not been fitted");
        }
        double[] b = drawn.computeIfAbsent(k, key -> {
            java.util.SplittableRandom rng = new java.util.SplittableRandom(drawSeed * 0x9E3779B97F4A7C15L + key);
            double[] z = new double[beta.length];
            for (int j = 0; j < z.length; j++) {
                z[j] = rng.nextGaussian() * Math.sqrt(noise);
            }
            double[] u = Linear.backward(chol, z);
            double[] out = beta.clone();
            for (int j = 0; j < out.length; j++) {
                out[j] += u[j];
            }
            return out;
        });
        double[] out = new double[sets.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = Linear.dot(row(sets.get(i)), b);
        }
        return out;
    }

    @Override
    public Prediction predict(List<RegionSet> sets) {
        if (beta == null) {
            throw new IllegalStateException("the model has not been fitted");
        }
        double[] mean = new double[sets.size()];
        double[] sd = new double[sets.size()];
        for (int i = 0; i < mean.length; i++) {
            double[] x = row(sets.get(i));
            mean[i] = Linear.dot(x, beta);
            double[] v = Linear.forward(chol, x);
            sd[i] = Math.sqrt(noise * (1 + Linear.dot(v, v)));
        }
        return new Prediction(mean, sd);
    }

    /** The fitted effect of each region (the intercept left out). */
    public double[] effects() {
        if (beta == null) {
            throw new IllegalStateException("the model has not been fitted");
        }
        return java.util.Arrays.copyOfRange(beta, 1, beta.length);
    }

    @Override
    public String describe() {
        return String.format(java.util.Locale.ROOT, "additive (Bayesian ridge, precision %s): %d regions, last fit on "
                + "%d sets", ridge, regions, fitted);
    }
}
