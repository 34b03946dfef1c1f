package org.cruxset.scoring.lesion;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.cruxset.scoring.Names;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Region;

/**
 * Reads a lesion written by a person: comma-separated tokens, each a region name, {@code network:NAME} (all regions
 * of a network) or an atlas {@code index}. Names are matched first, so a region named like a number stays a name.
 * The result is a set of atlas positions.
 */
public final class LesionSpec {
    /** Prefix that marks a network token. */
    public static final String NETWORK_PREFIX = "network:";

    private LesionSpec() {
    }

    /** Parses {@code text} against {@code atlas}; unknown tokens are an error that lists the nearest valid names. */
    public static RegionSet parse(String text, Atlas atlas) {
        RegionSet set = RegionSet.empty(atlas.size());
        String[] tokens = text.split(",", -1);
        for (String raw : tokens) {
            String token = raw.trim();
            if (token.isEmpty()) {
                throw new IllegalArgumentException("lesion '" + text + "' has an empty entry: write region names, "
                        + NETWORK_PREFIX + "NAME or atlas indices separated by commas");
            }
            var named = atlas.position(token);
            if (named.isPresent()) {
                set = set.with(named.get());
                continue;
            }
            if (token.startsWith(NETWORK_PREFIX)) {
                String net = token.substring(NETWORK_PREFIX.length()).trim();
                List<Integer> members = atlas.networks().get(net);
                if (members == null) {
                    List<String> nets = new ArrayList<>(atlas.networks().keySet());
                    throw new IllegalArgumentException("unknown network '" + net + "' in lesion '" + text
                            + "'; nearest networks: " + Names.quoted(Names.nearest(nets, net, 3)));
                }
                for (int p : members) {
                    set = set.with(p);
                }
                continue;
            }
            Integer index = parseIndex(token);
            if (index != null) {
                int p = positionOfIndex(atlas, index);
                if (p < 0) {
                    throw new IllegalArgumentException("no region has atlas index " + index + " (lesion '" + text
                            + "'); indices run from " + atlas.region(0).index() + " to " + atlas.region(atlas.size() - 1).index());
                }
                set = set.with(p);
                continue;
            }
            List<String> candidates = new ArrayList<>(atlas.names());
            for (Map.Entry<String, List<Integer>> e : atlas.networks().entrySet()) {
                candidates.add(NETWORK_PREFIX + e.getKey());
            }
            throw new IllegalArgumentException("unknown region '" + token + "' in lesion '" + text
                    + "'; nearest valid names: " + Names.quoted(Names.nearest(candidates, token, 3)));
        }
        return set;
    }

    /** Region names of an atlas-position set, in atlas order, comma-separated. */
    public static String names(RegionSet set, Atlas atlas) {
        StringBuilder sb = new StringBuilder();
        for (int p : set.positions()) {
            sb.append(sb.length() == 0 ? "" : ",").append(atlas.region(p).name());
        }
        return sb.toString();
    }

    private static Integer parseIndex(String token) {
        try {
            return Integer.valueOf(token);
        } catch (NumberFormatException e) {
            return null;
        }
    }

    private static int positionOfIndex(Atlas atlas, int index) {
        List<Region> regions = atlas.regions();
        for (int p = 0; p < regions.size(); p++) {
            if (regions.get(p).index() == index) {
                return p;
            }
        }
        return -1;
    }
}
