package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.util.concurrent.Callable;
import org.cruxset.scoring.Provenance;
import picocli.CommandLine;
import picocli.CommandLine.Command;

/** The {@code cruxset} command line: one subcommand per task; the commands hold no analysis logic of their own. */
@Command(name = "cruxset", mixinStandardHelpOptions = true, versionProvider = CruxsetCommand.Version.class,
        description = {
            "Finds the smallest sets of brain regions whose virtual lesion collapses a trained decoder's accuracy to chance.",
            "",
            "A virtual lesion of a decoder describes the decoder, not causal brain function. Results are not for clinical decisions."
        },
        subcommands = {DemoCommand.class, SimulateCommand.class, TrainCommand.class, InfoCommand.class, ScoreCommand.class,
            ScanCommand.class, CurveCommand.class, SaliencyCommand.class, ShapleyCommand.class,
            SearchCommand.class, CompareCommand.class, AuditCommand.class,
            ReportCommand.class, ExportCommand.class, BenchCommand.class,
            CommandLine.HelpCommand.class})
public final class CruxsetCommand implements Callable<Integer> {
    /** Exit code for bad input (files, options). */
    public static final int EXIT_BAD_INPUT = 2;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public Integer call() {
        spec.commandLine().usage(spec.commandLine().getOut());
        return 0;
    }

    /** The configured command line, with bad-input exceptions mapped to clear one-line messages. */
    public static CommandLine commandLine() {
        CommandLine cl = new CommandLine(new CruxsetCommand());
        cl.setExecutionExceptionHandler((ex, cmd, parseResult) -> {
            PrintWriter err = cmd.getErr();
            if (isBadInput(ex)) {
                err.println("cruxset " + cmd.getCommandName() + ": " + ex.getMessage());
                return EXIT_BAD_INPUT;
            }
            err.println("cruxset " + cmd.getCommandName() + ": internal error: " + ex);
            ex.printStackTrace(err);
            return 1;
        });
        return cl;
    }

    /** One in-process run of the command line: its exit code and what it printed on standard output and error. */
    public record Captured(int exit, String out, String err) {
        /** This run, or an AssertionError with both outputs when it did not exit 0 (for tests). */
        public Captured requireSuccess() {
            if (exit != 0) {
                throw new AssertionError("cruxset exited " + exit + "\nstdout:\n" + out + "\nstderr:\n" + err);
            }
            return this;
        }
    }

    /** Runs {@code cruxset args} in this JVM with its outputs captured (tests, and commands that call others). */
    public static Captured capture(String... args) {
        CommandLine cl = commandLine();
        java.io.StringWriter out = new java.io.StringWriter();
        java.io.StringWriter err = new java.io.StringWriter();
        cl.setOut(new PrintWriter(out, true));
        cl.setErr(new PrintWriter(err, true));
        int code = cl.execute(args);
        return new Captured(code, out.toString(), err.toString());
    }

    private static boolean isBadInput(Exception ex) {
        return ex instanceof IllegalArgumentException
                || ex instanceof org.cruxset.scoring.cohort.CohortFormatException
                || ex instanceof org.cruxset.scoring.config.YamlConfig.ConfigException
                || ex instanceof java.io.UncheckedIOException
                || ex instanceof org.cruxset.scoring.store.ResultsStore.StoreException
                || ex instanceof CommandLine.ParameterException;
    }

    public static void main(String[] args) {
        // OptaPlanner logs through SLF4J, which warns on stderr that no logging backend is bound; Cruxset prints its
        // own progress and results, so only SLF4J's errors are shown.
        if (System.getProperty("slf4j.internal.verbosity") == null) {
            System.setProperty("slf4j.internal.verbosity", "ERROR");
        }
        System.exit(commandLine().execute(args));
    }

    /** Version and platform. */
    static final class Version implements CommandLine.IVersionProvider {
        @Override
        public String[] getVersion() {
            Provenance p = Provenance.current();
            return new String[] {"cruxset " + p.cruxsetVersion(), p.jvm() + ", " + p.os() + ", " + p.arch()};
        }
    }
}
