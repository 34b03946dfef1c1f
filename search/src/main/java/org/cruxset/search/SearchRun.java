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
 * it ends or the budget or time is spent, prunes the best critical sets so each carries an irreducibility certificate
 * (unless told not to), re-scores every reported set on the confirmation part (not charged), and records the front,
 * the reported sets and the status.
 */
public final class SearchRun {
    /** Settings of a search besides the strategy: time limit (infinite: none), deadline (nullable), seed, pruning. */
    public record Settings(double timeLimitSeconds, Instant deadline, long seed, boolean prune, int certify) {
        public Settings {
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
     * the front, the sets charged (in all, and when the best critical size was first reached), and whether the run was
     * resumed.
     */
    public record Result(String status, String stopMessage, int bestSize, List<Reported> reported, RegionSet core,
                         RegionSet interchangeable, List<Front.Entry> front, double charged, double chargedAtBest,
                         int notKept, boolean resumed, double elapsedSeconds, double elapsedBeforeSeconds) {
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
        String status = "finished";
        String message = "the strategy ended by itself";
        try {
            strategy.run(ctx);
            if (settings.prune() && !(strategy instanceof PruneStrategy)) {
                PruneStrategy.certifyBest(ctx, settings.certify());
            }
        } catch (StopSearch stop) {
            status = stop.reason() == StopSearch.Reason.BUDGET ? "budget" : "time";
            message = stop.getMessage();
        }
        ctx.save(true);
        return finish(ctx, records, status, message);
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
            core = core == null ? s : intersect(core, s);
            union = union.union(s);
            if (records != null) {
                entries.add(new SearchRecords.ResultEntry(i + 1, session.scorer().key(s),
                        confirmed == null ? null : session.confirmation().get().scorer().key(s), ctx.certificateOf(s)));
            }
        }
        RegionSet interchangeable = core == null ? RegionSet.empty(ctx.regions()) : minus(union, core);
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
                ctx.elapsedBeforeSeconds());
    }

    private static RegionSet intersect(RegionSet a, RegionSet b) {
        RegionSet out = RegionSet.empty(a.universe());
        for (int p : a.positions()) {
            if (b.contains(p)) {
                out = out.with(p);
            }
        }
        return out;
    }

    private static RegionSet minus(RegionSet a, RegionSet b) {
        RegionSet out = a;
        for (int p : b.positions()) {
            out = out.without(p);
        }
        return out;
    }
}
