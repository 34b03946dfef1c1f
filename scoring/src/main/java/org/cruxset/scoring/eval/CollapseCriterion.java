package org.cruxset.scoring.eval;

import java.util.Locale;
import java.util.Objects;
import org.cruxset.scoring.Checks;

/**
 * The one definition of a critical lesion set, used by every strategy. {@code BINOMIAL}: accuracy not
 * significantly above chance (one-sided exact binomial p ≥ α; the default, α = 0.05). {@code UPPER}: the upper end
 * of the 95% Wilson interval of the accuracy is at or below chance + D, i.e. the data rule out accuracy more than D
 * above chance. {@code ACCURACY}: accuracy at or below an absolute value. {@code FRACTION}: accuracy has fallen at
 * least the given fraction of the way from the intact accuracy to chance.
 *
 * <p>{@code BINOMIAL} gets easier to meet as samples shrink (absence of evidence: at chance 1/6 a set counts as
 * critical up to 15 of 60 correct, 25%, but up to 9 of 30, 30%); {@code UPPER} gets harder (evidence of absence:
 * {@code upper:0.05} allows up to 34 of 216 correct, 15.7%, but only 2 of 30). D should exceed the Wilson half-width
 * at chance, about 1.96·sqrt(c(1 − c)/n) (0.05 for c = 1/6 and n = 216), or no set can meet it without scoring below
 * chance.
 */
public record CollapseCriterion(Kind kind, double value) {
    /** The kinds of criterion. */
    public enum Kind { BINOMIAL, UPPER, ACCURACY, FRACTION }

    public CollapseCriterion {
        Objects.requireNonNull(kind, "kind");
        switch (kind) {
            case BINOMIAL -> Checks.within("alpha", value, 1e-12, 0.5);
            case UPPER, ACCURACY, FRACTION -> Checks.within(kind.name().toLowerCase(Locale.ROOT), value, 0.0, 1.0);
            default -> throw new IllegalStateException();
        }
    }

    /** Slack for comparing a computed bound with chance + D, far below any difference one sample makes. */
    private static final double TOLERANCE = 1e-12;

    /** The default: not significantly above chance at α = 0.05. */
    public static CollapseCriterion defaults() {
        return new CollapseCriterion(Kind.BINOMIAL, 0.05);
    }

    /** Parses {@code binomial:ALPHA}, {@code upper:D}, {@code accuracy:A} or {@code fraction:F}. */
    public static CollapseCriterion parse(String text) {
        int colon = text.indexOf(':');
        String kind = colon < 0 ? text : text.substring(0, colon);
        String value = colon < 0 ? "" : text.substring(colon + 1);
        Kind k = switch (kind.trim().toLowerCase(Locale.ROOT)) {
            case "binomial" -> Kind.BINOMIAL;
            case "upper" -> Kind.UPPER;
            case "accuracy" -> Kind.ACCURACY;
            case "fraction" -> Kind.FRACTION;
            default -> throw new IllegalArgumentException("collapse criterion must be binomial:ALPHA, upper:D, accuracy:A "
                    + "or fraction:F, found '" + text + "'");
        };
        if (value.isBlank()) {
            if (k == Kind.BINOMIAL) {
                return defaults();
            }
            throw new IllegalArgumentException("collapse criterion '" + text + "' needs a value, e.g. " + kind + ":0.25");
        }
        try {
            return new CollapseCriterion(k, Double.parseDouble(value.trim()));
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException("collapse criterion '" + text + "': '" + value + "' is not a number");
        }
    }

    /** Whether {@code set} is critical; {@code intact} is the score of the empty lesion on the same samples. */
    public boolean critical(SetScore set, SetScore intact) {
        return switch (kind) {
            case BINOMIAL -> set.pValue() >= value;
            case UPPER -> set.wilsonHigh() <= set.chance() + value + TOLERANCE;
            case ACCURACY -> set.accuracy() <= value;
            case FRACTION -> set.accuracy() <= intact.accuracy() - value * (intact.accuracy() - set.chance());
        };
    }

    /**
     * The largest count of correct samples out of {@code n} that is critical, at chance {@code chance} (the full
     * part's majority-class rate) and against {@code intact}: every criterion is monotone in the count, so a set is
     * critical exactly when its count is at most this; −1 when no count is. Agrees with {@link #critical} on every
     * count.
     */
    public int criticalCount(int n, double chance, SetScore intact) {
        int last = -1;
        for (int k = 0; k <= n; k++) {
            if (!critical(countScore(n, k, chance), intact)) {
                break;
            }
            last = k;
        }
        return last;
    }

    /** The parts of a score the criteria read, for {@code correct} of {@code n} correct at {@code chance}. */
    static SetScore countScore(int n, int correct, double chance) {
        double[] ci = org.cruxset.scoring.stats.Binomial.wilson(correct, n, org.cruxset.scoring.stats.Binomial.Z95);
        return new SetScore(n, correct, (double) correct / n, Double.NaN, Double.NaN, new double[0], chance, ci[0],
                ci[1], org.cruxset.scoring.stats.Binomial.pValueAtLeast(correct, n, chance));
    }

    /** A sentence for reports. */
    public String describe() {
        return switch (kind) {
            case BINOMIAL -> "accuracy not significantly above chance (one-sided exact binomial, alpha " + value + ")";
            case UPPER -> "upper end of the 95% Wilson interval of accuracy at or below chance + " + value;
            case ACCURACY -> "accuracy at or below " + value;
            case FRACTION -> "accuracy fallen at least " + value + " of the way from intact accuracy to chance";
        };
    }

    /** The option spelling, e.g. {@code binomial:0.05}. */
    public String label() {
        return kind.name().toLowerCase(Locale.ROOT) + ":" + value;
    }
}
