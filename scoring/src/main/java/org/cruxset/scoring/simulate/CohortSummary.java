package org.cruxset.scoring.simulate;

import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;

/**
 * Summary statistics of a cohort, written beside a simulated one so that a cohort generated again elsewhere can be
 * checked against it: the simulator uses {@link Math} (not {@link StrictMath}), so values may differ in the last bits
 * across platforms, while counts must match exactly and moments to many digits.
 */
public record CohortSummary(int samples, int subjects, int train, int validation, int test, long values, double mean,
                            double sd) {
    /** Relative tolerance of the moments when two summaries are compared. */
    public static final double TOLERANCE = 1e-6;

    /** The summary of {@code cohort} (moments over every value of every sample, accumulated in double precision). */
    public static CohortSummary of(Cohort cohort) {
        long count = 0;
        double sum = 0;
        double sumSq = 0;
        for (Sample s : cohort.samples()) {
            for (float v : s.values()) {
                sum += v;
                sumSq += (double) v * v;
                count++;
            }
        }
        double mean = count == 0 ? 0 : sum / count;
        double sd = count < 2 ? 0 : Math.sqrt(Math.max(0, (sumSq - count * mean * mean) / (count - 1)));
        return new CohortSummary(cohort.samples().size(), cohort.subjects().size(), cohort.split(Split.TRAIN).size(),
                cohort.split(Split.VALIDATION).size(), cohort.split(Split.TEST).size(), count, mean, sd);
    }

    /** What differs from {@code expected} (counts exactly, moments beyond {@link #TOLERANCE}); empty when they agree. */
    public List<String> differences(CohortSummary expected) {
        List<String> out = new ArrayList<>();
        count(out, "samples", samples, expected.samples);
        count(out, "subjects", subjects, expected.subjects);
        count(out, "train samples", train, expected.train);
        count(out, "validation samples", validation, expected.validation);
        count(out, "test samples", test, expected.test);
        count(out, "values", values, expected.values);
        moment(out, "mean", mean, expected.mean, sd);
        moment(out, "sd", sd, expected.sd, expected.sd);
        return out;
    }

    private static void count(List<String> out, String what, long found, long expected) {
        if (found != expected) {
            out.add(what + " " + found + ", expected " + expected);
        }
    }

    private static void moment(List<String> out, String what, double found, double expected, double scale) {
        if (!(Math.abs(found - expected) <= TOLERANCE * Math.max(Math.abs(scale), Math.abs(expected)))) {
            out.add(what + " " + found + ", expected " + expected);
        }
    }
}
