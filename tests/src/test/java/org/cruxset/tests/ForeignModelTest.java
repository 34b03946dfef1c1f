package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.util.List;
import java.util.Random;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.testing.RandomModels;
import org.cruxset.search.cli.CruxsetCommand;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** A model exported elsewhere (the PyTorch fixture) scored on a cohort of our own: the whole cohort is held out. */
class ForeignModelTest {
    static final Path MODEL = Cli.root().resolve("tests/fixtures/onnx/torch_batch_first.onnx");

    private static Path cohort(Path dir, long seed) {
        Atlas atlas = RandomModels.atlas(6, 3);
        List<Sample> samples = new java.util.ArrayList<>();
        for (Sample s : RandomModels.samples(new Random(seed), 30, 6, 5, 12, List.of("north", "south", "west"))) {
            samples.add(s.withSplit(Split.UNASSIGNED));
        }
        CohortFiles.write(new Cohort(atlas, samples), dir, false);
        return dir;
    }

    @Test
    void theWholeCohortIsHeldOutAndMeanNeedsAReference(@TempDir Path dir) {
        Path c = cohort(dir.resolve("cohort"), 1);
        CruxsetCommand.Captured info = Cli.run("info", "--model", MODEL.toString(), "--cohort", c.toString()).requireSuccess();
        assertTrue(info.out().contains("whole cohort (30 samples; the model was trained elsewhere)"), info.out());
        assertTrue(info.out().contains("unnamed: atlas index order"), info.out());
        CruxsetCommand.Captured refused = Cli.run("score", "--model", MODEL.toString(), "--cohort", c.toString(), "--lesion", "r01",
                "--mode", "mean", "--out", dir.resolve("out").toString());
        assertEquals(2, refused.exit(), refused.err());
        assertTrue(refused.err().contains("--reference COHORT"), refused.err());
        Path ref = cohort(dir.resolve("reference"), 2);
        CruxsetCommand.Captured ok = Cli.run("score", "--model", MODEL.toString(), "--cohort", c.toString(), "--lesion", "r01,network:net1",
                "--mode", "mean", "--reference", ref.toString(), "--out", dir.resolve("out").toString()).requireSuccess();
        assertTrue(ok.out().contains("whole cohort"), ok.out());
        assertTrue(ok.out().contains("r01,network:net1"), ok.out());
    }
}
