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
                           @JsonProperty("screen") SurrogateScreen.Settings screen) {
    public SearchConfig {
        Objects.requireNonNull(genetic, "genetic");
        Objects.requireNonNull(local, "local");
        Objects.requireNonNull(surrogate, "surrogate");
        Objects.requireNonNull(screen, "screen");
    }

    /** The defaults, chosen by measurement on the search benchmark (see DEVELOPERS.md). */
    public static SearchConfig defaults() {
        return new SearchConfig(GeneticStrategy.Settings.defaults(), LocalSearch.Settings.defaults(),
                SurrogateStrategy.Settings.defaults(), SurrogateScreen.Settings.defaults());
    }

    /** The defaults overridden by {@code file} (null: the defaults). */
    public static SearchConfig read(Path file) {
        return file == null ? defaults() : YamlConfig.readOverDefaults(file, defaults(), SearchConfig.class);
    }
}
