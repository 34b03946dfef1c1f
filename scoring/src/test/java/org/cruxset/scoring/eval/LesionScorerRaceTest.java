package org.cruxset.scoring.eval;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.IdentityHashMap;
import java.util.List;
import java.util.Map;
import java.util.Random;
import java.util.Set;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.ResultsStore;
import org.cruxset.scoring.testing.RandomModels;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class LesionScorerRaceTest {
    static final List<String> CLASSES = List.of("a", "b", "c");
    static final int N = 14;

    /** A fill that reads another sample of the whole part, so a chunk that mapped samples wrongly would show. */
    static final LesionFill NEIGHBOUR = new LesionFill() {
        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            int donor = (sample + 1) % batch.size();
            float[] x = batch.series(donor);
            for (int t = 0; t < batch.length(sample); t++) {
                out[t] = t < batch.length(donor) ? x[t * batch.regions() + region] : 0f;
            }
        }
    };

    /** Counts sample-evaluations and fails when one (set, sample) pair is decoded twice. */
    static final class Counting implements Decoder {
        final Decoder inner;
        final Map<float[], Set<RegionSet>> seen = new IdentityHashMap<>();
        long sampleEvaluations;

        Counting(Decoder inner) {
            this.inner = inner;
        }

        @Override
        public ModelCard card() {
            return inner.card();
        }

        @Override
        public Bound bind(InputBatch batch) {
            Bound b = inner.bind(batch);
            return (masks, threads) -> {
                synchronized (this) {
                    for (InputMask m : masks) {
                        for (int s = 0; s < batch.size(); s++) {
                            assertTrue(seen.computeIfAbsent(batch.series(s), k -> new HashSet<>()).add(m.regions()),
                                    "set " + m.regions() + " decoded twice on one sample");
                        }
                    }
                    sampleEvaluations += (long) masks.size() * batch.size();
                }
                return b.probabilities(masks, threads);
            };
        }
    }

    record Fixture(NativeRecurrentDecoder decoder, ModelInputs inputs, Atlas atlas) {
    }

    static Fixture fixture() {
        Random rng = new Random(9);
        Atlas atlas = RandomModels.atlas(N, 7);
        GruNetwork net = RandomModels.randomNetwork(rng, N, new int[] {10}, new boolean[] {true}, 3, 1.6);
        NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, RandomModels.card(net, atlas, CLASSES, "model-r"));
        ModelInputs in = ModelInputs.prepare(dec.card(), atlas, RandomModels.samples(rng, 200, N, 5, 12, CLASSES));
        return new Fixture(dec, in, atlas);
    }

    static LesionScorer scorer(Decoder d, Fixture f, LesionFill fill, ResultsStore store, ResultsStore.Run run,
                               Budget budget) {
        return new LesionScorer(d, f.inputs(), LesionMode.ZERO, 0, fill, store, run, budget, 1.0, 2,
                p -> f.atlas().region(p).name());
    }

    static List<RegionSet> randomSets(int count, long seed) {
        Random rng = new Random(seed);
        List<RegionSet> out = new ArrayList<>();
        for (int i = 0; i < count; i++) {
            int size = rng.nextInt(N + 1);
            int[] pos = new int[size];
            for (int k = 0; k < size; k++) {
                pos[k] = rng.nextInt(N);
            }
            out.add(RegionSet.of(N, pos));
        }
        return out;
    }

    @Test
    void racedVerdictsAgreeWithFullScoresAndCompletedSetsScoreAsIfScoredWhole() {
        Fixture f = fixture();
        List<RegionSet> sets = randomSets(120, 3);
        LesionScorer plain = scorer(f.decoder(), f, NEIGHBOUR, null, null, Budget.unlimited(0));
        List<LesionScorer.Scored> full = plain.score(sets);
        int n = f.inputs().size();
        // The threshold: the median full-part count, so that many sets sit near it.
        int[] counts = full.stream().mapToInt(s -> s.score().correct()).sorted().toArray();
        int threshold = counts[counts.length / 2];
        Counting counting = new Counting(f.decoder());
        LesionScorer raced = scorer(counting, f, NEIGHBOUR, null, null, Budget.unlimited(0));
        LesionScorer.Racing settings = new LesionScorer.Racing(0.01, 17, 32);
        List<LesionScorer.Raced> verdicts = raced.raceWithinBudget(sets, threshold, settings, 0);
        assertEquals(sets.size(), verdicts.size());
        int agree = 0;
        long samples = 0;
        for (int i = 0; i < sets.size(); i++) {
            LesionScorer.Raced r = verdicts.get(i);
            boolean truth = full.get(i).score().correct() <= threshold;
            agree += r.atMost() == truth ? 1 : 0;
            samples += r.samples();
            if (r.exact()) {
                assertEquals(truth, r.atMost());
                assertEquals(full.get(i).outcomes(), r.full().outcomes(), "completed from chunks = scored whole");
                assertEquals(full.get(i).score(), r.full().score());
            }
        }
        // Duplicates in the list are raced once; the budget is the fraction of samples used.
        long distinctSamples = 0;
        Set<RegionSet> seen = new HashSet<>();
        for (LesionScorer.Raced r : verdicts) {
            if (seen.add(r.set())) {
                distinctSamples += r.samples();
            }
        }
        assertEquals((double) distinctSamples / n, raced.budget().spent(), 1e-9);
        assertEquals(distinctSamples, counting.sampleEvaluations);
        assertEquals(counting.sampleEvaluations, raced.decodedSamples(), "the scorer counts what it decoded in chunks");
        assertEquals((long) new HashSet<>(sets).size() * n, plain.decodedSamples(), "and what it decoded whole");
        assertTrue(raced.decodeSeconds() > 0 && plain.decodeSeconds() > 0);
        assertTrue(agree >= sets.size() - 2, agree + " of " + sets.size() + " raced verdicts agree");
        System.out.printf("raced at the median count: %d of %d verdicts agree, %.1f%% of the sample-evaluations%n",
                agree, sets.size(), 100.0 * distinctSamples / ((double) n * seen.size()));
        // Far from the threshold (every count here is at least 52 of 200), verdicts come early.
        LesionScorer far = scorer(f.decoder(), f, NEIGHBOUR, null, null, Budget.unlimited(0));
        List<LesionScorer.Raced> clear = far.raceWithinBudget(sets, counts[0] - 20, settings, 0);
        long used = 0;
        for (LesionScorer.Raced r : clear) {
            assertTrue(!r.atMost(), "every set is above " + (counts[0] - 20));
            used += r.samples();
        }
        assertTrue(used < 0.5 * n * sets.size(), "clear verdicts should use few samples: " + used);
        System.out.printf("raced 20 below the lowest count: %.1f%% of the sample-evaluations%n",
                100.0 * used / ((double) n * sets.size()));
    }

    private static ResultsStore.RunInfo info(String key, ModelInputs in) {
        return new ResultsStore.RunInfo(key, "test", "cfg", "model-r", DataHash.of(in), "none", LesionMode.ZERO, 0, 1,
                Provenance.current());
    }

    @Test
    void aRaceStoppedByItsBudgetResumesWithoutScoringASampleTwice(@TempDir Path dir) throws java.io.IOException {
        Fixture f = fixture();
        List<RegionSet> sets = randomSets(40, 5);
        LesionScorer.Racing settings = new LesionScorer.Racing(0.01, 23, 32);
        int threshold;
        {
            LesionScorer plain = scorer(f.decoder(), f, LesionFill.ZERO, null, null, Budget.unlimited(0));
            int[] counts = plain.score(sets).stream().mapToInt(s -> s.score().correct()).sorted().toArray();
            threshold = counts[counts.length / 2];
        }
        // Uninterrupted, without a store.
        LesionScorer whole = scorer(f.decoder(), f, LesionFill.ZERO, null, null, Budget.unlimited(0));
        List<LesionScorer.Raced> expected = whole.raceWithinBudget(sets, threshold, settings, 0);
        Counting counting = new Counting(f.decoder());
        try (ResultsStore store = ResultsStore.open(dir.resolve("r.sqlite"))) {
            ResultsStore.Run run = store.beginOrResume(info("race", f.inputs()));
            LesionScorer first = scorer(counting, f, LesionFill.ZERO, store, run, Budget.of(6, run.spent()));
            List<LesionScorer.Raced> part = first.raceWithinBudget(sets, threshold, settings, 0);
            assertTrue(part.size() < sets.size(), "the budget of 6 sets stops the race early: " + part.size());
            double spentFirst = first.budget().spent();
            assertTrue(spentFirst <= 6 + 1e-9 && spentFirst > 3, "spent " + spentFirst);
            // The same run resumed (as after kill -9), with more budget: it continues where the store says.
            ResultsStore.Run again = store.beginOrResume(info("race", f.inputs()));
            assertEquals(spentFirst, again.spent(), 1e-9);
            LesionScorer second = scorer(counting, f, LesionFill.ZERO, store, again, Budget.of(1000, again.spent()));
            List<LesionScorer.Raced> done = second.raceWithinBudget(sets, threshold, settings, 0);
            assertEquals(sets.size(), done.size());
            for (int i = 0; i < sets.size(); i++) {
                assertEquals(expected.get(i).atMost(), done.get(i).atMost(), "set " + i);
                assertEquals(expected.get(i).samples(), done.get(i).samples(), "set " + i);
            }
            assertEquals(whole.budget().spent(), second.budget().spent(), 1e-9, "the same charges as uninterrupted");
            // Completed raced sets are full evaluations in the store, replayed by plain scoring for free.
            LesionScorer.Raced exact = done.stream().filter(LesionScorer.Raced::exact).findFirst().orElseThrow();
            double before = second.budget().spent();
            LesionScorer.Scored replay = second.score(exact.set());
            assertEquals(LesionScorer.Source.REPLAYED, replay.source());
            assertNotNull(replay.outcomes());
            assertEquals(before, second.budget().spent(), 0);
            // The export shows the partial evaluations, what the run paid for them, and the run's whole spend.
            Path out = dir.resolve("tsv");
            org.cruxset.scoring.store.TsvExport.export(dir.resolve("r.sqlite"), out);
            List<String> partials = java.nio.file.Files.readAllLines(out.resolve("partial_evaluations.tsv"));
            List<String> header = List.of(partials.get(0).split("\t"));
            int doneColumn = header.indexOf("samples_done");
            int predicted = header.indexOf("predicted");
            assertTrue(partials.size() > 1 && doneColumn >= 0 && predicted >= 0, partials.get(0));
            for (String row : partials.subList(1, partials.size())) {
                String[] f2 = row.split("\t", -1);
                assertEquals(Integer.parseInt(f2[doneColumn]), f2[predicted].split(" ").length, row);
            }
            List<String> runs = java.nio.file.Files.readAllLines(out.resolve("runs.tsv"));
            int spentColumn = List.of(runs.get(0).split("\t")).indexOf("spent");
            assertEquals(second.budget().spent(), Double.parseDouble(runs.get(1).split("\t", -1)[spentColumn]), 1e-9);
            assertTrue(java.nio.file.Files.readAllLines(out.resolve("run_partials.tsv")).size() > 1);
        }
    }

    @Test
    void racingNeedsOneSettingPerScorerAndAChargedPart() {
        Fixture f = fixture();
        LesionScorer sc = scorer(f.decoder(), f, LesionFill.ZERO, null, null, Budget.unlimited(0));
        sc.raceWithinBudget(List.of(RegionSet.of(N, 1)), 50, new LesionScorer.Racing(0.01, 1, 32), 0);
        assertThrows(IllegalArgumentException.class, () -> sc.raceWithinBudget(List.of(RegionSet.of(N, 2)), 50,
                new LesionScorer.Racing(0.01, 2, 32), 0));
        LesionScorer free = new LesionScorer(f.decoder(), f.inputs(), LesionMode.ZERO, 0, LesionFill.ZERO, null, null,
                Budget.unlimited(0), 0, 2, p -> "r" + p);
        assertThrows(IllegalStateException.class, () -> free.raceWithinBudget(List.of(RegionSet.of(N, 2)), 50,
                new LesionScorer.Racing(0.01, 1, 32), 0));
    }
}
