package org.cruxset.scoring;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/** Suggestions of valid names for a misspelt one, for error messages. */
public final class Names {
    private Names() {
    }

    /** Up to {@code max} of {@code candidates} closest to {@code name} by case-insensitive Levenshtein distance. */
    public static List<String> nearest(List<String> candidates, String name, int max) {
        int[] distance = new int[candidates.size()];
        Integer[] order = new Integer[candidates.size()];
        String lower = name.toLowerCase(Locale.ROOT);
        for (int i = 0; i < candidates.size(); i++) {
            distance[i] = levenshtein(lower, candidates.get(i).toLowerCase(Locale.ROOT));
            order[i] = i;
        }
        Arrays.sort(order, (a, b) -> distance[a] != distance[b] ? Integer.compare(distance[a], distance[b])
                : candidates.get(a).compareTo(candidates.get(b)));
        List<String> out = new ArrayList<>();
        for (int i = 0; i < Math.min(max, order.length); i++) {
            out.add(candidates.get(order[i]));
        }
        return out;
    }

    /** The nearest names quoted and comma-separated: {@code 'a', 'b', 'c'}. */
    public static String quoted(List<String> names) {
        StringBuilder sb = new StringBuilder();
        for (int i = 0; i < names.size(); i++) {
            sb.append(i > 0 ? ", " : "").append('\'').append(names.get(i)).append('\'');
        }
        return sb.toString();
    }

    /** Edit distance between two strings. */
    public static int levenshtein(String a, String b) {
        int[] prev = new int[b.length() + 1];
        int[] cur = new int[b.length() + 1];
        for (int j = 0; j <= b.length(); j++) {
            prev[j] = j;
        }
        for (int i = 1; i <= a.length(); i++) {
            cur[0] = i;
            for (int j = 1; j <= b.length(); j++) {
                int sub = prev[j - 1] + (a.charAt(i - 1) == b.charAt(j - 1) ? 0 : 1);
                cur[j] = Math.min(sub, Math.min(prev[j] + 1, cur[j - 1] + 1));
            }
            int[] tmp = prev;
            prev = cur;
            cur = tmp;
        }
        return prev[b.length()];
    }
}
