package org.cruxset.search.strategy;

import io.jenetics.BitChromosome;
import io.jenetics.BitGene;
import io.jenetics.Chromosome;
import io.jenetics.Genotype;
import io.jenetics.Mutator;
import io.jenetics.MutatorResult;
import io.jenetics.Phenotype;
import io.jenetics.UniformCrossover;
import io.jenetics.engine.Engine;
import io.jenetics.engine.Evaluator;
import io.jenetics.engine.EvolutionResult;
import io.jenetics.engine.EvolutionStart;
import io.jenetics.ext.moea.Vec;
import io.jenetics.util.ISeq;
import io.jenetics.util.RandomRegistry;
import java.util.ArrayList;
import java.util.BitSet;
import java.util.Iterator;
import java.util.List;
import java.util.SplittableRandom;
import java.util.random.RandomGenerator;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.SearchContext;
import org.cruxset.search.StopSearch;
import org.cruxset.search.Strategy;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.SingleLesion;

/**
 * Multi-objective genetic search (NSGA-II, {@link Nsga2}) over lesion sets as bit strings. The two objectives, both
 * minimised: the set's size over N, and a <em>graded</em> distance from criticality, the correct samples above the most
 * a critical set may have (over the sample count), plus a small share of the mean true-class probability so that
 * sets at equal distance still differ. Critical sets all score 0 on the distance, so a critical set dominates every
 * larger one and the population gathers at the boundary of criticality rather than across all sizes (the criterion
 * as a graded objective rather than a constraint: a constraint gives non-critical sets nothing to climb).
 *
 * <p>The first population: a share {@code supersetShare} are variants of a critical superset of a ranking (single
 * lesions on the search part, or one given; {@link RankedPool#criticalSuperset}: its first {@code supersetFactor} ×
 * k regions, k the length of its smallest critical prefix), each region kept with probability 0.9, so the population
 * starts above the boundary of criticality and can shed the ranking's early regions when later ones replace them
 * (a greedy path's trap); the rest (all, when no prefix is critical) are half nested prefixes of the ranking of sizes
 * spread from 1 to {@code maxInitialSize}, half random sets of such sizes. Offspring come from uniform crossover and
 * a sparsity-aware mutation that removes {@code removals} regions and adds {@code additions} on average, whatever the
 * set's size (a plain bit-flip rate would add about N × rate regions and swamp small sets), a share {@code focus} of
 * the additions drawn from the ranking's first {@code pool} regions ({@link RankedPool}). Each generation's new
 * sets are scored as one batch. A population that goes {@code patience} generations without a smaller critical set is
 * restarted from a new first population (at most {@code restarts} times: a population caught in a trap rarely
 * leaves it, a fresh one often avoids it); the search stops after {@code generations} generations in all, or when the
 * budget or time is spent.
 */
public final class GeneticStrategy implements Strategy {
    /** Settings, each with a default chosen on the search benchmark. */
    public record Settings(int population, double crossover, double additions, double removals, int maxInitialSize,
                           int generations, int patience, int restarts, String grading, int pool, double focus,
                           double supersetFactor, double supersetShare) {
        public Settings {
            if (!(focus >= 0 && focus <= 1)) {
                throw new IllegalArgumentException("focus must be within [0, 1], found " + focus);
            }
            if (pool < 0) {
                throw new IllegalArgumentException("pool must be at least 0, found " + pool);
            }
            new Grading(grading);
            if (!(supersetFactor >= 1)) {
                throw new IllegalArgumentException("supersetFactor must be at least 1, found " + supersetFactor);
            }
            if (!(supersetShare >= 0 && supersetShare <= 1)) {
                throw new IllegalArgumentException("supersetShare must be within [0, 1], found " + supersetShare);
            }
        }

        /** The defaults. */
        public static Settings defaults() {
            return new Settings(100, 0.2, 1.0, 1.5, 48, 2000, 150, 3, "mixed", 48, 0.5, 1.5, 1.0);
        }
    }

    private final Settings settings;
    private final Ranking given;
    private final SurrogateScreen screen;

    /** A genetic search with {@code settings}, seeded from {@code ranking} (single lesions when null). */
    public GeneticStrategy(Settings settings, Ranking ranking) {
        this(settings, ranking, null);
    }

