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

    /** Writes the designed structure and the cohort's summary statistics (replacing any earlier file). */
    public static void writeDesign(Path file, SimulationConfig config, PlantedDesign d, CohortSummary summary) {
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
        root.set("cohort_summary", JSON.valueToTree(summary));
        write(file, root);
    }

    /**
     * Adds (or replaces) the decoder's own truth: the split of held-out subjects into parts, the intact scores, and
     * for each criterion (the first is the default) the minimum and inclusion-minimal critical sets on the search
     * part with the minimum sets' scores on the confirmation part; then every scored subset. The top-level
     * {@code minimum_critical_sets} repeats the default criterion's.
     */
    public static void writeDecoderTruth(Path file, String modelHash, DecoderTruth t) {
        ObjectNode root = (ObjectNode) read(file);
        ObjectNode dec = root.putObject("decoder");
        dec.put("model_sha256", modelHash);
        dec.put("lesion", "zero");
        dec.put("scored_on", "search part of the held-out subjects");
        dec.put("split_seed", t.parts().seed());
        dec.put("confirm_fraction", t.parts().confirmFraction());
        dec.put("search_samples", t.intact().n());
        strings(dec.putArray("search_subjects"), t.parts().searchSubjects());
        dec.put("confirmation_samples", t.confirmationIntact() == null ? 0 : t.confirmationIntact().n());
        strings(dec.putArray("confirmation_subjects"), t.parts().confirmationSubjects());
        dec.put("chance", t.intact().chance());
        dec.put("intact_accuracy", t.intact().accuracy());
        if (t.confirmationIntact() != null) {
            dec.put("confirmation_intact_accuracy", t.confirmationIntact().accuracy());
        }
        dec.put("scored_sets", t.sets().size());
        sets(dec.putArray("minimum_critical_sets"), t.minimumCriticalSets());
        ArrayNode criteria = dec.putArray("criteria");
        for (DecoderTruth.Verdicts v : t.verdicts()) {
            ObjectNode o = criteria.addObject();
            o.put("criterion", v.criterion().label());
            o.put("means", v.criterion().describe());
            sets(o.putArray("minimum_critical_sets"), v.minimumCriticalSets());
            sets(o.putArray("inclusion_minimal_critical_sets"), v.inclusionMinimalCriticalSets());
            ArrayNode conf = o.putArray("confirmation");
            for (DecoderTruth.Confirmed c : v.confirmed()) {
                ObjectNode x = conf.addObject();
                strings(x.putArray("regions"), c.regions());
                score(x, c.score());
                x.put("critical", c.critical());
            }
        }
        ArrayNode all = dec.putArray("sets");
        for (DecoderTruth.Entry e : t.sets()) {
            ObjectNode o = all.addObject();
            strings(o.putArray("regions"), e.regions());
            score(o, e.score());
            ObjectNode crit = o.putObject("critical");
            for (int c = 0; c < t.verdicts().size(); c++) {
                crit.put(t.verdicts().get(c).criterion().label(), e.critical().get(c));
            }
        }
        write(file, root);
    }

    private static void score(ObjectNode o, SetScore q) {
        o.put("accuracy", q.accuracy());
        o.put("correct", q.correct());
        o.put("n", q.n());
        o.put("wilson_low", q.wilsonLow());
        o.put("wilson_high", q.wilsonHigh());
        o.put("p_value", q.pValue());
    }

    private static void sets(ArrayNode a, List<List<String>> sets) {
        for (List<String> s : sets) {
            strings(a.addArray(), s);
        }
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

    /**
     * The decoder's own minimum-size critical sets under the default criterion, or an error when training has not
     * added them yet.
     */
    public static List<List<String>> decoderMinimumSets(Path file) {
        JsonNode n = read(file).path("decoder").path("minimum_critical_sets");
        if (!n.isArray()) {
            throw new IllegalArgumentException(file + ": no 'decoder.minimum_critical_sets': run 'cruxset train' first");
        }
        return setList(n, file, "decoder.minimum_critical_sets");
    }

    /** The decoder's own minimum-size critical sets under {@code criterion} (its label, e.g. {@code upper:0.1}). */
    public static List<List<String>> decoderMinimumSets(Path file, String criterion) {
        JsonNode criteria = read(file).path("decoder").path("criteria");
        List<String> known = new ArrayList<>();
        for (JsonNode c : criteria) {
            String label = c.path("criterion").asText();
            if (label.equals(criterion)) {
                return setList(c.path("minimum_critical_sets"), file, "decoder.criteria[" + label + "]");
            }
            known.add(label);
        }
        throw new IllegalArgumentException(file + ": no decoder truth under criterion '" + criterion + "'; it has "
                + (known.isEmpty() ? "none (run 'cruxset train' first)" : known));
    }

    private static List<List<String>> setList(JsonNode n, Path file, String field) {
        if (!n.isArray()) {
            throw new IllegalArgumentException(file + ": field '" + field + "' must be a list of region-name lists");
        }
        List<List<String>> out = new ArrayList<>();
        for (JsonNode s : n) {
            out.add(strings(s, file, field));
        }
        return out;
    }

    /** The summary statistics of the simulated cohort, or an error naming the file when it has none. */
    public static CohortSummary summary(Path file) {
        JsonNode n = read(file).path("cohort_summary");
        if (!n.isObject()) {
            throw new IllegalArgumentException(file + ": no 'cohort_summary': simulate the cohort again");
        }
        try {
            return JSON.treeToValue(n, CohortSummary.class);
        } catch (IOException e) {
            throw new IllegalArgumentException(file + ": field 'cohort_summary' is not a cohort summary: " + e.getMessage(), e);
        }
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
