package org.cruxset.scoring.eval;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Random;
import java.util.Set;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.gru.NativeRecurrentDecoder;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.PartSplit;
import org.cruxset.scoring.store.ResultsStore;
import org.cruxset.scoring.testing.RandomModels;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The split of held-out subjects into a search part and a confirmation part, and how a session records it. */
class PartsTest {
    static final List<String> CLASSES = List.of("a", "b", "c");

    /** {@code subjects} subjects with {@code perSubject} samples each, interleaved (sample s belongs to s % subjects). */
    static List<Sample> samples(int subjects, int perSubject, int regions) {
        Random rng = new Random(11);
        List<Sample> out = new ArrayList<>();
        for (int s = 0; s < subjects * perSubject; s++) {
            int len = 4 + rng.nextInt(4);
            float[] v = new float[len * regions];
            for (int i = 0; i < v.length; i++) {
                v[i] = (float) rng.nextGaussian();
            }
            out.add(new Sample("s" + s, String.format("sub-%02d", s % subjects), CLASSES.get(s % 3), Split.TEST, len,
                    regions, v));
        }
        return out;
    }

    @Test
    void theSplitIsBySubjectSeededAndKeepsTheHeldOutOrder() {
        List<Sample> held = samples(10, 3, 2);
        Parts p = Parts.split(held, 5, 0.5);
        assertEquals(5, p.searchSubjects().size());
        assertEquals(5, p.confirmationSubjects().size());
        Set<String> both = new HashSet<>(p.searchSubjects());
        both.retainAll(p.confirmationSubjects());
        assertTrue(both.isEmpty(), "no subject in both parts: " + both);
        assertEquals(15, p.search().size());
        assertEquals(15, p.confirmation().size());
        for (Sample s : p.search()) {
            assertTrue(p.searchSubjects().contains(s.subject()), s.id());
        }
        for (Sample s : p.confirmation()) {
            assertTrue(p.confirmationSubjects().contains(s.subject()), s.id());
        }
        assertEquals(ids(held.stream().filter(s -> p.searchSubjects().contains(s.subject())).toList()), ids(p.search()),
                "samples keep their held-out order within a part");
        assertEquals(p, Parts.split(held, 5, 0.5), "same seed, same split");
        Set<List<String>> seen = new HashSet<>();
        for (long seed = 1; seed <= 20; seed++) {
            seen.add(Parts.split(held, seed, 0.5).confirmationSubjects());
        }
        assertTrue(seen.size() > 10, "seeds give different splits: " + seen.size() + " distinct of 20");
    }

    private static List<String> ids(List<Sample> samples) {
        return samples.stream().map(Sample::id).toList();
    }

    @Test
    void theFractionIsRoundedButBothPartsKeepASubject() {
        List<Sample> held = samples(10, 2, 2);
        assertEquals(3, Parts.split(held, 1, 0.3).confirmationSubjects().size());
        assertEquals(1, Parts.split(held, 1, 0.01).confirmationSubjects().size());
        assertEquals(9, Parts.split(held, 1, 0.99).confirmationSubjects().size());
    }

    @Test
    void confirmZeroSearchesEverythingAndSaysScoresAreOptimistic() {
        List<Sample> held = samples(4, 2, 2);
        Parts p = Parts.split(held, 1, 0);
        assertFalse(p.hasConfirmation());
        assertEquals(held, p.search());
        assertTrue(p.describe().contains("optimistic"), p.describe());
        IllegalArgumentException one = assertThrows(IllegalArgumentException.class,
                () -> Parts.split(samples(1, 4, 2), 1, 0.5));
        assertTrue(one.getMessage().contains("--confirm 0"), one.getMessage());
        assertThrows(IllegalArgumentException.class, () -> Parts.split(held, 1, 1.0));
    }

    @Test
    void aSessionRecordsItsSplitAndTheStoreReproducesIt(@TempDir Path out) {
        Random rng = new Random(4);
        Atlas atlas = RandomModels.atlas(6, 3);
        GruNetwork net = RandomModels.randomNetwork(rng, 6, new int[] {5}, new boolean[] {false}, 3, 0.7);
        NativeRecurrentDecoder dec = new NativeRecurrentDecoder(net, RandomModels.card(net, atlas, CLASSES, "model-p"));
        Cohort cohort = new Cohort(atlas, samples(8, 3, 6));
        ScoringSession.Settings settings = new ScoringSession.Settings(LesionMode.ZERO, 0, null,
                CollapseCriterion.defaults(), 3, 2, out, "test", "parts", 1, 9, 0.5);
        long splitId;
        try (ScoringSession s = ScoringSession.open(dec, cohort, settings)) {
            ScoringSession.Part confirmation = s.confirmation().orElseThrow();
            assertEquals(12, s.search().inputs().size());
            assertEquals(12, confirmation.inputs().size());
            assertEquals(4, s.search().subjects());
            assertNotEquals(s.scorer().dataHash(), confirmation.scorer().dataHash(), "parts are told apart by data hash");
            PartSplit stored = s.store().splitOfRun(s.run().id()).orElseThrow();
            splitId = s.splitId();
            assertEquals(s.parts().searchSubjects(), stored.searchSubjects());
            assertEquals(s.parts().confirmationSubjects(), stored.confirmationSubjects());
            assertEquals(s.scorer().dataHash(), stored.searchHash());
            assertEquals(confirmation.scorer().dataHash(), stored.confirmationHash());
            // reproduced from the store: its seed and fraction give the same subjects again
            Parts again = Parts.split(s.heldOut().samples(), stored.seed(), stored.confirmFraction());
            assertEquals(stored.searchSubjects(), again.searchSubjects());
            assertEquals(stored.confirmationSubjects(), again.confirmationSubjects());

            // the budget (3 sets, the intact one included) is charged for the search part only
            List<RegionSet> sets = List.of(RegionSet.of(6, 0), RegionSet.of(6, 1), RegionSet.of(6, 2), RegionSet.of(6, 3));
            confirmation.scorer().score(sets);
            assertEquals(1.0, s.scorer().budget().spent(), 0.0, "confirmation scoring is not charged");
            s.scorer().score(sets.subList(0, 2));
            assertEquals(3.0, s.scorer().budget().spent(), 0.0);
            IllegalStateException over = assertThrows(IllegalStateException.class, () -> s.scorer().score(sets.get(3)));
            assertTrue(over.getMessage().contains("budget exhausted"), over.getMessage());
        }
        try (ScoringSession s = ScoringSession.open(dec, cohort, settings)) {
            assertEquals(splitId, s.splitId(), "the same split is found again");
            assertTrue(s.run().resumed());
            assertEquals(3.0, s.scorer().budget().spent(), 0.0, "resumed with the search part's spending only");
        }
        try (ResultsStore store = ResultsStore.open(out.resolve(ScoringSession.STORE_FILE))) {
            assertTrue(store.split(splitId).isPresent());
        }
    }
}
