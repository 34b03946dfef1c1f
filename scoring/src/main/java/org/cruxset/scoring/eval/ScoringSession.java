package org.cruxset.scoring.eval;

import java.nio.charset.StandardCharsets;
import java.nio.file.Path;
import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.util.ArrayList;
import java.util.HexFormat;
import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.Checks;
import org.cruxset.scoring.Provenance;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.lesion.LesionFills;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.ReferenceStats;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.PartSplit;
import org.cruxset.scoring.store.ResultsStore;

/**
 * Everything one scoring run needs, wired once: the held-out samples of a cohort for a decoder, split by subject into
 * a search part and a confirmation part ({@link Parts}); for each part its inputs, lesion fill, scorer and intact
 * score; the results store of the output folder, with the split and this run's row (resumed when the same command
 * ran before); the budget and the collapse criterion. Strategies see only the search part: its scorer charges the
 * budget (one unit per set scored on all of its samples); the confirmation scorer charges nothing.
 */
public final class ScoringSession implements AutoCloseable {
    /** The store's file name inside an output folder. */
    public static final String STORE_FILE = "results.sqlite";

    /**
     * Settings of a run. {@code reference} (nullable) is a cohort whose samples give the mean and noise modes'
     * statistics, overriding those recorded in a Cruxset-trained model; {@code outDir} (nullable) holds the store;
     * {@code command} is the full command or config text, which with the data identifies the run for resuming;
     * {@code splitSeed} and {@code confirm} split the held-out subjects into parts ({@code confirm} 0: no
     * confirmation part).
     */
    public record Settings(LesionMode mode, long modeSeed, Cohort reference, CollapseCriterion criterion, double budget,
                           int threads, Path outDir, String kind, String command, long seed, long splitSeed,
                           double confirm, java.util.function.UnaryOperator<Decoder> distribute) {
        /** Settings that score on this machine ({@code distribute} null). */
        public Settings(LesionMode mode, long modeSeed, Cohort reference, CollapseCriterion criterion, double budget,
                        int threads, Path outDir, String kind, String command, long seed, long splitSeed,
                        double confirm) {
            this(mode, modeSeed, reference, criterion, budget, threads, outDir, kind, command, seed, splitSeed, confirm,
                    null);
        }

        public Settings {
            Objects.requireNonNull(mode, "mode");
            Objects.requireNonNull(criterion, "criterion");
            Objects.requireNonNull(kind, "kind");
            Objects.requireNonNull(command, "command");
            if (threads < 1) {
                throw new IllegalArgumentException("threads must be at least 1, found " + threads);
            }
            Checks.within("confirm fraction", confirm, 0.0, Math.nextDown(1.0));
        }
    }

    /**
     * One part of the held-out data: its name ({@code search} or {@code confirmation}), inputs, scorer, intact score
     * and the session's criterion.
     */
    public record Part(String name, ModelInputs inputs, LesionScorer scorer, LesionScorer.Scored intact,
                       CollapseCriterion criterion) {
        /** Whether a set scored on this part is critical. */
        public boolean critical(SetScore score) {
            return criterion.critical(score, intact.score());
        }

        /** Number of distinct subjects in this part. */
        public int subjects() {
            return new java.util.HashSet<>(inputs.subjects()).size();
        }
    }

    private final Decoder decoder;
    /** The decoder the scorers use: {@code decoder}, or its twin on a decode backend (a cluster). */
    private final Decoder scoringDecoder;
    private final Cohort cohort;
    private final Settings settings;
    private final HeldOut heldOut;
    private final Parts parts;
    private final ResultsStore store;
    private final ResultsStore.Run run;
    private final Long splitId;
    private final List<String> notes = new ArrayList<>();
    private final Part search;
    private final Part confirmation;

