package org.cruxset.scoring.kernel;

import java.util.Locale;

/**
 * Chooses the {@link EngineKernels} of this JVM once: the Vector API kernels when module {@code jdk.incubator.vector}
 * is present (the {@code cruxset} launcher, the tests and the benchmark pass {@code --add-modules
 * jdk.incubator.vector}), else the scalar ones. System property {@value #PROPERTY} = {@code auto} (default),
 * {@code vector} or {@code scalar} overrides the choice; {@code vector} without the module is an error.
 */
public final class Kernels {
    /** System property choosing the kernels: auto, vector or scalar. */
    public static final String PROPERTY = "cruxset.kernels";
    private static final EngineKernels CHOSEN = choose(System.getProperty(PROPERTY, "auto"));

    private Kernels() {
    }

    /** The kernels every native engine uses in this JVM. */
    public static EngineKernels get() {
        return CHOSEN;
    }

    /** The plain-Java kernels. */
    public static EngineKernels scalar() {
        return ScalarKernels.INSTANCE;
    }

    /** Whether the Vector API module is present in this JVM. */
    public static boolean vectorAvailable() {
        return ModuleLayer.boot().findModule("jdk.incubator.vector").isPresent();
    }

    /** The Vector API kernels; fails when the module is absent. */
    public static EngineKernels vector() {
        if (!vectorAvailable()) {
            throw new IllegalStateException("the Vector API kernels need module jdk.incubator.vector: run java with "
                    + "--add-modules jdk.incubator.vector (the cruxset launcher does)");
        }
        return VectorKernels.INSTANCE;
    }

    static EngineKernels choose(String setting) {
        return switch (setting.strip().toLowerCase(Locale.ROOT)) {
            case "auto", "" -> vectorAvailable() ? VectorKernels.INSTANCE : ScalarKernels.INSTANCE;
            case "vector" -> vector();
            case "scalar" -> ScalarKernels.INSTANCE;
            default -> throw new IllegalArgumentException("system property " + PROPERTY
                    + " must be auto, vector or scalar, found '" + setting + "'");
        };
    }
}
