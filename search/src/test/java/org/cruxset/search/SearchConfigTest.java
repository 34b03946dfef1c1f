package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The strategy settings file: the one shipped in configs/ states the defaults, and a file names only what it changes. */
class SearchConfigTest {
    @Test
    void theShippedFileStatesEveryDefault() {
        Path file = Path.of("..", "configs", "search.yaml");
        assertTrue(Files.isRegularFile(file), "configs/search.yaml is shipped");
        assertEquals(SearchConfig.defaults(), SearchConfig.read(file), "configs/search.yaml must match the defaults");
    }

    @Test
    void aFileNamesOnlyWhatItChangesAndBadValuesAreNamed(@TempDir Path dir) throws Exception {
        Path file = dir.resolve("s.yaml");
        Files.writeString(file, "genetic: {population: 60}\nlocal: {startFactor: 2.0}\n");
        SearchConfig c = SearchConfig.read(file);
        assertEquals(60, c.genetic().population());
        assertEquals(SearchConfig.defaults().genetic().crossover(), c.genetic().crossover());
        assertEquals(2.0, c.local().startFactor());
        Files.writeString(file, "local: {focus: 1.5}\n");
        Exception e = assertThrows(RuntimeException.class, () -> SearchConfig.read(file));
        assertTrue(e.getMessage().contains("focus"), e.getMessage());
    }

    @Test
    void theOvernightPlanParsesAndBadStrategyNamesAreNamed(@TempDir Path dir) throws Exception {
        SearchConfig c = SearchConfig.read(Path.of("..", "configs", "overnight.yaml"));
        assertEquals(5, c.compare().strategies().size());
        assertEquals(20_000L, c.compare().budget());
        assertEquals(SearchConfig.defaults().genetic(), c.genetic(), "strategy settings keep their defaults");
        Path file = dir.resolve("bad.yaml");
        Files.writeString(file, "compare: {strategies: [genetic, annealing]}\n");
        Exception e = assertThrows(RuntimeException.class, () -> SearchConfig.read(file));
        assertTrue(e.getMessage().contains("annealing"), e.getMessage());
    }
}
