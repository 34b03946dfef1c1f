package org.cruxset.scoring.eval;

import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.lesion.LesionFills;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.ReferenceStats;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.ResultsStore;

/**
 * Everything one scoring run needs, wired once: the held-out inputs of a cohort for a decoder, the lesion fill of the
 * chosen mode (with its reference statistics), the results store of the output folder with this run's row (resumed
 * when the same command ran before), the budget, the collapse criterion and the intact score.
 */
public final class ScoringSession implements AutoCloseable {
    /** The store's file name inside an output folder. */
    public static final String STORE_FILE = "results.sqlite";

    /**
     * Settings of a run. {@code reference} (nullable) is a cohort whose samples give the mean and noise modes'
     * statistics, overriding those recorded in a Cruxset-trained model; {@code outDir} (nullable) holds the store;
     * {@code command} is the full command or config text, which with the data identifies the run for resuming.
     */
    public record Settings(LesionMode mode, long modeSeed, Cohort reference, CollapseCriterion criterion, double budget,
                           int threads, Path outDir, String kind, String command, long seed) {
        public Settings {
            Objects.requireNonNull(mode, "mode");
            Objects.requireNonNull(criterion, "criterion");
            Objects.requireNonNull(kind, "kind");
            Objects.requireNonNull(command, "command");
            if (threads < 1) {
                throw new IllegalArgumentException("threads must be at least 1, found " + threads);
            }
        }
    }

    private final Decoder decoder;
    private final Cohort cohort;
    private final Settings settings;
    private final HeldOut heldOut;
    private final ModelInputs inputs;
    private final ResultsStore store;
    private final ResultsStore.Run run;
    private final LesionScorer scorer;
    private final List<String> notes = new ArrayList<>();
    private final LesionScorer.Scored intact;

    private ScoringSession(Decoder decoder, Cohort cohort, Settings s) {
        this.decoder = decoder;
        this.cohort = cohort;
        this.settings = s;
        ModelCard card = decoder.card();
        this.heldOut = HeldOut.of(cohort, card);
        this.inputs = ModelInputs.prepare(card, cohort.atlas(), heldOut.samples());
        ReferenceStats ref = reference(card, s.reference());
        LesionFill fill = LesionFills.of(s.mode(), s.modeSeed(), ref, inputs.batch(), inputs.sampleIds());
        LesionFills.coincidence(s.mode(), card.preprocessing(), ref).ifPresent(notes::add);
        String dataHash = DataHash.of(inputs);
        if (s.outDir() != null) {
            store = ResultsStore.open(s.outDir().resolve(STORE_FILE));
            String runKey = runKey(s, card.modelHash(), dataHash);
            run = store.beginOrResume(new ResultsStore.RunInfo(runKey, s.kind(), s.command(), card.modelHash(), dataHash,
                    card.preprocessing().label(), s.mode(), s.modeSeed(), s.seed(), Provenance.current()));
        } else {
            store = null;
            run = null;
        }
        Budget budget = Double.isInfinite(s.budget()) ? Budget.unlimited(run == null ? 0 : run.spent())
                : Budget.of(s.budget(), run == null ? 0 : run.spent());
        List<String> names = card.regionNames().isEmpty() ? cohort.atlas().names() : card.regionNames();
        this.scorer = new LesionScorer(decoder, inputs, s.mode(), s.modeSeed(), fill, store, run, budget, s.threads(),
                names::get);
        this.intact = scorer.score(RegionSet.empty(inputs.batch().regions()));
    }

    /** Opens a session; close it to finish the run and close the store (the decoder stays open). */
    public static ScoringSession open(Decoder decoder, Cohort cohort, Settings settings) {
        return new ScoringSession(decoder, cohort, settings);
    }

    private static ReferenceStats reference(ModelCard card, Cohort reference) {
        if (reference != null) {
            ModelInputs ref = ModelInputs.prepare(card, reference.atlas(), reference.samples());
            return ReferenceStats.of(ref.batch());
        }
        if (card.metadata().containsKey(ReferenceStats.MEAN_KEY)) {
            return ReferenceStats.fromMetadata(card.metadata(), card.regions());
        }
        return null;
    }

    private static String runKey(Settings s, String modelHash, String dataHash) {
        String text = s.kind() + "\n" + s.command() + "\n" + modelHash + "\n" + dataHash + "\n" + s.mode().label()
                + "\n" + s.modeSeed() + "\n" + s.seed();
        try {
            byte[] d = MessageDigest.getInstance("SHA-256").digest(text.getBytes(StandardCharsets.UTF_8));
            return HexFormat.of().formatHex(d);
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException(e);
        }
    }

    public LesionScorer scorer() {
        return scorer;
    }

    public ModelInputs inputs() {
        return inputs;
    }

    public HeldOut heldOut() {
        return heldOut;
    }

    public Cohort cohort() {
        return cohort;
    }

    public Decoder decoder() {
        return decoder;
    }

    public Settings settings() {
        return settings;
    }

    /** The score of the empty lesion. */
    public LesionScorer.Scored intact() {
        return intact;
    }

    /** Whether a scored set is critical under the session's criterion. */
    public boolean critical(SetScore score) {
        return settings.criterion().critical(score, intact.score());
    }

    /** Notes for the reader (e.g. a lesion mode that coincides with another here). */
    public List<String> notes() {
        return List.copyOf(notes);
    }

    /** The run in the store, or null without an output folder. */
    public ResultsStore.Run run() {
        return run;
    }

    /** The store, or null without an output folder. */
    public ResultsStore store() {
        return store;
    }

    /** The model input set of an atlas-position set. */
    public RegionSet toInputs(RegionSet atlasSet) {
        return inputs.toInputs(atlasSet, cohort.atlas());
    }

    @Override
    public void close() {
        if (store != null) {
            store.finish(run);
            store.close();
        }
    }
}
