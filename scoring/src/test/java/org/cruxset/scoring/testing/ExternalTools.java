package org.cruxset.scoring.testing;

import static org.junit.jupiter.api.Assertions.fail;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;

/**
 * Finds outside tools that some tests need; when one is missing the test fails under CI ({@code CI=true}) and is
 * aborted with a stated reason elsewhere, so it is never skipped silently.
 */
public final class ExternalTools {
    /** The Debian system Python, which carries the Debian-packaged modules (numpy and friends). */
    public static final Path SYSTEM_PYTHON = Path.of("/usr/bin/python3");

    private static final Map<String, String> DEBIAN_PACKAGES = Map.of(
            "numpy", "python3-numpy",
            "scipy", "python3-scipy",
            "sklearn", "python3-sklearn",
            "pandas", "python3-pandas",
            "onnx", "python3-onnx",
            "onnxruntime", "python3-onnxruntime",
            "yaml", "python3-yaml");

    private static final long TIMEOUT_SECONDS = 120;

    private ExternalTools() {
    }

    /** Returns {@code /usr/bin/python3} after checking that it exists and imports every named module. */
    public static Path requirePython(String... modules) {
        if (!Files.isExecutable(SYSTEM_PYTHON)) {
            missing(SYSTEM_PYTHON + " was not found or is not executable", "python3");
        }
        for (String module : modules) {
            Result r = run(List.of(SYSTEM_PYTHON.toString(), "-c", "import " + module), null);
            if (r.exitCode() != 0) {
                missing(SYSTEM_PYTHON + " cannot import the module '" + module + "': " + r.stderr().strip(),
                        debianPackage(module));
            }
        }
        return SYSTEM_PYTHON;
    }

    /** Runs a Python script with {@code python} in {@code workDir}, failing the test unless it exits with 0. */
    public static String runPython(Path python, Path workDir, String script, String... args) {
        Path file = workDir.resolve("script-" + Long.toHexString(System.nanoTime()) + ".py");
        try {
            Files.writeString(file, script, StandardCharsets.UTF_8);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        List<String> command = new ArrayList<>();
        command.add(python.toString());
        command.add(file.toString());
        command.addAll(List.of(args));
        Result r = run(command, workDir);
        if (r.exitCode() != 0) {
            fail(String.join(" ", command) + " exited with " + r.exitCode() + "\nstdout:\n" + r.stdout()
                    + "\nstderr:\n" + r.stderr());
        }
        return r.stdout();
    }

    /** The Debian package that provides a Python module, e.g. {@code python3-numpy} for {@code numpy}. */
    public static String debianPackage(String module) {
        String top = module.contains(".") ? module.substring(0, module.indexOf('.')) : module;
        return DEBIAN_PACKAGES.getOrDefault(top, "python3-" + top);
    }

    /** Whether the build runs under continuous integration, i.e. the environment variable {@code CI} is "true". */
    public static boolean underCi() {
        return "true".equals(System.getenv("CI"));
    }

    private static void missing(String what, String debianPackage) {
        String message = what + "; install it with: apt-get install " + debianPackage;
        if (underCi()) {
            fail("required outside tool missing under CI (CI=true): " + message);
        }
        Assumptions.abort("outside tool missing, test not run: " + message
                + " (under CI=true this is a failure)");
    }

    /** A finished outside command: exit code and captured output. */
    public record Result(int exitCode, String stdout, String stderr) {
    }

    /**
     * Returns the first of {@code names} found as an executable on the PATH; when none is, fails under CI and aborts
     * elsewhere, naming the Debian package to install.
     */
    public static Path requireProgram(String debianPackage, String... names) {
        String path = System.getenv().getOrDefault("PATH", "");
        for (String name : names) {
            for (String dir : path.split(java.io.File.pathSeparator)) {
                Path p = Path.of(dir.isEmpty() ? "." : dir, name);
                if (Files.isExecutable(p)) {
                    return p;
                }
            }
        }
        missing(String.join(" or ", names) + " was not found on the PATH", debianPackage);
        throw new IllegalStateException("unreachable");
    }

    /** Runs an outside command (at most two minutes) and returns what it printed. */
    public static Result run(List<String> command, Path workDir) {
        ProcessBuilder pb = new ProcessBuilder(command);
        if (workDir != null) {
            pb.directory(workDir.toFile());
        }
        try {
            Process p = pb.start();
            p.getOutputStream().close();
            ByteArrayOutputStream err = new ByteArrayOutputStream();
            Thread errReader = new Thread(() -> copy(p.getErrorStream(), err), "stderr-reader");
            errReader.setDaemon(true);
            errReader.start();
            ByteArrayOutputStream out = new ByteArrayOutputStream();
            copy(p.getInputStream(), out);
            if (!p.waitFor(TIMEOUT_SECONDS, TimeUnit.SECONDS)) {
                p.destroyForcibly();
                fail(String.join(" ", command) + " did not finish within " + TIMEOUT_SECONDS + " s");
            }
            errReader.join(TimeUnit.SECONDS.toMillis(10));
            return new Result(p.exitValue(), out.toString(StandardCharsets.UTF_8),
                    err.toString(StandardCharsets.UTF_8));
        } catch (IOException e) {
            return new Result(-1, "", "cannot start " + command.get(0) + ": " + e.getMessage());
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while running " + command.get(0), e);
        }
    }

    private static void copy(InputStream in, ByteArrayOutputStream out) {
        try (in) {
            in.transferTo(out);
        } catch (IOException e) {
            // the process went away; whatever was read is kept
        }
    }
}
