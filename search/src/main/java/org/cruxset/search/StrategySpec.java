package org.cruxset.search;

import java.util.List;
import org.cruxset.search.strategy.GeneticStrategy;
import org.cruxset.search.strategy.GrowStrategy;
import org.cruxset.search.strategy.LocalStrategy;
import org.cruxset.search.strategy.RandomStrategy;
import org.cruxset.search.strategy.RankedStrategy;
import org.cruxset.search.strategy.SurrogateScreen;
import org.cruxset.search.strategy.SurrogateStrategy;

/**
 * A strategy named as the benchmark and {@code compare} name it: a base ({@link #BASES}) with modifiers, {@code ~race}
 * (race decisions) and {@code ~screen} (a surrogate screen; genetic and local). Whether the best sets are pruned
 * and certified afterwards: always, except for plain {@code grow} (whose {@code grow+prune} form prunes).
 */
public record StrategySpec(String name, String base, boolean race, boolean screen, boolean prune) {
    /** The bases. */
    public static final List<String> BASES = List.of("random", "grow", "grow+prune", "grow-lazy+prune", "ranked+prune",
            "genetic", "local", "surrogate");

    /** Parses a name such as {@code genetic~screen~race}; fails naming what is expected. */
    public static StrategySpec parse(String name) {
        String base = name.replace("~race", "").replace("~screen", "");
        if (!BASES.contains(base)) {
            throw new IllegalArgumentException("unknown strategy '" + name + "': expected one of " + BASES
                    + ", optionally with ~race and, for genetic and local, ~screen");
        }
        boolean screen = name.contains("~screen");
        if (screen && !base.equals("genetic") && !base.equals("local")) {
            throw new IllegalArgumentException("~screen works with genetic and local, found '" + name + "'");
        }
        return new StrategySpec(name, base, name.contains("~race"), screen, !base.equals("grow"));
    }

    /** A new strategy with the settings of {@code config} (single-lesion rankings where a ranking is used). */
    public Strategy create(SearchConfig config) {
        // Local search descends through sets larger than the best critical set found so far (from other starts), so
        // it needs their scores: only genetic search skips dominated candidates.
        SurrogateScreen s = !screen ? null
                : new SurrogateScreen(base.equals("local") ? config.screen().withDominated(false) : config.screen());
        return switch (base) {
            case "random" -> new RandomStrategy();
            case "grow", "grow+prune" -> new GrowStrategy(false, false);
            case "grow-lazy+prune" -> new GrowStrategy(false, true);
            case "ranked+prune" -> new RankedStrategy(null);
            case "local" -> new LocalStrategy(config.local(), null, s);
            case "genetic" -> new GeneticStrategy(config.genetic(), null, s);
            case "surrogate" -> new SurrogateStrategy(config.surrogate(), null);
            default -> throw new IllegalStateException(base);
        };
    }
}