    private ScoringSession(Decoder decoder, Cohort cohort, Settings s) {
        this.decoder = decoder;
        this.scoringDecoder = s.distribute() == null ? decoder : s.distribute().apply(decoder);
        this.cohort = cohort;
        this.settings = s;
        ModelCard card = decoder.card();
        this.heldOut = HeldOut.of(cohort, card);
        this.parts = Parts.split(heldOut.samples(), s.splitSeed(), s.confirm());
        ModelInputs searchIn = ModelInputs.prepare(card, cohort.atlas(), parts.search());
        ModelInputs confirmIn = parts.hasConfirmation()
                ? ModelInputs.prepare(card, cohort.atlas(), parts.confirmation()) : null;
        ReferenceStats ref = reference(card, s.reference());
        LesionFills.coincidence(s.mode(), card.preprocessing(), ref).ifPresent(notes::add);
        String searchHash = DataHash.of(searchIn);
        if (s.outDir() != null) {
            store = ResultsStore.open(s.outDir().resolve(STORE_FILE));
            store.registerDataset(searchHash, searchIn);
            String confirmHash = null;
            if (confirmIn != null) {
                confirmHash = DataHash.of(confirmIn);
                store.registerDataset(confirmHash, confirmIn);
            }
            splitId = store.registerSplit(new PartSplit(parts.seed(), parts.confirmFraction(), searchHash, confirmHash,
                    parts.searchSubjects(), parts.confirmationSubjects()));
            String runKey = runKey(s, card.modelHash(), searchHash);
            run = store.beginOrResume(new ResultsStore.RunInfo(runKey, s.kind(), s.command(), card.modelHash(),
                    searchHash, card.preprocessing().label(), s.mode(), s.modeSeed(), s.seed(), Provenance.current(),
                    splitId));
        } else {
            store = null;
            run = null;
            splitId = null;
        }
        Budget budget = Double.isInfinite(s.budget()) ? Budget.unlimited(run == null ? 0 : run.spent())
                : Budget.of(s.budget(), run == null ? 0 : run.spent());
        List<String> names = card.regionNames().isEmpty() ? cohort.atlas().names() : card.regionNames();
        this.search = part(PartSplit.SEARCH, searchIn, ref, budget, 1.0, names);
        this.confirmation = confirmIn == null ? null
                : part(PartSplit.CONFIRMATION, confirmIn, ref, Budget.unlimited(0), 0.0, names);
    }

    private Part part(String name, ModelInputs in, ReferenceStats ref, Budget budget, double cost, List<String> names) {
        LesionFill fill = LesionFills.of(settings.mode(), settings.modeSeed(), ref, in.batch(), in.sampleIds());
        LesionScorer scorer = new LesionScorer(scoringDecoder, in, settings.mode(), settings.modeSeed(), fill, store,
                run, budget, cost, settings.threads(), names::get);
        LesionScorer.Scored intact = scorer.score(RegionSet.empty(in.batch().regions()));
        return new Part(name, in, scorer, intact, settings.criterion());
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

    /** The search part's scorer: the one every strategy spends its budget through. */
    public LesionScorer scorer() {
        return search.scorer();
    }

    /** The search part's inputs. */
    public ModelInputs inputs() {
        return search.inputs();
    }

    /** The search part: what strategies see and pay for. */
    public Part search() {
        return search;
    }

    /** The confirmation part, absent with {@code confirm} 0. */
    public java.util.Optional<Part> confirmation() {
        return java.util.Optional.ofNullable(confirmation);
    }

    /** How the held-out subjects were split. */
    public Parts parts() {
        return parts;
    }

    /** The split's row id in the store, or null without an output folder. */
    public Long splitId() {
        return splitId;
    }

    public HeldOut heldOut() {
        return heldOut;
    }

    public Cohort cohort() {
        return cohort;
    }

    /** The decoder the scorers use: {@link #decoder()} itself, or its twin on a decode backend. */
    public Decoder scoringDecoder() {
        return scoringDecoder;
    }

    public Decoder decoder() {
        return decoder;
    }

    public Settings settings() {
        return settings;
    }

    /** The score of the empty lesion on the search part. */
    public LesionScorer.Scored intact() {
        return search.intact();
    }

    /** Whether a set scored on the search part is critical under the session's criterion. */
    public boolean critical(SetScore score) {
        return search.critical(score);
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
        return search.inputs().toInputs(atlasSet, cohort.atlas());
    }

    @Override
    public void close() {
        if (store != null) {
            store.finish(run);
            store.close();
        }
        if (scoringDecoder != decoder) {
            scoringDecoder.close(); // the backend's twin (its broadcasts); the caller's decoder stays open
        }
    }
}
