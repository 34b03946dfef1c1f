package org.cruxset.search.cli;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.store.TsvExport;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset export}: writes the results store of an output folder as TSV views. */
@Command(name = "export", mixinStandardHelpOptions = true,
        description = "Write an output folder's results store as TSV files (runs, evaluations, per-sample outcomes) for Python or R.")
public final class ExportCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--out", required = true, paramLabel = "DIR", description = "Output folder holding results.sqlite.")
    Path out;

    @Option(names = "--to", paramLabel = "DIR", description = "Where to write the TSV files. Default: DIR/export.")
    Path to;

    @Override
    public Integer call() {
        Path db = out.resolve(ScoringSession.STORE_FILE);
        if (!Files.isRegularFile(db)) {
            throw new IllegalArgumentException(db + " not found: --out must be a folder written by cruxset score or search");
        }
        Path dest = to == null ? out.resolve("export") : to;
        TsvExport.export(db, dest);
        spec.commandLine().getOut().println("Wrote TSV views of " + db + " to " + dest);
        return 0;
    }
}
