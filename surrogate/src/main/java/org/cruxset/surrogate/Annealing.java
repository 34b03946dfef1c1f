package org.cruxset.surrogate;

import java.util.Set;
import java.util.SplittableRandom;
import java.util.function.ToDoubleFunction;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * Simulated annealing over lesion sets by single-region flips, for minimising an acquisition on a surrogate: geometric
 * cooling from {@code t0} to {@code t0 × finalRatio} over {@code steps} steps, Metropolis acceptance; returns the
 * lowest-valued set it visited that is not in {@code done} (null when it visited none). Seeded through {@code rng}.
 */
public final class Annealing {
    private Annealing() {
    }

    /** The best set not in {@code done} met on a chain from {@code start}; the empty set is skipped unless allowed. */
    public static RegionSet bestUnseen(RegionSet start, ToDoubleFunction<RegionSet> f, int steps, double t0,
                                       double finalRatio, Set<RegionSet> done, boolean allowEmpty,
                                       SplittableRandom rng) {
        int d = start.universe();
        RegionSet current = start;
        double value = f.applyAsDouble(current);
        RegionSet best = null;
        double bestValue = Double.POSITIVE_INFINITY;
        for (int step = 0; step < steps; step++) {
            double temperature = t0 * Math.pow(finalRatio, (double) step / steps);
            int p = rng.nextInt(d);
            RegionSet next = current.contains(p) ? current.without(p) : current.with(p);
            if (!allowEmpty && next.size() == 0) {
                continue;
            }
            double v = f.applyAsDouble(next);
            if (v <= value || rng.nextDouble() < Math.exp((value - v) / temperature)) {
                current = next;
                value = v;
                if (v < bestValue && !done.contains(next)) {
                    bestValue = v;
                    best = next;
                }
            }
        }
        return best;
    }
}
