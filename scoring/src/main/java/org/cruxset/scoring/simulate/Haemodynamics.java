package org.cruxset.scoring.simulate;

/** The canonical double-gamma haemodynamic response (common practice) and convolution with it. */
public final class Haemodynamics {
    private Haemodynamics() {
    }

    /**
     * The response sampled every {@code interval} seconds over 32 s, normalised to unit peak:
     * {@code h(t) = t^5 e^-t / 5! - (1/6) t^15 e^-t / 15!} (peak near 5 s, undershoot near 15 s).
     */
    public static double[] kernel(double interval) {
        int n = Math.max(1, (int) Math.ceil(32.0 / interval));
        double[] h = new double[n];
        double max = 0;
        for (int i = 0; i < n; i++) {
            double t = i * interval;
            h[i] = gamma(t, 6) - gamma(t, 16) / 6.0;
            max = Math.max(max, h[i]);
        }
        for (int i = 0; i < n; i++) {
            h[i] /= max;
        }
        return h;
    }

    private static double gamma(double t, int shape) {
        if (t <= 0) {
            return 0;
        }
        double logFact = 0;
        for (int k = 2; k < shape; k++) {
            logFact += Math.log(k);
        }
        return Math.exp((shape - 1) * Math.log(t) - t - logFact);
    }

    /** Causal convolution {@code y[t] = sum_k h[k] x[t-k]}, same length as {@code x}. */
    public static double[] convolve(double[] x, double[] h) {
        double[] y = new double[x.length];
        for (int t = 0; t < x.length; t++) {
            double s = 0;
            for (int k = 0; k < h.length && k <= t; k++) {
                s += h[k] * x[t - k];
            }
            y[t] = s;
        }
        return y;
    }

    /** Scales {@code x} in place to zero mean and unit standard deviation. */
    public static double[] standardise(double[] x) {
        double m = 0;
        for (double v : x) {
            m += v;
        }
        m /= x.length;
        double ss = 0;
        for (double v : x) {
            ss += (v - m) * (v - m);
        }
        double sd = Math.sqrt(ss / x.length);
        for (int i = 0; i < x.length; i++) {
            x[i] = sd > 0 ? (x[i] - m) / sd : 0;
        }
        return x;
    }
}
