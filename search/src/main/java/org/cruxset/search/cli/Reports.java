package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.util.Map;
import java.util.TreeMap;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.eval.SetScore;

/** Plain-text summaries printed by several commands. */
final class Reports {
    static final String CAUTION = "Caution: a virtual lesion of a decoder describes the decoder, not causal brain function. "
            + "Results are not for clinical decisions.";

    private Reports() {
    }

    static void cohort(PrintWriter pw, Cohort c) {
        int minT = Integer.MAX_VALUE;
        int maxT = 0;
        Map<String, Integer> perClass = new TreeMap<>();
        Map<Split, Integer> perSplit = new TreeMap<>();
        for (Sample s : c.samples()) {
            minT = Math.min(minT, s.length());
            maxT = Math.max(maxT, s.length());
            perClass.merge(s.label(), 1, Integer::sum);
            perSplit.merge(s.split(), 1, Integer::sum);
        }
        pw.printf("Cohort: %d samples from %d subjects; %d-%d time points per sample%n", c.samples().size(),
                c.subjects().size(), minT, maxT);
        pw.printf("  classes (%d): %s%n", perClass.size(), perClass);
        pw.printf("  splits: %s%n", perSplit);
        pw.printf("Atlas: %d regions in %d networks: %s%n", c.atlas().size(), c.atlas().networks().size(),
                networkSizes(c));
    }

    private static String networkSizes(Cohort c) {
        StringBuilder sb = new StringBuilder();
        c.atlas().networks().forEach((k, v) -> sb.append(sb.length() == 0 ? "" : ", ").append(k).append(" (").append(v.size()).append(')'));
        return sb.toString();
    }

    static void model(PrintWriter pw, ModelCard card) {
        pw.printf("Model: %d input regions%s, %d classes %s, preprocessing %s%n", card.regions(),
                card.regionNames().isEmpty() ? " (unnamed: atlas index order)" : " (named)", card.classes(),
                card.classLabels(), card.preprocessing().label());
        pw.printf("  engine: %s (%s)%n", card.engine(), card.engineReason());
        pw.printf("  sha256: %s%n", card.modelHash());
        pw.printf("  region statistics for the mean and noise lesion modes: %s%n",
                card.metadata().containsKey(org.cruxset.scoring.lesion.ReferenceStats.MEAN_KEY)
                        ? "recorded (training split)" : "not recorded (give --reference COHORT to use those modes)");
    }

    /** The opening of every scoring command's output: the caution, the held-out data and how it was split. */
    static void header(PrintWriter pw, org.cruxset.scoring.eval.ScoringSession session) {
        pw.println(CAUTION);
        pw.printf("Held-out data: %s.%n", session.heldOut().description());
        if (session.scoringDecoder() != session.decoder()) {
            pw.printf("Scoring: %s.%n", session.scoringDecoder().card().engineReason());
        }
        parts(pw, session);
    }

    /** Says how held-out subjects were split into parts and which part strategies see. */
    static void parts(PrintWriter pw, org.cruxset.scoring.eval.ScoringSession session) {
        org.cruxset.scoring.eval.Parts p = session.parts();
        if (!p.hasConfirmation()) {
            pw.printf("No confirmation part (--confirm 0): every held-out sample (%d, %d subjects) is in the search "
                    + "part, so scores of sets selected on them are optimistic (selection bias).%n", p.search().size(),
                    p.searchSubjects().size());
            return;
        }
        pw.printf("Split by subject (--split-seed %d, --confirm %s) into a search part of %d samples (%d subjects), "
                        + "which search strategies see and spend their budget on (one scored set = one set scored on "
                        + "all %d), and a confirmation part of %d samples (%d subjects), never seen by a search.%n",
                p.seed(), p.confirmFraction(), p.search().size(), p.searchSubjects().size(), p.search().size(),
                p.confirmation().size(), p.confirmationSubjects().size());
    }

    static void score(PrintWriter pw, String what, SetScore q) {
        pw.printf("%s: accuracy %.3f (95%% Wilson %.3f-%.3f), %d of %d correct; chance %.3f (majority class); "
                        + "one-sided exact binomial p = %.3g%n",
                what, q.accuracy(), q.wilsonLow(), q.wilsonHigh(), q.correct(), q.n(), q.chance(), q.pValue());
    }
}
