package org.cruxset.surrogate;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Objects;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.function.ToDoubleFunction;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Surrogate-assisted minimisation of an expensive function of lesion sets, as in BOCS (Baptista &amp; Poloczek 2018):
 * after {@code initial} random sets, each round fits a {@link SparseQuadraticModel} on every set evaluated so far,
 * takes one posterior draw (Thompson sampling), minimises draw(x) + λ|x| over sets (exhaustively up to 16 regions,
 * else by simulated annealing from the best set so far) and evaluates the minimiser, or the best set of the draw not
 * evaluated yet. Seeded.
 */
public final class ThompsonSearch {
    /** Settings: initial random sets, total evaluations, the size penalty λ, sweeps per fit, annealing steps. */
    public record Settings(int initial, int evaluations, double lambda, int burnIn, int annealSteps, long seed) {
        public Settings {
            if (initial < 1 || evaluations < initial || burnIn < 0 || annealSteps < 1) {
                throw new IllegalArgumentException("need 1 <= initial <= evaluations, burnIn >= 0, annealSteps >= 1");
            }
        }
    }

    /** The sets evaluated in order, their values, and the best. */
    public record Result(List<RegionSet> evaluated, double[] values, RegionSet best, double bestValue) {
    }

    private ThompsonSearch() {
    }

    /** Minimises {@code f} over sets of {@code regions} regions, pair terms among {@code pool}. */
    public static Result minimise(int regions, int[] pool, ToDoubleFunction<RegionSet> f, Settings settings) {
        Objects.requireNonNull(f, "f");
        QuadraticFeatures features = new QuadraticFeatures(regions, pool);
        SplittableRandom rng = new SplittableRandom(settings.seed());
        List<RegionSet> seen = new ArrayList<>();
        Set<RegionSet> done = new HashSet<>();
        List<Double> values = new ArrayList<>();
        while (seen.size() < settings.initial()) {
            RegionSet s = random(regions, rng);
            if (done.add(s)) {
                seen.add(s);
                values.add(f.applyAsDouble(s));
            }
        }
        while (seen.size() < settings.evaluations()) {
            SparseQuadraticModel model = new SparseQuadraticModel(features, settings.burnIn(), 1, rng.nextLong());
            double[] y = values.stream().mapToDouble(Double::doubleValue).toArray();
            model.fit(seen, y);
            double[] beta = model.coefficients();
            RegionSet next = regions <= 16 ? exhaustive(regions, features, beta, settings.lambda(), done)
                    : anneal(regions, features, beta, settings, bestOf(seen, values), done, rng);
            if (next == null) {
                break;
            }
            done.add(next);
            seen.add(next);
            values.add(f.applyAsDouble(next));
        }
        int best = 0;
        for (int i = 1; i < values.size(); i++) {
            if (values.get(i) < values.get(best)) {
                best = i;
            }
        }
        return new Result(List.copyOf(seen), values.stream().mapToDouble(Double::doubleValue).toArray(), seen.get(best),
                values.get(best));
    }

    private static RegionSet random(int regions, SplittableRandom rng) {
        List<Integer> pos = new ArrayList<>();
        for (int i = 0; i < regions; i++) {
            if (rng.nextBoolean()) {
                pos.add(i);
            }
        }
        return RegionSet.of(regions, pos.stream().mapToInt(Integer::intValue).toArray());
    }

    private static RegionSet bestOf(List<RegionSet> seen, List<Double> values) {
        int best = 0;
        for (int i = 1; i < values.size(); i++) {
            if (values.get(i) < values.get(best)) {
                best = i;
            }
        }
        return seen.get(best);
    }

    private static double acquisition(QuadraticFeatures features, double[] beta, double lambda, RegionSet s) {
        double[] x = features.of(s);
        return Linear.dot(x, beta) + lambda * s.size();
    }

    /** The set not yet evaluated with the lowest acquisition, over all 2^regions sets. */
    private static RegionSet exhaustive(int regions, QuadraticFeatures features, double[] beta, double lambda,
                                        Set<RegionSet> done) {
        RegionSet best = null;
        double bestValue = Double.POSITIVE_INFINITY;
        for (int bits = 0; bits < 1 << regions; bits++) {
            int[] pos = new int[Integer.bitCount(bits)];
            int k = 0;
            for (int i = 0; i < regions; i++) {
                if ((bits >> i & 1) == 1) {
                    pos[k++] = i;
                }
            }
            RegionSet s = RegionSet.of(regions, pos);
            if (done.contains(s)) {
                continue;
            }
            double v = acquisition(features, beta, lambda, s);
            if (v < bestValue) {
                bestValue = v;
                best = s;
            }
        }
        return best;
    }

    /** Simulated annealing over single-region flips from {@code start} ({@link Annealing}); the best new set seen. */
    private static RegionSet anneal(int regions, QuadraticFeatures features, double[] beta, Settings settings,
                                    RegionSet start, Set<RegionSet> done, SplittableRandom rng) {
        return Annealing.bestUnseen(start, s -> acquisition(features, beta, settings.lambda(), s),
                settings.annealSteps(), 1.0, 1e-3, done, true, rng);
    }
}
