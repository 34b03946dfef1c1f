package org.cruxset.scoring.simulate;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import org.cruxset.scoring.eval.SetScore;

/**
 * {@code truth.json} beside a simulated cohort: the designed structure written by the simulator, and the trained
 * decoder's own truth added by training. Unknown fields are kept when the file is rewritten.
 */
public final class TruthFile {
    /** The file name used beside a cohort. */
    public static final String NAME = "truth.json";
    private static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);

    private TruthFile() {
    }

    /** Writes the designed structure (replacing any earlier file). */
    public static void writeDesign(Path file, SimulationConfig config, PlantedDesign d) {
        ObjectNode root = JSON.createObjectNode();
        root.put("about", "Ground truth planted by the Cruxset simulator. 'designed' is what the generator built; "
                + "'decoder' (added by training) is what a trained decoder actually relies on, found by lesioning "
                + "every subset of the planted pool. Compare against 'decoder'.");
        root.put("cohort", config.name());
        root.put("seed", config.seed());
        ObjectNode des = root.putObject("designed");
        ObjectNode red = des.putObject("redundant_group");
        red.put("encodes", "a copy of the class time course in every member: any one member suffices to decode");
        red.put("snr", d.redundantSnr());
        strings(red.putArray("regions"), d.redundant());
        ObjectNode pair = des.putObject("synergistic_pair");
        pair.put("encodes", "a second class time course in the difference of the two regions under a shared masking "
                + "series: readable only from both jointly");
        pair.put("snr", d.pairSnr());
        strings(pair.putArray("regions"), d.pair());
        ObjectNode dec = des.putObject("decoys");
        dec.put("encodes", "high-variance smoothed noise with no class information");
        dec.put("variance_ratio", d.decoyVarianceRatio());
        strings(dec.putArray("regions"), d.decoys());
        ArrayNode sets = des.putArray("minimal_critical_sets");
        for (List<String> s : d.designedMinimalSets()) {
            strings(sets.addArray(), s);
        }
        strings(root.putArray("pool"), d.pool());
        write(file, root);
    }

    /** Adds (or replaces) the decoder's own truth. */
    public static void writeDecoderTruth(Path file, String modelHash, DecoderTruth t) {
        ObjectNode root = (ObjectNode) read(file);
        ObjectNode dec = root.putObject("decoder");
        dec.put("model_sha256", modelHash);
        dec.put("lesion", "zero");
        dec.put("criterion", "accuracy not significantly above chance (one-sided exact binomial, alpha " + t.alpha() + ")");
        dec.put("test_samples", t.intact().n());
        dec.put("chance", t.intact().chance());
        dec.put("intact_accuracy", t.intact().accuracy());
        dec.put("scored_sets", t.sets().size());
        ArrayNode min = dec.putArray("minimum_critical_sets");
        for (List<String> s : t.minimumCriticalSets()) {
            strings(min.addArray(), s);
        }
        ArrayNode inc = dec.putArray("inclusion_minimal_critical_sets");
        for (List<String> s : t.inclusionMinimalCriticalSets()) {
            strings(inc.addArray(), s);
        }
        ArrayNode all = dec.putArray("sets");
        for (DecoderTruth.Entry e : t.sets()) {
            ObjectNode o = all.addObject();
            strings(o.putArray("regions"), e.regions());
            SetScore q = e.score();
            o.put("accuracy", q.accuracy());
            o.put("correct", q.correct());
            o.put("p_value", q.pValue());
            o.put("critical", e.critical());
        }
        write(file, root);
    }

    /** The parsed file. */
    public static JsonNode read(Path file) {
        try {
            return JSON.readTree(file.toFile());
        } catch (IOException e) {
            throw new UncheckedIOException(file + ": cannot read truth file: " + e.getMessage(), e);
        }
    }

    /** The planted pool listed in the file. */
    public static List<String> pool(Path file) {
        return strings(read(file).path("pool"), file, "pool");
    }

    /** The decoder's own minimum-size critical sets, or an error when training has not added them yet. */
    public static List<List<String>> decoderMinimumSets(Path file) {
        JsonNode n = read(file).path("decoder").path("minimum_critical_sets");
        if (!n.isArray()) {
            throw new IllegalArgumentException(file + ": no 'decoder.minimum_critical_sets': run 'cruxset train' first");
        }
        List<List<String>> out = new ArrayList<>();
        for (JsonNode s : n) {
            out.add(strings(s, file, "decoder.minimum_critical_sets"));
        }
        return out;
    }

    /** Designed decoys. */
    public static List<String> decoys(Path file) {
        return strings(read(file).path("designed").path("decoys").path("regions"), file, "designed.decoys.regions");
    }

    private static List<String> strings(JsonNode n, Path file, String field) {
        if (!n.isArray()) {
            throw new IllegalArgumentException(file + ": field '" + field + "' must be a list of region names");
        }
        List<String> out = new ArrayList<>();
        for (JsonNode x : n) {
            out.add(x.asText());
        }
        return out;
    }

    private static void strings(ArrayNode a, List<String> values) {
        for (String v : values) {
            a.add(v);
        }
    }

    private static void write(Path file, JsonNode root) {
        try {
            Files.createDirectories(file.toAbsolutePath().getParent());
            JSON.writeValue(file.toFile(), root);
        } catch (IOException e) {
            throw new UncheckedIOException(file + ": cannot write: " + e.getMessage(), e);
        }
    }
}