    /**
     * A genetic search whose generations pass through {@code screen} (null: every new set is scored), see
     * {@link SurrogateScreen}.
     */
    public GeneticStrategy(Settings settings, Ranking ranking, SurrogateScreen screen) {
        this.settings = settings;
        this.given = ranking;
        this.screen = screen;
    }

    /** The screen, or null. */
    public SurrogateScreen screen() {
        return screen;
    }

    @Override
    public List<String> notes() {
        return screen == null ? List.of() : screen.notes();
    }

    @Override
    public String name() {
        return "genetic";
    }

    @Override
    public String settings() {
        return "population=" + settings.population() + ", crossover=" + settings.crossover() + ", additions="
                + settings.additions() + ", removals=" + settings.removals() + ", maxInitialSize="
                + settings.maxInitialSize() + ", generations=" + settings.generations() + ", patience="
                + settings.patience() + ", restarts=" + settings.restarts() + ", grading=" + settings.grading()
                + ", pool=" + settings.pool() + ", focus=" + settings.focus() + ", ranking="
                + (given == null ? SingleLesion.SOURCE : "given") + (screen == null ? "" : ", " + screen.describe());
    }

    @Override
    public void run(SearchContext ctx) {
        int n = ctx.regions();
        RankedPool pool = RankedPool.of(ctx, given, settings.pool(), settings.focus());
        List<Integer> order = pool.order();
        Grading grading = new Grading(settings.grading());
        RegionSet superset = settings.supersetShare() > 0 ? pool.criticalSuperset(ctx, settings.supersetFactor()) : null;
        Evaluator<BitGene, Vec<double[]>> evaluator = population -> {
            List<Phenotype<BitGene, Vec<double[]>>> all = new ArrayList<>(population.asList());
            List<RegionSet> batch = new ArrayList<>();
            List<Integer> at = new ArrayList<>();
            for (int i = 0; i < all.size(); i++) {
                if (!all.get(i).isEvaluated()) {
                    batch.add(toSet(all.get(i).genotype(), n));
                    at.add(i);
                }
            }
            double[] grades = screen == null ? grading.grades(ctx, batch) : screen.grades(ctx, grading, batch);
            for (int j = 0; j < at.size(); j++) {
                int size = batch.get(j).size();
                all.set(at.get(j), all.get(at.get(j)).withFitness(Nsga2.minimise((double) size / n, grades[j])));
            }
            return ISeq.of(all);
        };
        SplittableRandom rng = ctx.random("genetic");
        Engine<BitGene, Vec<double[]>> engine = Nsga2.builder(evaluator, Genotype.of(BitChromosome.of(n, 0.05)),
                settings.population(), new UniformCrossover<>(settings.crossover(), 0.5),
                new SparseMutator(settings.additions(), settings.removals(), pool)).build();
        int generations = 0;
        for (int restart = 0; restart <= settings.restarts() && generations < settings.generations(); restart++) {
            if (restart > 0 && screen != null) {
                screen.restarted();
            }
            ISeq<Phenotype<BitGene, Vec<double[]>>> first = initial(n, order, rng, restart, superset);
            int left = settings.generations() - generations;
            generations += RandomRegistry.with(rng.split(), r -> evolve(ctx, engine, first, left));
        }
    }

    /**
     * Runs one population until {@code patience} generations pass without a smaller critical set in it; returns the
     * generations run.
     */
    private int evolve(SearchContext ctx, Engine<BitGene, Vec<double[]>> engine,
                       ISeq<Phenotype<BitGene, Vec<double[]>>> first, int maxGenerations) {
        Iterator<EvolutionResult<BitGene, Vec<double[]>>> it = engine.stream(() -> EvolutionStart.of(first, 1))
                .iterator();
        int best = Integer.MAX_VALUE;
        int lastImprovement = 0;
        int g = 0;
        int n = ctx.regions();
        while (g < maxGenerations && it.hasNext()) {
            EvolutionResult<BitGene, Vec<double[]>> result = next(it);
            g++;
            int b = -1;
            for (Phenotype<BitGene, Vec<double[]>> p : result.population()) {
                double[] o = Nsga2.objectives(p.fitness());
                int size = (int) Math.round(o[0] * n);
                if (o[1] == 0 && size > 0 && (b < 0 || size < b)) {
                    b = size;
                }
            }
            if (b >= 0 && b < best) {
                best = b;
                lastImprovement = g;
            }
            if (g - lastImprovement >= settings.patience()) {
                break;
            }
        }
        return g;
    }

