package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.util.List;
import java.util.concurrent.Callable;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.eval.HeldOut;
import org.cruxset.scoring.eval.ModelInputs;
import org.cruxset.scoring.eval.SetScore;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Mixin;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Spec;

/** {@code cruxset info}: summarises a cohort, an atlas and a model, and the model's held-out accuracy. */
@Command(name = "info", mixinStandardHelpOptions = true,
        description = "Summarise a cohort and atlas, a model (which engine runs it and why) and its held-out accuracy.")
public final class InfoCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Mixin
    ModelOptions model;

    @ArgGroup(exclusive = false)
    CohortOptions cohort;

    @Override
    public Integer call() {
        PrintWriter pw = spec.commandLine().getOut();
        try (Decoder decoder = model.open()) {
            Reports.model(pw, decoder.card());
            if (cohort == null) {
                pw.println("(give --cohort to see held-out accuracy)");
                return 0;
            }
            Cohort c = cohort.read();
            Reports.cohort(pw, c);
            HeldOut held = HeldOut.of(c, decoder.card());
            ModelInputs in = ModelInputs.prepare(decoder.card(), c.atlas(), held.samples());
            float[][][] probs = decoder.bind(in.batch()).probabilities(List.of(InputMask.none(in.batch().regions())), model.threads());
            SetScore q = SetScore.of(probs[0], in);
            Reports.score(pw, "Held-out " + held.description(), q);
        }
        return 0;
    }
}
