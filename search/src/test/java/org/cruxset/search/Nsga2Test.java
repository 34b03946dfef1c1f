package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import io.jenetics.DoubleChromosome;
import io.jenetics.DoubleGene;
import io.jenetics.Genotype;
import io.jenetics.GaussianMutator;
import io.jenetics.Phenotype;
import io.jenetics.engine.Engine;
import io.jenetics.engine.Evaluator;
import io.jenetics.ext.SimulatedBinaryCrossover;
import io.jenetics.ext.moea.MOEA;
import io.jenetics.ext.moea.Vec;
import io.jenetics.util.ISeq;
import io.jenetics.util.RandomRegistry;
import java.util.SplittableRandom;
import org.cruxset.search.strategy.Nsga2;
import org.junit.jupiter.api.Test;

/** The NSGA-II machinery on the ZDT1 problem, whose Pareto front is known analytically. */
class Nsga2Test {
    static final int N = 30;

    static Vec<double[]> zdt1(Genotype<DoubleGene> g) {
        DoubleChromosome c = g.chromosome().as(DoubleChromosome.class);
        double f1 = c.get(0).doubleValue();
        double sum = 0;
        for (int i = 1; i < N; i++) {
            sum += c.get(i).doubleValue();
        }
        double gx = 1 + 9 * sum / (N - 1);
        return Nsga2.minimise(f1, gx * (1 - Math.sqrt(f1 / gx)));
    }

    static double hypervolume(long seed) {
        Evaluator<DoubleGene, Vec<double[]>> eval = population -> population
                .map(p -> p.isEvaluated() ? p : p.withFitness(zdt1(p.genotype()))).asISeq();
        Engine<DoubleGene, Vec<double[]>> engine = Nsga2.builder(eval, Genotype.of(DoubleChromosome.of(0, 1, N)), 100,
                new SimulatedBinaryCrossover<>(0.9, 15), new GaussianMutator<>(1.0 / N)).build();
        ISeq<Phenotype<DoubleGene, Vec<double[]>>> front = RandomRegistry.with(new SplittableRandom(seed),
                r -> engine.stream().limit(250).collect(MOEA.toParetoSet()));
        double[][] pts = front.stream().map(p -> Nsga2.objectives(p.fitness())).toArray(double[][]::new);
        return Hypervolume.of(pts, 1, 1);
    }

    // Source: Zitzler, Deb & Thiele (2000), "Comparison of multiobjective evolutionary algorithms: empirical results",
    // Evolutionary Computation 8(2): ZDT1 with n = 30 variables in [0, 1]; its Pareto front f2 = 1 - sqrt(f1) has
    // hypervolume 2/3 at reference point (1, 1) (analytic result). Simulated binary crossover (Deb & Agrawal 1995) with
// Gaussian mutation, as in NSGA-II's own experiments on continuous problems (common practice).
    @Test
    void zdt1FrontIsReachedWithPopulation100In250Generations() {
        double hv = hypervolume(42);
        assertTrue(hv >= 0.65 && hv <= 2.0 / 3 + 1e-9, "hypervolume " + hv + ", exact 2/3");
        assertEquals(hv, hypervolume(42), 0.0, "same seed, same front");
    }
}
