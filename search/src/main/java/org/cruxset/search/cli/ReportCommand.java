package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.CohortFiles;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.search.report.NiftiLabels;
import org.cruxset.search.report.Report;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code cruxset report}: the report of an output folder, rebuilt from its results store without a decoder call. */
@Command(name = "report", mixinStandardHelpOptions = true,
        description = {"Write the report of an output folder: one self-contained HTML page (figures inline, opens "
                + "without a network), every figure as SVG and PNG, region values as TSV and, given the atlas as a "
                + "NIfTI-1 label image, one map per measure. It reads the folder's results store and the tables "
                + "scan, saliency, shapley, curve, compare and audit left there; no decoder is called, so it can be "
                + "rebuilt at any time."})
public final class ReportCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--out", defaultValue = "cruxset-out", paramLabel = "DIR", description = "Output folder holding "
            + "results.sqlite and the commands' tables. Default: ${DEFAULT-VALUE}.")
    Path out;

    @Option(names = "--to", paramLabel = "DIR", description = "Where to write the report. Default: DIR/report.")
    Path to;

    @Option(names = "--cohort", paramLabel = "DIR", description = "Cohort folder whose regions.tsv gives the atlas "
            + "(networks in the tables; labels for maps).")
    Path cohort;

    @Option(names = "--atlas", paramLabel = "TSV", description = "The atlas regions.tsv itself, instead of --cohort.")
    Path atlasFile;

    @Option(names = "--atlas-image", paramLabel = "NII", description = "The atlas as a NIfTI-1 label image (.nii or "
            + ".nii.gz; voxel value = the index column of regions.tsv, 0 = background): writes one map per measure.")
    Path atlasImage;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        Path db = out.resolve(ScoringSession.STORE_FILE);
        if (!Files.isRegularFile(db)) {
            throw new IllegalArgumentException(db + " not found: --out must be a folder written by cruxset score, "
                    + "search or compare");
        }
        if (cohort != null && atlasFile != null) {
            throw new CommandLine.ParameterException(spec.commandLine(), "give --cohort or --atlas, not both");
        }
        Path regions = atlasFile != null ? atlasFile : cohort != null ? cohort.resolve(CohortFiles.REGIONS_FILE) : null;
        if (atlasImage != null && regions == null) {
            throw new CommandLine.ParameterException(spec.commandLine(), "--atlas-image needs the atlas table too "
                    + "(--cohort DIR or --atlas regions.tsv), to match labels to regions");
        }
        Atlas atlas = regions == null ? null : CohortFiles.readAtlas(regions);
        NiftiLabels image = atlasImage == null ? null : NiftiLabels.read(atlasImage);
        Path dest = to == null ? out.resolve("report") : to;
        Report.Written w = Report.build(out, dest, atlas, image);
        pw.println("Caution: " + Report.CAUTION);
        pw.printf("Report: %s (%d figures, each also as SVG and PNG in %s)%n", w.html(), w.figures().size(),
                dest.resolve("figures"));
        if (w.regionValues() != null) {
            pw.println("Region values: " + w.regionValues());
        }
        for (Path m : w.maps()) {
            pw.println("Map: " + m);
        }
        for (String n : w.notes()) {
            pw.println("Note: " + n);
        }
        return 0;
    }
}
