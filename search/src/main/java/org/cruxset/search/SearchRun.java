package org.cruxset.search;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.store.SearchRecords;
import org.cruxset.search.strategy.PruneStrategy;

/**
 * Runs one strategy on a scoring session: starts (or resumes) the search's row in the store, runs the strategy until
 * it ends or the budget (less a share kept for certificates) or time is spent, prunes the best critical sets so each
 * carries an irreducibility certificate (unless told not to), paid from that share and whatever the strategy left, re-scores every reported set on the confirmation part (not charged), and records the front,
 * the reported sets and the status.
 */
public final class SearchRun {
    /**
     * Settings of a search besides the strategy: time limit (infinite: none), deadline (nullable), seed, pruning, how
     * many best sets to certify, and the share of a finite budget kept back from the strategy for the certificates.
     */
    public record Settings(double timeLimitSeconds, Instant deadline, long seed, boolean prune, int certify,
                           double reserve, boolean race) {
        /** The share of the budget kept for certificates unless told otherwise. */
        public static final double DEFAULT_RESERVE = 0.05;

        /** Settings without racing: every set is scored whole. */
        public Settings(double timeLimitSeconds, Instant deadline, long seed, boolean prune, int certify,
                        double reserve) {
            this(timeLimitSeconds, deadline, seed, prune, certify, reserve, false);
        }

        public Settings {
            if (!(reserve >= 0 && reserve < 1)) {
                throw new IllegalArgumentException("the reserve must be within [0, 1), found " + reserve);
            }
            if (!(timeLimitSeconds > 0)) {
                throw new IllegalArgumentException("the time limit must be positive, found " + timeLimitSeconds);
            }
            if (certify < 0) {
                throw new IllegalArgumentException("certify must be 0 or more, found " + certify);
            }
        }
    }

    /** A reported set: search-part and confirmation-part scores, verdicts and certificate. */
    public record Reported(RegionSet set, SetScore search, boolean searchCritical, SetScore confirmation,
                           Boolean confirmationCritical, Long certificate) {
    }

    /**
     * The outcome: why it stopped ({@code finished}, {@code budget} or {@code time}) and the message, the best
     * critical size (−1 when none), the reported sets, the core (in every reported set) and the interchangeable rest,
     * the front, the sets charged (in all, and when the best critical size was first reached), whether the run was
     * resumed, the search time, this session's batches (count, sets asked for, largest), and its critical-or-not
     * decisions and how many of them a race settled before every sample was scored.
     */
    public record Result(String status, String stopMessage, int bestSize, List<Reported> reported, RegionSet core,
                         RegionSet interchangeable, List<Front.Entry> front, double charged, double chargedAtBest,
                         int notKept, boolean resumed, double elapsedSeconds, double elapsedBeforeSeconds,
                         int batches, long batchedSets, int largestBatch, long decisions, long racedDecisions) {
        public Result {
            reported = List.copyOf(reported);
            front = List.copyOf(front);
        }
    }

    private SearchRun() {
    }

    /** Runs {@code strategy} on {@code session}; {@code listener} (nullable) hears every batch. */
    public static Result run(ScoringSession session, Strategy strategy, Settings settings,
                             SearchContext.Listener listener) {
        Objects.requireNonNull(strategy, "strategy");
        SearchRecords records = session.store() == null ? null : new SearchRecords(session.store(), session.run());
        double elapsedBefore = 0;
        double timeLimit = settings.timeLimitSeconds();
        Instant deadline = settings.deadline();
        if (records != null) {
            double budget = session.scorer().budget().limit();
            SearchRecords.SearchState st = records.begin(new SearchRecords.SearchInfo(strategy.name(),
                    strategy.settings() + ", prune=" + settings.prune(), session.settings().criterion().label(),
                    Double.isInfinite(budget) ? null : budget,
                    Double.isInfinite(timeLimit) ? null : timeLimit, deadline));
            elapsedBefore = st.elapsedSeconds();
            if (st.timeLimitSeconds() != null) {
                timeLimit = st.timeLimitSeconds();
            }
            if (st.deadline() != null) {
                deadline = st.deadline();
            }
        }
        SearchContext ctx = new SearchContext(session, settings.seed(), records, elapsedBefore, timeLimit, deadline,
                listener);
        if (settings.race()) {
            ctx.race(LesionScorer.Racing.defaults(settings.seed(), session.search().inputs().size()));
        }
        boolean certify = settings.prune() && !(strategy instanceof PruneStrategy);
        double budget = session.scorer().budget().limit();
        if (certify && Double.isFinite(budget)) {
            ctx.reserve(Math.floor(settings.reserve() * budget));
        }
        Outcome outcome = runStrategy(strategy, ctx);
        if (certify && !outcome.status().equals("time")) {
            ctx.reserve(0);
            outcome = certify(ctx, settings.certify(), outcome);
            if (outcome.status().equals("budget") && session.scorer().budget().remaining() > 0) {
                // The strategy stopped at its share; it runs again with what certifying left, replaying its path
                // (every set on it is paid for) up to where it stopped, so the budget is spent exactly.
                outcome = certify(ctx, settings.certify(), runStrategy(strategy, ctx));
            }
        }
        ctx.save(true);
        return finish(ctx, records, outcome.status(), outcome.message());
    }

