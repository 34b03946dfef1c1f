package org.cruxset.search.strategy;

import io.jenetics.Alterer;
import io.jenetics.Gene;
import io.jenetics.Genotype;
import io.jenetics.engine.Engine;
import io.jenetics.engine.Evaluator;
import io.jenetics.ext.moea.NSGA2Selector;
import io.jenetics.ext.moea.Vec;
import io.jenetics.util.Factory;

/**
 * The NSGA-II machinery (Deb, Pratap, Agarwal &amp; Meyarivan 2002) as Cruxset runs it on Jenetics: non-dominated
 * sorting with crowding distance for both offspring and survivor selection, all objectives minimised, a batch
 * {@link Evaluator} (one call per generation: every new individual of a generation is scored as one batch), and
 * every step on the calling thread, so that a run inside {@code RandomRegistry.with(seeded generator, ...)} is
 * reproducible. Jenetics' {@link Vec} dominance and Pareto-set collector treat larger as better, so objectives to
 * minimise are stored negated ({@link #minimise}, read back with {@link #objectives}) and the engine maximises.
 */
public final class Nsga2 {
    private Nsga2() {
    }

    /** An engine builder over {@code genotypes}, evaluating with {@code evaluator}, of {@code population} individuals. */
    @SafeVarargs
    public static <G extends Gene<?, G>> Engine.Builder<G, Vec<double[]>> builder(
            Evaluator<G, Vec<double[]>> evaluator, Factory<Genotype<G>> genotypes, int population,
            Alterer<G, Vec<double[]>> first, Alterer<G, Vec<double[]>>... rest) {
        return new Engine.Builder<>(evaluator, genotypes)
                .populationSize(population)
                .offspringSelector(NSGA2Selector.ofVec())
                .survivorsSelector(NSGA2Selector.ofVec())
                .alterers(first, rest)
                .maximizing()
                .executor(Runnable::run);
    }

    /** The fitness of objectives to minimise (stored negated). */
    public static Vec<double[]> minimise(double... objectives) {
        double[] v = new double[objectives.length];
        for (int i = 0; i < v.length; i++) {
            v[i] = -objectives[i];
        }
        return Vec.of(v);
    }

    /** The objectives (to minimise) of a fitness made by {@link #minimise}. */
    public static double[] objectives(Vec<double[]> fitness) {
        double[] d = fitness.data();
        double[] v = new double[d.length];
        for (int i = 0; i < v.length; i++) {
            v[i] = -d[i];
        }
        return v;
    }
}
