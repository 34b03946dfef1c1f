package org.cruxset.search.rank;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.Locale;
import java.util.Objects;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.stats.ClusteredStats;
import org.cruxset.scoring.stats.PairedTests;

/**
 * Lesion scans: one unit (a region, or a network as a group) lesioned at a time, each compared with the intact
 * decoder on the same samples. Per unit: accuracy under the lesion, the drop from intact with a subject-clustered
 * bootstrap interval of the paired difference, the exact McNemar test (samples independent) and the
 * subject-clustered McNemar test (Durkalski et al. 2003: samples of a subject may be correlated) on per-sample
 * correctness, the chosen test's p-value adjusted over the family of units (Holm or Benjamini–Hochberg), and whether
 * the unit's lesion alone is critical. Per-sample outcomes come from the scorer, so nothing is rescored.
 */
public final class LesionScan {
    /** Which paired test the correction and the flags use. */
    public enum Test {
        /** Exact McNemar: honest when each subject gives one sample, or samples are otherwise independent. */
        EXACT,
        /** Subject-clustered McNemar: honest when subjects give several correlated samples; wants many subjects. */
        CLUSTERED;

        /** Parses {@code exact} or {@code clustered}. */
        public static Test parse(String s) {
            return switch (s.toLowerCase(Locale.ROOT)) {
                case "exact" -> EXACT;
                case "clustered" -> CLUSTERED;
                default -> throw new IllegalArgumentException("the test must be exact or clustered, found '" + s + "'");
            };
        }

        /** The spelling in outputs. */
        public String label() {
            return name().toLowerCase(Locale.ROOT);
        }
    }

    /** Settings: the test flags use, the correction, the level, bootstrap resamples (0: no interval) and seed. */
    public record Settings(Test test, PairedTests.Correction correction, double alpha, int resamples, long seed) {
        public Settings {
            Objects.requireNonNull(test, "test");
            Objects.requireNonNull(correction, "correction");
            if (!(alpha > 0 && alpha < 1)) {
                throw new IllegalArgumentException("alpha must be within (0, 1), found " + alpha);
            }
            if (resamples < 0) {
                throw new IllegalArgumentException("resamples must be 0 or more, found " + resamples);
            }
        }
    }

    /**
     * One unit's result: its name and size in regions, its score, the samples it turned from right to wrong
     * ({@code lost}) and from wrong to right ({@code gained}), the accuracy drop and its 95% interval (NaN without
     * resamples), the drop in mean true-class probability, both p-values, the adjusted p-value of the chosen test,
     * whether that is at most alpha, and whether the lesion alone is critical.
     */
    public record Row(String unit, int size, SetScore score, int lost, int gained, double drop, double dropLow,
                      double dropHigh, double probabilityDrop, double pExact, double pClustered, double pAdjusted,
                      boolean significant, boolean critical) {
    }

    private LesionScan() {
    }

    /**
     * Analyses the units {@code names} (sizes {@code sizes}) scored as {@code scored} on {@code part}, sorted by
     * accuracy drop, largest first (ties: larger probability drop, then name).
     */
    public static List<Row> analyse(ScoringSession.Part part, List<String> names, int[] sizes,
                                    List<LesionScorer.Scored> scored, Settings settings) {
        if (names.size() != scored.size() || sizes.length != scored.size()) {
            throw new IllegalArgumentException("one name and size per scored unit: " + names.size() + ", "
                    + sizes.length + ", " + scored.size());
        }
        ModelInputs in = part.inputs();
        int n = in.size();
        int[] subjectOf = in.subjectIndex();
        int subjects = 0;
        for (int v : subjectOf) {
            subjects = Math.max(subjects, v + 1);
        }
        boolean[] intact = correct(part.intact(), in);
        double intactP = part.intact().score().meanTrueClassProbability();
        int m = scored.size();
        double[] chosen = new double[m];
        List<Row> rows = new ArrayList<>(m);
        for (int u = 0; u < m; u++) {
            LesionScorer.Scored s = scored.get(u);
            boolean[] lesioned = correct(s, in);
            int lost = 0;
            int gained = 0;
            int[] b = new int[subjects];
            int[] c = new int[subjects];
            for (int i = 0; i < n; i++) {
                if (intact[i] && !lesioned[i]) {
                    lost++;
                    b[subjectOf[i]]++;
                } else if (!intact[i] && lesioned[i]) {
                    gained++;
                    c[subjectOf[i]]++;
                }
            }
            double[] ci = settings.resamples() == 0 ? new double[] {Double.NaN, Double.NaN}
                    : ClusteredStats.pairedDifferenceBootstrap(intact, lesioned, subjectOf, subjects,
                    settings.resamples(), settings.seed() + u, 0.95);
            double pExact = PairedTests.mcNemarExact(lost, gained);
            double pClustered = PairedTests.mcNemarClustered(b, c);
            chosen[u] = settings.test() == Test.EXACT ? pExact : pClustered;
            rows.add(new Row(names.get(u), sizes[u], s.score(), lost, gained, (lost - gained) / (double) n, ci[0], ci[1],
                    intactP - s.score().meanTrueClassProbability(), pExact, pClustered, Double.NaN, false,
                    part.critical(s.score())));
        }
        double[] adjusted = settings.correction().adjust(chosen);
        List<Row> out = new ArrayList<>(m);
        for (int u = 0; u < m; u++) {
            Row r = rows.get(u);
            out.add(new Row(r.unit(), r.size(), r.score(), r.lost(), r.gained(), r.drop(), r.dropLow(), r.dropHigh(),
                    r.probabilityDrop(), r.pExact(), r.pClustered(), adjusted[u], adjusted[u] <= settings.alpha(),
                    r.critical()));
        }
        out.sort(Comparator.comparingDouble(Row::drop).reversed()
                .thenComparing(Comparator.comparingDouble(Row::probabilityDrop).reversed())
                .thenComparing(Row::unit));
        return out;
    }

    /** The scan as a ranking: units in the scan's order, valued by their accuracy drop. */
    public static Ranking ranking(List<Row> rows, Ranking.Kind kind, boolean complete, String part) {
        List<String> units = new ArrayList<>();
        List<Double> values = new ArrayList<>();
        List<String> sources = new ArrayList<>();
        for (Row r : rows) {
            units.add(r.unit());
            values.add(r.drop());
            sources.add("lesion-scan");
        }
        return new Ranking(kind, units, values, sources, complete, part,
                "drop in accuracy when the unit alone is lesioned");
    }

    private static boolean[] correct(LesionScorer.Scored s, ModelInputs in) {
        int[] pred = s.outcomes().predicted();
        boolean[] out = new boolean[pred.length];
        for (int i = 0; i < out.length; i++) {
            out[i] = pred[i] == in.label(i);
        }
        return out;
    }
}
