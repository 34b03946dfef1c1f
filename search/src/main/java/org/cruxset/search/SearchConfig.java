package org.cruxset.search;

import com.fasterxml.jackson.annotation.JsonProperty;
import java.nio.file.Path;
import java.util.Objects;
import org.cruxset.scoring.config.YamlConfig;
import org.cruxset.search.strategy.GeneticStrategy;
import org.cruxset.search.strategy.SurrogateScreen;
import org.cruxset.search.strategy.SurrogateStrategy;
import org.cruxset.search.strategy.local.LocalSearch;

/**
 * Strategy settings read from a YAML file ({@code cruxset search --config FILE}); a file names only what it changes,
 * e.g. {@code genetic: {population: 60, patience: 100}} or {@code local: {acceptor: late, acceptorSize: 400}}. The settings used are recorded with the run.
 */
public record SearchConfig(@JsonProperty("genetic") GeneticStrategy.Settings genetic,
                           @JsonProperty("local") LocalSearch.Settings local,
                           @JsonProperty("surrogate") SurrogateStrategy.Settings surrogate,
                           @JsonProperty("screen") SurrogateScreen.Settings screen,
                           @JsonProperty("compare") Compare compare) {
    /**
     * The plan of {@code cruxset compare}: strategies (as {@link StrategySpec} names them), seeds 1..{@code seeds}, the
     * budget of scored sets per run (null: given on the command line), and a known minimum (null: none).
     */
    public record Compare(@JsonProperty("strategies") java.util.List<String> strategies,
                          @JsonProperty("seeds") int seeds, @JsonProperty("budget") Long budget,
                          @JsonProperty("minimum") Integer minimum) {
        public Compare {
            strategies = java.util.List.copyOf(strategies);
            for (String s : strategies) {
                StrategySpec.parse(s);
            }
            if (seeds < 1 || (budget != null && budget < 1) || (minimum != null && minimum < 1)) {
                throw new IllegalArgumentException("seeds, budget and minimum must be at least 1");
            }
        }

        /** The defaults: grow+prune, genetic, local and surrogate, 10 seeds, budget and minimum not set. */
        public static Compare defaults() {
            return new Compare(java.util.List.of("grow+prune", "genetic", "local", "surrogate"), 10, null, null);
        }
    }

    public SearchConfig {
        Objects.requireNonNull(genetic, "genetic");
        Objects.requireNonNull(local, "local");
        Objects.requireNonNull(surrogate, "surrogate");
        Objects.requireNonNull(screen, "screen");
        Objects.requireNonNull(compare, "compare");
    }

    /** The defaults, chosen by measurement on the search benchmark (see DEVELOPERS.md). */
    public static SearchConfig defaults() {
        return new SearchConfig(GeneticStrategy.Settings.defaults(), LocalSearch.Settings.defaults(),
                SurrogateStrategy.Settings.defaults(), SurrogateScreen.Settings.defaults(), Compare.defaults());
    }

    /** The defaults overridden by {@code file} (null: the defaults). */
    public static SearchConfig read(Path file) {
        return file == null ? defaults() : YamlConfig.readOverDefaults(file, defaults(), SearchConfig.class);
    }
}
