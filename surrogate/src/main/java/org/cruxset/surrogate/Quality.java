package org.cruxset.surrogate;

import org.apache.commons.math3.stat.correlation.SpearmansCorrelation;

/**
 * How well a surrogate predicted sets it had not seen: on a batch predicted before it was scored, R² = 1 − SSE/SST
 * against the batch's own mean (negative when worse than predicting that mean), Spearman ρ of predicted against
 * actual (NaN when either is constant, or with fewer than 3 sets), and the share of actual scores inside the central
 * 95% predictive intervals (mean ± 1.96 sd).
 */
public record Quality(int sets, double r2, double spearman, double coverage) {
    /** The quality of {@code prediction} against the scores {@code actual} that came afterwards. */
    public static Quality of(SurrogateModel.Prediction prediction, double[] actual) {
        double[] mean = prediction.mean();
        double[] sd = prediction.sd();
        int n = actual.length;
        if (mean.length != n) {
            throw new IllegalArgumentException(mean.length + " predictions for " + n + " scores");
        }
        if (n == 0) {
            return new Quality(0, Double.NaN, Double.NaN, Double.NaN);
        }
        double m = 0;
        for (double v : actual) {
            m += v / n;
        }
        double sse = 0;
        double sst = 0;
        int inside = 0;
        for (int i = 0; i < n; i++) {
            sse += (actual[i] - mean[i]) * (actual[i] - mean[i]);
            sst += (actual[i] - m) * (actual[i] - m);
            inside += Math.abs(actual[i] - mean[i]) <= 1.959963984540054 * sd[i] ? 1 : 0;
        }
        double r2 = sst > 0 ? 1 - sse / sst : Double.NaN;
        double rho = n >= 3 && varies(mean) && varies(actual)
                ? new SpearmansCorrelation().correlation(mean, actual) : Double.NaN;
        return new Quality(n, r2, rho, (double) inside / n);
    }

    private static boolean varies(double[] v) {
        for (double x : v) {
            if (x != v[0]) {
                return true;
            }
        }
        return false;
    }
}