    /** Why a phase of the run stopped: {@code finished}, {@code budget} or {@code time}, and the message. */
    private record Outcome(String status, String message) {
        static Outcome of(StopSearch stop, String suffix) {
            return new Outcome(stop.reason() == StopSearch.Reason.BUDGET ? "budget" : "time", stop.getMessage() + suffix);
        }
    }

    private static Outcome runStrategy(Strategy strategy, SearchContext ctx) {
        try {
            strategy.run(ctx);
            return new Outcome("finished", "the strategy ended by itself");
        } catch (StopSearch stop) {
            return Outcome.of(stop, "");
        }
    }

    /** Prunes and certifies the best sets; the outcome changes only when the budget or time runs out meanwhile. */
    private static Outcome certify(SearchContext ctx, int certify, Outcome outcome) {
        try {
            PruneStrategy.certifyBest(ctx, certify);
            return outcome;
        } catch (StopSearch stop) {
            return Outcome.of(stop, " while certifying the best sets");
        }
    }

    private static Result finish(SearchContext ctx, SearchRecords records, String status, String message) {
        ScoringSession session = ctx.session();
        Front front = ctx.front();
        List<RegionSet> best = front.bestCriticalSets();
        List<LesionScorer.Scored> searched = best.isEmpty() ? List.of() : session.scorer().score(best);
        List<LesionScorer.Scored> confirmed = best.isEmpty() ? List.of()
                : session.confirmation().map(p -> p.scorer().score(best)).orElse(null);
        List<Reported> reported = new ArrayList<>();
        RegionSet core = null;
        RegionSet union = RegionSet.empty(ctx.regions());
        List<SearchRecords.ResultEntry> entries = new ArrayList<>();
        for (int i = 0; i < best.size(); i++) {
            RegionSet s = best.get(i);
            SetScore c = confirmed == null ? null : confirmed.get(i).score();
            Boolean cc = c == null ? null : session.confirmation().get().critical(c);
            reported.add(new Reported(s, searched.get(i).score(), true, c, cc, ctx.certificateOf(s)));
            core = core == null ? s : core.intersect(s);
            union = union.union(s);
            if (records != null) {
                entries.add(new SearchRecords.ResultEntry(i + 1, session.scorer().key(s),
                        confirmed == null ? null : session.confirmation().get().scorer().key(s), ctx.certificateOf(s)));
            }
        }
        RegionSet interchangeable = core == null ? RegionSet.empty(ctx.regions()) : union.minus(core);
        if (records != null) {
            List<SearchRecords.FrontEntry> fe = new ArrayList<>();
            for (Front.Entry e : front.entries()) {
                fe.add(new SearchRecords.FrontEntry(session.scorer().key(e.set()), e.size(), e.critical()));
            }
            int bs = front.bestCriticalSize();
            records.finish(status, ctx.elapsedSeconds(), bs < 0 ? null : bs, fe, entries);
        }
        return new Result(status, message, front.bestCriticalSize(), reported,
                core == null ? RegionSet.empty(ctx.regions()) : core, interchangeable, front.entries(), ctx.charged(),
                ctx.chargedAtBest(), front.notKept(), session.run() != null && session.run().resumed(), ctx.elapsedSeconds(),
                ctx.elapsedBeforeSeconds(), ctx.batches(), ctx.batchedSets(), ctx.largestBatch(), ctx.decisions(),
                ctx.racedDecisions());
    }
}