    /** Advances the stream, passing a budget or time stop through whatever Jenetics wrapped it in. */
    private static EvolutionResult<BitGene, Vec<double[]>> next(Iterator<EvolutionResult<BitGene, Vec<double[]>>> it) {
        try {
            return it.next();
        } catch (StopSearch s) {
            throw s;
        } catch (RuntimeException e) {
            for (Throwable c = e.getCause(); c != null; c = c.getCause()) {
                if (c instanceof StopSearch s) {
                    throw s;
                }
            }
            throw e;
        }
    }

    /**
     * A first population: even members are ranking prefixes (from restart 1 on, each region of a prefix kept with
     * probability 0.8, so restarts start elsewhere), odd members random sets; sizes spread from 1 to
     * {@code maxInitialSize}.
     */
    private ISeq<Phenotype<BitGene, Vec<double[]>>> initial(int n, List<Integer> order, SplittableRandom rng,
                                                            int restart, RegionSet superset) {
        List<Phenotype<BitGene, Vec<double[]>>> pop = new ArrayList<>();
        int max = Math.max(1, Math.min(settings.maxInitialSize(), n - 1));
        for (int i = 0; i < settings.population(); i++) {
            int size = 1 + (int) Math.round((max - 1) * Math.pow((double) i / Math.max(1, settings.population() - 1), 2));
            BitSet bits = new BitSet(n);
            if (superset != null && (i + 0.5) / settings.population() < settings.supersetShare()) {
                for (int p : superset.positions()) {
                    if (rng.nextDouble() < 0.9) {
                        bits.set(p);
                    }
                }
            } else if (i % 2 == 0) {
                for (int j = 0; j < Math.min(size, order.size()); j++) {
                    if (restart == 0 || rng.nextDouble() < 0.8) {
                        bits.set(order.get(j));
                    }
                }
            } else {
                while (bits.cardinality() < size) {
                    bits.set(rng.nextInt(n));
                }
            }
            pop.add(Phenotype.of(Genotype.of(BitChromosome.of(bits, n)), 1));
        }
        return ISeq.of(pop);
    }

    static RegionSet toSet(Genotype<BitGene> g, int n) {
        BitChromosome c = g.chromosome().as(BitChromosome.class);
        RegionSet s = RegionSet.empty(n);
        for (int i = 0; i < n; i++) {
            if (c.get(i).bit()) {
                s = s.with(i);
            }
        }
        return s;
    }

    /**
     * Removes {@code removals} and adds {@code additions} regions on average, whatever the set's size; a share
     * {@code focus} of the additions goes to the ranked pool's intact regions (all to the others when the pool is
     * fully lesioned).
     */
    static final class SparseMutator extends Mutator<BitGene, Vec<double[]>> {
        private final double additions;
        private final double removals;
        private final RankedPool pool;

        SparseMutator(double additions, double removals, RankedPool pool) {
            super(1.0);
            this.additions = additions;
            this.removals = removals;
            this.pool = pool;
        }

        @Override
        protected MutatorResult<Chromosome<BitGene>> mutate(Chromosome<BitGene> chromosome, double p,
                                                            RandomGenerator random) {
            BitChromosome c = chromosome.as(BitChromosome.class);
            int n = c.length();
            int k = c.bitCount();
            int poolOff = 0;
            for (int i = 0; i < n; i++) {
                poolOff += !c.get(i).bit() && pool.inPool(i) ? 1 : 0;
            }
            int otherOff = n - k - poolOff;
            double toPool = poolOff == 0 ? 0 : otherOff == 0 ? 1 : pool.focus();
            double pRemove = k == 0 ? 0 : Math.min(1, removals / k);
            double pAddPool = poolOff == 0 ? 0 : Math.min(1, toPool * additions / poolOff);
            double pAddOther = otherOff == 0 ? 0 : Math.min(1, (1 - toPool) * additions / otherOff);
            BitSet bits = new BitSet(n);
            int changed = 0;
            for (int i = 0; i < n; i++) {
                boolean on = c.get(i).bit();
                boolean flip = random.nextDouble() < (on ? pRemove : pool.inPool(i) ? pAddPool : pAddOther);
                if (on != flip) {
                    bits.set(i);
                }
                changed += flip ? 1 : 0;
            }
            return new MutatorResult<>(BitChromosome.of(bits, n), changed);
        }
    }
}
