package org.cruxset.scoring;

import java.util.LinkedHashMap;
import java.util.Map;

/** Where a result was computed: Cruxset version, JVM, operating system and architecture (results can differ across platforms). */
public record Provenance(String cruxsetVersion, String jvm, String os, String arch) {

    /** The running platform. */
    public static Provenance current() {
        String v = Provenance.class.getPackage().getImplementationVersion();
        return new Provenance(v == null ? "dev" : v,
                System.getProperty("java.vm.name") + " " + System.getProperty("java.version"),
                System.getProperty("os.name") + " " + System.getProperty("os.version"),
                System.getProperty("os.arch"));
    }

    /** As metadata entries under {@code prefix}. */
    public Map<String, String> asMetadata(String prefix) {
        Map<String, String> m = new LinkedHashMap<>();
        m.put(prefix + "version", cruxsetVersion);
        m.put(prefix + "jvm", jvm);
        m.put(prefix + "os", os);
        m.put(prefix + "arch", arch);
        return m;
    }
}
