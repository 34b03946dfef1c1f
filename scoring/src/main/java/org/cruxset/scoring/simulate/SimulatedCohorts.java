package org.cruxset.scoring.simulate;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.AtomicMoveNotSupportedException;
import java.nio.file.FileAlreadyExistsException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.Comparator;
import java.util.stream.Stream;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.config.YamlConfig;

/** Writes simulated cohorts to folders: the cohort files, {@code truth.json} and a copy of the settings. */
public final class SimulatedCohorts {
    /** The copy of the settings written beside a simulated cohort. */
    public static final String CONFIG_COPY = "simulation.yaml";

    private SimulatedCohorts() {
    }

    /** Simulates the cohort of {@code config} (a YAML file) into {@code out}, replacing files of the same names. */
    public static CohortSimulator.Result write(Path config, Path out, boolean npy) {
        SimulationConfig cfg = YamlConfig.read(config, SimulationConfig.class);
        CohortSimulator.Result r = new CohortSimulator(cfg).run();
        try {
            Files.createDirectories(out);
            CohortFiles.write(r.cohort(), out, npy);
            TruthFile.writeDesign(out.resolve(TruthFile.NAME), cfg, r.design(), CohortSummary.of(r.cohort()));
            Files.copy(config, out.resolve(CONFIG_COPY), StandardCopyOption.REPLACE_EXISTING);
        } catch (IOException e) {
            throw new UncheckedIOException(out + ": cannot write the simulated cohort: " + e.getMessage(), e);
        }
        return r;
    }

    /**
     * Makes sure {@code out} holds the cohort of {@code config}: when its manifest is absent, simulates into a
     * temporary sibling folder and moves it into place, so a reader never sees half a cohort and two processes
     * generating at once both end with one whole cohort. Returns true when it generated the cohort.
     */
    public static boolean ensure(Path config, Path out) {
        if (Files.isRegularFile(out.resolve(CohortFiles.SAMPLES_FILE))) {
            return false;
        }
        Path parent = out.toAbsolutePath().getParent();
        Path tmp;
        try {
            Files.createDirectories(parent);
            tmp = Files.createTempDirectory(parent, "." + out.getFileName() + "-");
        } catch (IOException e) {
            throw new UncheckedIOException(out + ": cannot create a folder to generate the cohort in: " + e.getMessage(), e);
        }
        try {
            write(config, tmp, true);
            if (Files.isDirectory(out)) {
                try (Stream<Path> left = Files.list(out)) {
                    if (left.findAny().isEmpty()) {
                        Files.delete(out);
                    }
                }
            }
            try {
                Files.move(tmp, out, StandardCopyOption.ATOMIC_MOVE);
            } catch (AtomicMoveNotSupportedException e) {
                Files.move(tmp, out);
            }
            return true;
        } catch (FileAlreadyExistsException e) {
            if (Files.isRegularFile(out.resolve(CohortFiles.SAMPLES_FILE))) {
                return false;
            }
            throw new UncheckedIOException(out + " exists but holds no " + CohortFiles.SAMPLES_FILE
                    + ": remove it to let the cohort be generated", e);
        } catch (IOException e) {
            throw new UncheckedIOException(out + ": cannot generate the cohort: " + e.getMessage(), e);
        } finally {
            deleteQuietly(tmp);
        }
    }

    private static void deleteQuietly(Path dir) {
        if (!Files.exists(dir)) {
            return;
        }
        try (Stream<Path> all = Files.walk(dir)) {
            all.sorted(Comparator.reverseOrder()).forEach(p -> {
                try {
                    Files.delete(p);
                } catch (IOException ignored) {
                    // Best effort: a leftover temporary folder is harmless.
                }
            });
        } catch (IOException ignored) {
            // Best effort, as above.
        }
    }
}
