package org.cruxset.scoring.simulate;

import com.fasterxml.jackson.annotation.JsonProperty;
import java.util.HashSet;
import java.util.List;
import java.util.Objects;
import org.cruxset.scoring.Checks;

/**
 * Settings of a synthetic cohort (read from YAML, see {@code configs/}). Amplitudes are in units of the standard
 * deviation of each region's own background noise.
 */
public record SimulationConfig(
        @JsonProperty(value = "name", required = true) String name,
        @JsonProperty(value = "seed", required = true) long seed,
        @JsonProperty(value = "subjects", required = true) int subjects,
        @JsonProperty(value = "repetitions", required = true) int repetitions,
        @JsonProperty(value = "classes", required = true) List<String> classes,
        @JsonProperty(value = "regions", required = true) int regions,
        @JsonProperty(value = "networks", required = true) List<String> networks,
        @JsonProperty(value = "time", required = true) TimeRange time,
        @JsonProperty(value = "samplingInterval", required = true) double samplingInterval,
        @JsonProperty(value = "noise", required = true) Noise noise,
        @JsonProperty(value = "planted", required = true) Planted planted,
        @JsonProperty(value = "split", required = true) SplitFractions split) {

    public SimulationConfig {
        Objects.requireNonNull(name, "name");
        Checks.within("subjects", subjects, 3, 100_000);
        Checks.within("repetitions", repetitions, 1, 10_000);
        Objects.requireNonNull(classes, "classes");
        if (classes.size() < 2) {
            throw new IllegalArgumentException("classes must list at least 2 labels, found " + classes.size());
        }
        if (new HashSet<>(classes).size() != classes.size()) {
            throw new IllegalArgumentException("classes must be distinct, found " + classes);
        }
        Objects.requireNonNull(networks, "networks");
        if (networks.isEmpty() || new HashSet<>(networks).size() != networks.size()) {
            throw new IllegalArgumentException("networks must list distinct names, found " + networks);
        }
        Objects.requireNonNull(time, "time");
        Objects.requireNonNull(noise, "noise");
        Objects.requireNonNull(planted, "planted");
        Objects.requireNonNull(split, "split");
        Checks.positive("samplingInterval", samplingInterval);
        int plantedCount = planted.redundant() + 2 + planted.decoys();
        if (regions < plantedCount + networks.size()) {
            throw new IllegalArgumentException("regions must be at least planted regions + networks = "
                    + (plantedCount + networks.size()) + ", found " + regions);
        }
        if (planted.redundant() + 2 + planted.decoys() > 10) {
            throw new IllegalArgumentException("the planted pool (redundant + 2 + decoys) must be at most 10 regions "
                    + "so that it can be lesioned exhaustively, found " + plantedCount);
        }
    }

    /** Inclusive range of sample lengths in time points. */
    public record TimeRange(@JsonProperty(value = "min", required = true) int min,
                            @JsonProperty(value = "max", required = true) int max) {
        public TimeRange {
            Checks.within("time.min", min, 2, 100_000);
            Checks.within("time.max", max, min, 100_000);
        }
    }

    /**
     * Background: each region loads on its network's haemodynamically smoothed latent series with a weight drawn
     * in [0.3, 0.8] of {@code networkShare}, plus AR(1) noise with coefficient {@code autocorrelation}; each subject
     * scales each region's planted signal by a log-normal gain with log-sd {@code subjectVariability}.
     */
    public record Noise(@JsonProperty(value = "autocorrelation", required = true) double autocorrelation,
                        @JsonProperty(value = "networkShare", required = true) double networkShare,
                        @JsonProperty(value = "subjectVariability", required = true) double subjectVariability) {
        public Noise {
            Checks.within("noise.autocorrelation", autocorrelation, 0.0, 0.99);
            Checks.within("noise.networkShare", networkShare, 0.0, 10.0);
            Checks.within("noise.subjectVariability", subjectVariability, 0.0, 2.0);
        }
    }

    /**
     * Planted structure: {@code redundant} regions each carrying a copy of the class signal at amplitude
     * {@code signal}; a pair whose difference carries a second class signal at amplitude {@code pair} under a
     * shared masking series of amplitude {@code masker}; {@code decoys} regions with smoothed noise of amplitude
     * {@code decoy} and no class information.
     */
    public record Planted(@JsonProperty(value = "redundant", required = true) int redundant,
                          @JsonProperty(value = "decoys", required = true) int decoys,
                          @JsonProperty(value = "signal", required = true) double signal,
                          @JsonProperty(value = "pair", required = true) double pair,
                          @JsonProperty(value = "masker", required = true) double masker,
                          @JsonProperty(value = "decoy", required = true) double decoy) {
        public Planted {
            Checks.within("planted.redundant", redundant, 2, 8);
            Checks.within("planted.decoys", decoys, 1, 8);
            Checks.positive("planted.signal", signal);
            Checks.positive("planted.pair", pair);
            Checks.within("planted.masker", masker, 0.0, 100.0);
            Checks.positive("planted.decoy", decoy);
        }
    }

    /** Fractions of subjects assigned to each split (they must sum to 1). */
    public record SplitFractions(@JsonProperty(value = "train", required = true) double train,
                                 @JsonProperty(value = "validation", required = true) double validation,
                                 @JsonProperty(value = "test", required = true) double test) {
        public SplitFractions {
            Checks.within("split.train", train, 0.0, 1.0);
            Checks.within("split.validation", validation, 0.0, 1.0);
            Checks.within("split.test", test, 0.0, 1.0);
            if (Math.abs(train + validation + test - 1.0) > 1e-9) {
                throw new IllegalArgumentException("split fractions must sum to 1, found " + (train + validation + test));
            }
        }
    }
}
