package org.cruxset.scoring.eval;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.List;
import java.util.Random;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.ResultsStore;
import org.cruxset.scoring.testing.RandomModels;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class LesionScorerTest {
    static final List<String> CLASSES = List.of("a", "b", "c");

    record Fixture(NativeRecurrentDecoder decoder, ModelInputs inputs, Atlas atlas) {
    }

    static Fixture fixture() {
        Random rng = new Random(4);
        Atlas atlas = RandomModels.atlas(12, 4);
        GruNetwork net = RandomModels.randomNetwork(rng, 12, new int[] {8}, new boolean[] {false}, 3, 0.7);
        NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, RandomModels.card(net, atlas, CLASSES, "model-1"));
        ModelInputs in = ModelInputs.prepare(dec.card(), atlas, RandomModels.samples(rng, 30, 12, 3, 15, CLASSES));
        return new Fixture(dec, in, atlas);
    }

    private static ResultsStore.RunInfo info(String key, ModelInputs in) {
        return new ResultsStore.RunInfo(key, "test", "cfg", "model-1", DataHash.of(in), "none", LesionMode.ZERO, 0, 1,
                Provenance.current());
    }

    private static LesionScorer scorer(Fixture f, ResultsStore store, ResultsStore.Run run, Budget budget) {
        return new LesionScorer(f.decoder(), f.inputs(), LesionMode.ZERO, 0, LesionFill.ZERO, store, run, budget, 1.0, 2,
                p -> f.atlas().region(p).name());
    }

    @Test
    void acceptsTheEmptyAndTheAllRegionSetAndDerivesScoresFromOutcomes() {
        Fixture f = fixture();
        LesionScorer sc = scorer(f, null, null, Budget.unlimited(0));
        List<LesionScorer.Scored> out = sc.score(List.of(RegionSet.empty(12), RegionSet.all(12), RegionSet.of(12, 3)));
        assertEquals(3, out.size());
        for (LesionScorer.Scored s : out) {
            assertEquals(SetScore.of(s.outcomes(), f.inputs().labels(), 3), s.score());
            assertEquals(LesionScorer.Source.DECODED, s.source());
        }
        assertEquals(3, sc.decodedCount());
        assertEquals(3.0, sc.budget().spent(), 0);
        assertEquals(LesionScorer.Source.REPLAYED, sc.score(RegionSet.all(12)).source(), "asked again: free");
        assertEquals(3.0, sc.budget().spent(), 0);
    }

    @Test
    void aSetIsPaidOncePerRunAndStoredSetsAreChargedToOtherRunsWithoutDecoding(@TempDir Path dir) {
        Fixture f = fixture();
        List<RegionSet> sets = List.of(RegionSet.of(12, 0, 1), RegionSet.of(12, 5), RegionSet.of(12, 2, 7, 11));
        try (ResultsStore store = ResultsStore.open(dir.resolve("r.sqlite"))) {
            ResultsStore.Run first = store.beginOrResume(info("first", f.inputs()));
            LesionScorer a = scorer(f, store, first, Budget.unlimited(first.spent()));
            List<LesionScorer.Scored> sa = a.score(sets);
            assertEquals(3, a.decodedCount());
            // the same run resumed: everything replayed, nothing charged
            ResultsStore.Run again = store.beginOrResume(info("first", f.inputs()));
            assertTrue(again.resumed());
            LesionScorer b = scorer(f, store, again, Budget.unlimited(again.spent()));
            List<LesionScorer.Scored> sb = b.score(sets);
            assertEquals(0, b.decodedCount());
            assertEquals(3, b.replayedCount());
            assertEquals(3.0, b.budget().spent(), 0);
            // another run: charged, but no decoder time
            ResultsStore.Run other = store.beginOrResume(info("other", f.inputs()));
            LesionScorer c = scorer(f, store, other, Budget.of(10, other.spent()));
            c.score(sets);
            assertEquals(0, c.decodedCount());
            assertEquals(3, c.storedCount());
            assertEquals(3.0, c.budget().spent(), 0);
            for (int i = 0; i < sets.size(); i++) {
                assertEquals(sa.get(i).outcomes(), sb.get(i).outcomes());
            }
        }
    }

    @Test
    void refusesWorkBeyondTheBudgetBeforeDecoding() {
        Fixture f = fixture();
        LesionScorer sc = scorer(f, null, null, Budget.of(2, 0));
        IllegalStateException e = assertThrows(IllegalStateException.class,
                () -> sc.score(List.of(RegionSet.of(12, 1), RegionSet.of(12, 2), RegionSet.of(12, 3))));
        assertTrue(e.getMessage().contains("budget exhausted"), e.getMessage());
        assertEquals(0, sc.decodedCount());
    }
}
