package org.cruxset.search.bench;

import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.LesionScorer;
import org.cruxset.scoring.eval.Parts;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.lesion.LesionMode;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * The soak run: many random lesion sets of a planted problem scored through the real scorer and store in batches,
 * reporting sets per second, the store's size and bytes per scored set, and the heap in use after a collection at
 * every tenth of the run, so that memory that grows with the sets scored shows (run it under a small fixed heap).
 */
public final class Soak {
    /** One measurement: sets scored so far, seconds, heap in use after a collection (MB). */
    public record Point(long sets, double seconds, double heapMb) {
    }

    /** The outcome: sets, seconds, store bytes, bytes per set, the heap points, samples per set. */
    public record Result(long sets, double seconds, long storeBytes, int samples, List<Point> points) {
        public double setsPerSecond() {
            return sets / seconds;
        }

        public double bytesPerSet() {
            return (double) storeBytes / sets;
        }
    }

    private Soak() {
    }

    /** The problem scored: N = 300 as in the search benchmark, 14 subjects of 32 samples (224 in the search part). */
    public static PlantedProblem.Config config() {
        return new PlantedProblem.Config(300, 3, 3, 3, 11, 13, 8, 14, 7, 3, 2, 0.02, 0.15, 0.35);
    }

    /** Scores {@code sets} random sets (sizes 1 to 30, seeded) in batches of {@code batch}, storing in {@code dir}. */
    public static Result run(long sets, int batch, Path dir, PrintWriter log) throws IOException {
        PlantedProblem p = new PlantedProblem(config(), 1);
        ScoringSession.Settings settings = new ScoringSession.Settings(LesionMode.ZERO, 0, null,
                CollapseCriterion.defaults(), Double.POSITIVE_INFINITY, 1, dir, "soak", "soak " + sets, 1,
                Parts.DEFAULT_SEED, Parts.DEFAULT_CONFIRM);
        SplittableRandom rng = new SplittableRandom(7);
        List<Point> points = new ArrayList<>();
        long t0 = System.nanoTime();
        int samples;
        try (Decoder d = p.decoder(); ScoringSession session = ScoringSession.open(d, p.cohort(), settings)) {
            LesionScorer scorer = session.scorer();
            samples = scorer.inputs().size();
            int n = scorer.inputs().batch().regions();
            long done = 0;
            long nextMark = Math.max(1, sets / 10);
            while (done < sets) {
                int b = (int) Math.min(batch, sets - done);
                List<RegionSet> list = new ArrayList<>(b);
                for (int i = 0; i < b; i++) {
                    int k = 1 + rng.nextInt(30);
                    RegionSet s = RegionSet.empty(n);
                    while (s.size() < k) {
                        s = s.with(rng.nextInt(n));
                    }
                    list.add(s);
                }
                scorer.score(list);
                done += b;
                if (done >= nextMark || done == sets) {
                    System.gc();
                    Runtime rt = Runtime.getRuntime();
                    Point pt = new Point(done, (System.nanoTime() - t0) / 1e9,
                            (rt.totalMemory() - rt.freeMemory()) / 1048576.0);
                    points.add(pt);
                    if (log != null) {
                        log.printf(Locale.ROOT, "  %,d sets in %.1f s (%.0f sets/s), heap in use after a collection "
                                + "%.0f MB%n", pt.sets(), pt.seconds(), pt.sets() / pt.seconds(), pt.heapMb());
                        log.flush();
                    }
                    nextMark += Math.max(1, sets / 10);
                }
            }
        }
        double seconds = (System.nanoTime() - t0) / 1e9;
        long bytes = 0;
        for (String f : List.of(ScoringSession.STORE_FILE, ScoringSession.STORE_FILE + "-wal")) {
            Path x = dir.resolve(f);
            if (Files.exists(x)) {
                bytes += Files.size(x);
            }
        }
        return new Result(sets, seconds, bytes, samples, points);
    }
}
