package org.cruxset.scoring.cohort;

import java.util.ArrayList;
import java.util.Collections;
import java.util.Comparator;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Optional;

/**
 * The regions a cohort is parcellated into, in atlas {@code index} order, grouped into networks.
 * Position {@code p} (0-based, by ascending index) is the model input feature {@code p}.
 */
public final class Atlas {
    private final List<Region> regions;
    private final Map<String, Integer> positionByName;
    private final Map<String, List<Integer>> networks;

    private Atlas(List<Region> sorted) {
        this.regions = List.copyOf(sorted);
        Map<String, Integer> byName = new HashMap<>();
        Map<String, List<Integer>> nets = new LinkedHashMap<>();
        for (int p = 0; p < regions.size(); p++) {
            Region r = regions.get(p);
            if (byName.put(r.name(), p) != null) {
                throw new IllegalArgumentException("duplicate region name '" + r.name() + "'");
            }
            nets.computeIfAbsent(r.network(), k -> new ArrayList<>()).add(p);
        }
        Map<String, List<Integer>> frozen = new LinkedHashMap<>();
        nets.forEach((k, v) -> frozen.put(k, List.copyOf(v)));
        this.positionByName = Map.copyOf(byName);
        this.networks = Collections.unmodifiableMap(frozen);
    }

    /** Builds an atlas from regions in any order; indices and names must be unique. */
    public static Atlas of(List<Region> regions) {
        if (regions.isEmpty()) {
            throw new IllegalArgumentException("an atlas needs at least one region");
        }
        List<Region> sorted = new ArrayList<>(regions);
        sorted.sort(Comparator.comparingInt(Region::index));
        for (int i = 1; i < sorted.size(); i++) {
            if (sorted.get(i).index() == sorted.get(i - 1).index()) {
                throw new IllegalArgumentException("duplicate region index " + sorted.get(i).index());
            }
        }
        return new Atlas(sorted);
    }

    /** Number of regions N. */
    public int size() {
        return regions.size();
    }

    /** Regions in input order. */
    public List<Region> regions() {
        return regions;
    }

    /** Region at input position {@code p}. */
    public Region region(int p) {
        return regions.get(Objects.checkIndex(p, regions.size()));
    }

    /** Region names in input order. */
    public List<String> names() {
        List<String> out = new ArrayList<>(regions.size());
        for (Region r : regions) {
            out.add(r.name());
        }
        return out;
    }

    /** Input position of a region name. */
    public Optional<Integer> position(String name) {
        return Optional.ofNullable(positionByName.get(name));
    }

    /** Networks in order of first appearance, each with the input positions of its regions. */
    public Map<String, List<Integer>> networks() {
        return networks;
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof Atlas a && a.regions.equals(regions);
    }

    @Override
    public int hashCode() {
        return regions.hashCode();
    }

    @Override
    public String toString() {
        return "Atlas[" + regions.size() + " regions, " + networks.size() + " networks]";
    }
}
