package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.search.SearchContext;
import org.cruxset.search.StopSearch;
import org.cruxset.search.rank.DeletionCurve;
import org.cruxset.search.rank.Ranking;
import org.cruxset.search.rank.RankingFile;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset curve}: deletion and insertion curves of a ranking against random orders. */
@Command(name = "curve", mixinStandardHelpOptions = true,
        description = {"Lesion a ranking's top k units for k on a grid and trace accuracy against k (deletion curve); "
                + "keep only the top k (insertion curve); compare with random orders of the same units (a 5-95%% band) "
                + "and mark the smallest critical prefix.",
            "",
            "Scores the search part, through the same scorer, store and budget unit as search; every score is kept "
                + "in DIR/results.sqlite and reused."})
public final class CurveCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @Mixin
    CohortOptions cohort;

    @Mixin
    ScoringOptions scoring;

    @Option(names = "--ranking", required = true, paramLabel = "FILE",
            description = "The ranking to trace (TSV, as scan, search and exhaustive write).")
    Path ranking;

    @Option(names = "--k", defaultValue = "all", paramLabel = "GRID",
            description = "Grid of k: all (1..units), A:B, A:B:STEP or a list like 1,2,5,10. Default: ${DEFAULT-VALUE}.")
    String grid;

    @Option(names = "--no-insertion", description = "Skip the insertion curve (keep only the top k).")
    boolean noInsertion;

    @Option(names = "--null", defaultValue = "20", paramLabel = "R",
            description = "Random orders of the same units behind the null band (0: none). Default: ${DEFAULT-VALUE}.")
    int nullOrders;

    @Option(names = "--budget", paramLabel = "N",
            description = "At most N scored sets in all; fewer random orders are drawn when the band would not fit.")
    Long budget;

    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed of the random orders. Default: ${DEFAULT-VALUE}.")
    long seed;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        if (nullOrders < 0) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--null must be 0 or more, found " + nullOrders);
        }
        if (budget != null && budget < 1) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--budget must be at least 1, found " + budget);
        }
        Cohort c = cohort.read();
        Atlas atlas = c.atlas();
        Ranking r = RankingFile.read(ranking, atlas);
        int[] k;
        try {
            k = DeletionCurve.grid(grid, r.size());
        } catch (IllegalArgumentException e) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--k: " + e.getMessage());
        }
        boolean insertion = !noInsertion;
        int orders = nullOrders;
        if (budget != null) {
            long own = DeletionCurve.cost(k.length, insertion, 0, r.size());
            if (own > budget) {
                throw new CommandLine.ParameterException(spec.commandLine(), "--budget " + budget + " does not cover the "
                        + "curve itself (" + own + " scored sets for " + k.length + " grid points" + (insertion
                        ? ", deletion and insertion" : "") + "); give a coarser --k or a larger budget");
            }
            orders = (int) Math.min(orders, (budget - own) / k.length);
        }
        String command = String.join(" ", spec.commandLine().getParseResult().originalArgs());
        ScoringSession.Settings ss = scoring.settings("curve", command, seed,
                budget == null ? Double.POSITIVE_INFINITY : budget + 1, model.threads());
        try (Decoder decoder = model.open(); ScoringSession session = ScoringSession.open(decoder, c, ss)) {
            Reports.header(pw, session);
            ScoringSession.Part part = session.search();
            pw.printf(Locale.ROOT, "Ranking: %s (%d %s, %s, values: %s). Search part: n = %d, intact accuracy %.3f, "
                            + "chance %.3f. Critical means %s.%n", ranking, r.size(), r.kind().label(),
                    r.complete() ? "complete" : "not complete", r.meaning(), part.inputs().size(),
                    part.intact().score().accuracy(), part.intact().score().chance(),
                    session.settings().criterion().describe());
            pw.printf(Locale.ROOT, "Cost: %d grid points x (deletion%s + %d random orders), with the critical-prefix search at most %d "
                            + "scored sets%s.%n",
                    k.length, insertion ? " + insertion" : "", orders, DeletionCurve.cost(k.length, insertion, orders, r.size()),
                    orders < nullOrders ? " (--null " + nullOrders + " cut to " + orders + " to fit --budget " + budget
                            + ")" : "");
            ProgressBar bar = new ProgressBar(spec.commandLine().getErr(), "curve");
            long total = DeletionCurve.cost(k.length, insertion, orders, r.size());
            SearchContext ctx = new SearchContext(session, seed, null, 0, Double.POSITIVE_INFINITY, null,
                    x -> bar.update((int) Math.min(total, x.charged() - 1), (int) total,
                            session.scorer().decodedCount() + " decoded"));
            DeletionCurve.Result res;
            try {
                res = DeletionCurve.run(ctx, r, atlas, k, insertion, orders, seed);
            } catch (StopSearch s) {
                throw new IllegalStateException("the curve did not fit its budget: " + s.getMessage(), s);
            } finally {
                bar.done();
            }
            print(pw, res, insertion, r.size());
            Path tsv = scoring.out().resolve("curve.tsv");
            writeTsv(tsv, res);
            pw.printf("Written: %s. Results: %s%n", tsv, scoring.out().resolve(ScoringSession.STORE_FILE));
        }
        return 0;
    }

    private void print(PrintWriter pw, DeletionCurve.Result res, boolean insertion, int units) {
        boolean band = res.nullOrders() > 0;
        List<String[]> table = new ArrayList<>();
        table.add(new String[] {"k", "accuracy (top k lesioned)", "p(true)", "critical", insertion ? "accuracy (only top k kept)" : null,
            band ? "null 5%" : null, band ? "null median" : null, band ? "null 95%" : null, band ? "below band" : null});
        for (DeletionCurve.Point p : res.points()) {
            table.add(new String[] {Integer.toString(p.k()), f3(p.deletion().accuracy()),
                f3(p.deletion().meanTrueClassProbability()), p.deletionCritical() ? "CRITICAL" : "no",
                insertion ? f3(p.insertion().accuracy()) : null, band ? f3(p.nullLow()) : null,
                band ? f3(p.nullMedian()) : null, band ? f3(p.nullHigh()) : null,
                band ? (p.deletion().accuracy() < p.nullLow() ? "yes" : "no") : null});
        }
        pw.println();
        Table.print(pw, table);
        var prefix = res.prefix();
        boolean everyPrefix = res.points().size() == units;
        pw.println(prefix.length() < 0 ? "No prefix of the ranking is critical."
                : "Smallest critical prefix: k = " + prefix.length() + (everyPrefix ? " (every prefix was scored)"
                : prefix.monotoneAsSeen() ? ""
                : " (the scored prefixes were not monotone: " + String.join("; ", prefix.nonMonotone())
                + "; a shorter critical prefix cannot be ruled out)") + ".");
        if (band) {
            pw.printf(Locale.ROOT, "Area between the null median and the curve: %.3f accuracy x units (%.3f per unit of "
                    + "k; positive: the ranking's curve lies below the median of %d random orders).%n", res.area(),
                    res.meanGap(), res.nullOrders());
        }
    }

    private static void writeTsv(Path file, DeletionCurve.Result res) {
        TextFiles.write(file, w -> {
            w.write("k\tdeletion_accuracy\tdeletion_p_true\tdeletion_critical\tinsertion_accuracy\tnull_low05\t"
                    + "null_median\tnull_high95\n");
            for (DeletionCurve.Point p : res.points()) {
                w.write(String.join("\t", Integer.toString(p.k()), TextFiles.num(p.deletion().accuracy()),
                        TextFiles.num(p.deletion().meanTrueClassProbability()), Boolean.toString(p.deletionCritical()),
                        p.insertion() == null ? "NA" : TextFiles.num(p.insertion().accuracy()), TextFiles.num(p.nullLow()),
                        TextFiles.num(p.nullMedian()), TextFiles.num(p.nullHigh())) + "\n");
            }
        });
    }


    private static String f3(double v) {
        return String.format(Locale.ROOT, "%.3f", v);
    }
}
