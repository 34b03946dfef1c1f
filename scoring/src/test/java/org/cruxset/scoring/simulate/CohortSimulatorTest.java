package org.cruxset.scoring.simulate;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.HashMap;
import java.util.HashSet;
import java.util.Map;
import java.util.Set;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.config.YamlConfig;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

class CohortSimulatorTest {
    static Path ciConfig() {
        return Path.of(System.getProperty("cruxset.root", "..")).resolve("configs/ci.yaml");
    }

    @Test
    void sameSeedSameCohort() {
        SimulationConfig cfg = YamlConfig.read(ciConfig(), SimulationConfig.class);
        CohortSimulator.Result a = new CohortSimulator(cfg).run();
        CohortSimulator.Result b = new CohortSimulator(cfg).run();
        assertEquals(a.design(), b.design());
        assertEquals(a.cohort().samples().size(), b.cohort().samples().size());
        for (int i = 0; i < a.cohort().samples().size(); i++) {
            assertArrayEquals(a.cohort().samples().get(i).values(), b.cohort().samples().get(i).values());
        }
    }

    @Test
    void ciCohortHasTheAdvertisedShapeAndSplitsBySubject() {
        SimulationConfig cfg = YamlConfig.read(ciConfig(), SimulationConfig.class);
        CohortSimulator.Result r = new CohortSimulator(cfg).run();
        assertTrue(r.cohort().classes().size() >= 6);
        assertTrue(r.cohort().split(Split.TEST).size() >= 200, "test samples: " + r.cohort().split(Split.TEST).size());
        Map<String, Split> splitOf = new HashMap<>();
        for (Sample s : r.cohort().samples()) {
            Split prev = splitOf.putIfAbsent(s.subject(), s.split());
            assertTrue(prev == null || prev == s.split(), "subject " + s.subject() + " in two splits");
            assertTrue(s.length() >= cfg.time().min() && s.length() <= cfg.time().max());
        }
        Set<String> planted = new HashSet<>(r.design().pool());
        assertEquals(r.design().redundant().size() + 2 + r.design().decoys().size(), planted.size(), "planted regions are distinct");
        assertEquals(2, r.design().designedMinimalSets().size());
    }

    @Test
    void plantedComponentsHaveTheDesignedVarianceStructure() {
        SimulationConfig cfg = YamlConfig.read(ciConfig(), SimulationConfig.class);
        CohortSimulator.Result r = new CohortSimulator(cfg).run();
        // decoys are high-variance: their own noise dominates their background
        assertTrue(r.design().decoyVarianceRatio() > 3, "decoy variance ratio " + r.design().decoyVarianceRatio());
        // each pair member alone carries far less class signal than a redundant region
        assertTrue(r.design().pairSnr() < r.design().redundantSnr() / 5,
                "pair SNR " + r.design().pairSnr() + " vs redundant " + r.design().redundantSnr());
    }

    @Test
    void badConfigNamesTheFileAndField(@TempDir Path dir) throws Exception {
        String text = Files.readString(ciConfig()).replace("subjects: 40", "subjects: two");
        Path bad = dir.resolve("bad.yaml");
        Files.writeString(bad, text);
        YamlConfig.ConfigException e = assertThrows(YamlConfig.ConfigException.class,
                () -> YamlConfig.read(bad, SimulationConfig.class));
        assertTrue(e.getMessage().contains("bad.yaml") && e.getMessage().contains("subjects"), e.getMessage());
        Path unknown = dir.resolve("unknown.yaml");
        Files.writeString(unknown, Files.readString(ciConfig()) + "\nnoize: 3\n");
        e = assertThrows(YamlConfig.ConfigException.class, () -> YamlConfig.read(unknown, SimulationConfig.class));
        assertTrue(e.getMessage().contains("noize"), e.getMessage());
    }
}
