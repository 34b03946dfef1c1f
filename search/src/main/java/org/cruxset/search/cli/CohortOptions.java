package org.cruxset.search.cli;

import java.nio.file.Path;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.CohortFiles;
import picocli.CommandLine.Option;

/** Options shared by commands that read a cohort. */
public final class CohortOptions {
    @Option(names = "--cohort", required = true, paramLabel = "DIR",
            description = "Cohort folder (regions.tsv, samples.tsv and series/ or samples.npy), or its samples.tsv.")
    Path cohort;

    @Option(names = "--atlas", paramLabel = "TSV", description = "Atlas file, when not regions.tsv beside the manifest.")
    Path atlas;

    /** Reads the cohort. */
    Cohort read() {
        return atlas == null ? CohortFiles.read(cohort) : CohortFiles.read(atlas, manifest());
    }

    /** The folder holding the manifest. */
    Path folder() {
        Path parent = manifest().toAbsolutePath().getParent();
        return parent == null ? Path.of(".") : parent;
    }

    private Path manifest() {
        return cohort.toString().endsWith(".tsv") ? cohort : cohort.resolve(CohortFiles.SAMPLES_FILE);
    }
}
