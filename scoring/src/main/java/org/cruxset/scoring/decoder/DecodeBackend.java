package org.cruxset.scoring.decoder;

import java.util.ArrayList;
import java.util.List;
import java.util.ServiceLoader;

/**
 * Where the scorer's decoder passes run when one machine is not enough: a backend turns a local decoder into one
 * whose bound batches are decoded elsewhere (a cluster's executors), returning the same probabilities. The scorer,
 * budget, store, resume and determinism do not change: the driver still asks for batches of sets, charges them and
 * commits their outcomes. Backends are found by name through {@link ServiceLoader} ({@link Provider}), so the
 * default application carries none and refuses {@code --spark} with a message naming the build that has one.
 */
public interface DecodeBackend {
    /** The decoder to score with: decodes as {@code local} does, on the backend; {@code source} reopens it there. */
    Decoder distribute(Decoder local, DecoderSource source);

    /** One line for outputs: which backend, where, with how many executors and cores. */
    String describe();

    /** A backend implementation, registered in {@code META-INF/services}. */
    interface Provider {
        /** The backend's name, as in the option that selects it ({@code spark}). */
        String name();

        /** Connects to {@code master} (e.g. {@code local[2]} or {@code spark://host:7077}). */
        DecodeBackend open(String master);
    }

    /**
     * The backend named {@code name} at {@code master}, or an IllegalArgumentException saying which build carries it
     * ({@code missing}) when none on the class path has that name.
     */
    static DecodeBackend open(String name, String master, String missing) {
        List<String> found = new ArrayList<>();
        for (Provider p : ServiceLoader.load(Provider.class)) {
            if (p.name().equals(name)) {
                return p.open(master);
            }
            found.add(p.name());
        }
        throw new IllegalArgumentException(missing + (found.isEmpty() ? "" : " (backends here: "
                + String.join(", ", found) + ")"));
    }
}
