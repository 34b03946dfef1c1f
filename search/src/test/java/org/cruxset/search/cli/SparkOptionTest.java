package org.cruxset.search.cli;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.Random;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.gru.GruNetwork;
import org.cruxset.scoring.onnx.OnnxGruWriter;
import org.cruxset.scoring.testing.RandomModels;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The default application carries no cluster backend: --spark is refused with a message naming the cluster build. */
class SparkOptionTest {
    @Test
    void theDefaultBuildRefusesSparkAndNamesTheClusterBuild(@TempDir Path dir) throws Exception {
        Random rng = new Random(3);
        List<String> classes = List.of("a", "b");
        Atlas atlas = RandomModels.atlas(6, 3);
        GruNetwork net = RandomModels.randomNetwork(rng, 6, new int[] {4}, new boolean[] {false}, 2, 0.5);
        Path model = dir.resolve("m.onnx");
        Files.write(model, OnnxGruWriter.write(net, atlas.names(), classes, Preprocessing.NONE, Map.of()));
        CohortFiles.write(new Cohort(atlas, RandomModels.samples(rng, 24, 6, 5, 8, classes)), dir.resolve("c"), false);
        CruxsetCommand.Captured r = CruxsetCommand.capture("score", "--model", model.toString(), "--cohort",
                dir.resolve("c").toString(), "--lesion", atlas.names().get(0), "--out", dir.resolve("out").toString(),
                "--spark", "local[2]");
        assertEquals(2, r.exit(), r.out() + "\n" + r.err());
        assertTrue(r.err().contains(ScoringOptions.NO_CLUSTER), r.err());
        assertTrue(r.err().contains("./cruxset-cluster"), r.err());
    }
}
