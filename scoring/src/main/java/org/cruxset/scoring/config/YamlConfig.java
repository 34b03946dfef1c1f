package org.cruxset.scoring.config;

import com.fasterxml.jackson.core.JsonLocation;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.exc.ValueInstantiationException;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;

/** Reads YAML settings files into records; errors name the file, the line and column, and the field. */
public final class YamlConfig {
    private static final ObjectMapper YAML = new ObjectMapper(new YAMLFactory())
            .enable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
            .enable(DeserializationFeature.FAIL_ON_NULL_FOR_PRIMITIVES)
            .enable(DeserializationFeature.FAIL_ON_MISSING_CREATOR_PROPERTIES);

    private YamlConfig() {
    }

    /** Bad settings: the message names the file, line, column and field. */
    public static final class ConfigException extends RuntimeException {
        private static final long serialVersionUID = 1L;

        public ConfigException(String message, Throwable cause) {
            super(message, cause);
        }
    }

    /**
     * Reads {@code file} as a {@code type} whose fields default to those of {@code defaults}: the file need only name
     * what it changes (nested objects are merged field by field); unknown fields are still errors naming the field.
     */
    public static <T> T readOverDefaults(Path file, T defaults, Class<T> type) {
        if (!Files.isRegularFile(file)) {
            throw new ConfigException(file + ": no such settings file", null);
        }
        com.fasterxml.jackson.databind.JsonNode given;
        try {
            given = YAML.readTree(file.toFile());
        } catch (JsonProcessingException e) {
            throw notYaml(file, e);
        } catch (IOException e) {
            throw new UncheckedIOException(file + ": cannot read: " + e.getMessage(), e);
        }
        com.fasterxml.jackson.databind.JsonNode merged = YAML.valueToTree(defaults);
        if (given != null && !given.isMissingNode() && !given.isNull()) {
            if (!given.isObject()) {
                throw new ConfigException(file + ": expected a mapping of settings at the top level", null);
            }
            merge((com.fasterxml.jackson.databind.node.ObjectNode) merged, given);
        }
        try {
            return YAML.treeToValue(merged, type);
        } catch (JsonMappingException e) {
            String path = fieldPath(e);
            Throwable root = e instanceof ValueInstantiationException && e.getCause() != null ? e.getCause() : e;
            String msg = root == e ? e.getOriginalMessage() : root.getMessage();
            throw new ConfigException(file + (path.isEmpty() ? "" : ": field '" + path + "'") + ": " + msg, e);
        } catch (JsonProcessingException e) {
            throw new ConfigException(file + ": " + e.getOriginalMessage(), e);
        }
    }

    private static void merge(com.fasterxml.jackson.databind.node.ObjectNode into,
                              com.fasterxml.jackson.databind.JsonNode from) {
        from.fields().forEachRemaining(e -> {
            com.fasterxml.jackson.databind.JsonNode there = into.get(e.getKey());
            if (there != null && there.isObject() && e.getValue().isObject()) {
                merge((com.fasterxml.jackson.databind.node.ObjectNode) there, e.getValue());
            } else {
                into.set(e.getKey(), e.getValue());
            }
        });
    }

    private static ConfigException notYaml(Path file, JsonProcessingException e) {
        JsonLocation loc = e.getLocation();
        String where = loc == null ? "" : ":" + loc.getLineNr() + ":" + loc.getColumnNr();
        return new ConfigException(file + where + ": not valid YAML: " + e.getOriginalMessage(), e);
    }

    /** Reads {@code file} as a {@code type}. */
    public static <T> T read(Path file, Class<T> type) {
        if (!Files.isRegularFile(file)) {
            throw new ConfigException(file + ": no such settings file", null);
        }
        try {
            return YAML.readValue(file.toFile(), type);
        } catch (JsonMappingException e) {
            StringBuilder sb = new StringBuilder().append(file);
            JsonLocation loc = e.getLocation();
            if (loc != null && loc.getLineNr() > 0) {
                sb.append(':').append(loc.getLineNr()).append(':').append(loc.getColumnNr());
            }
            String path = fieldPath(e);
            if (!path.isEmpty()) {
                sb.append(": field '").append(path).append("'");
            }
            Throwable root = e instanceof ValueInstantiationException && e.getCause() != null ? e.getCause() : e;
            String msg = root == e ? e.getOriginalMessage() : root.getMessage();
            sb.append(": ").append(msg);
            throw new ConfigException(sb.toString(), e);
        } catch (JsonProcessingException e) {
            throw notYaml(file, e);
        } catch (IOException e) {
            throw new UncheckedIOException(file + ": cannot read: " + e.getMessage(), e);
        }
    }

    private static String fieldPath(JsonMappingException e) {
        StringBuilder sb = new StringBuilder();
        for (JsonMappingException.Reference r : e.getPath()) {
            if (r.getFieldName() != null) {
                if (sb.length() > 0) {
                    sb.append('.');
                }
                sb.append(r.getFieldName());
            } else if (r.getIndex() >= 0) {
                sb.append('[').append(r.getIndex()).append(']');
            }
        }
        return sb.toString();
    }
}
