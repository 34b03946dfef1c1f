package org.cruxset.search.cli;

import java.io.PrintWriter;
import java.util.List;

/** Prints rows as a left-aligned text table; null cells drop their column. */
final class Table {
    private Table() {
    }

    static void print(PrintWriter pw, List<String[]> rows) {
        int cols = rows.get(0).length;
        int[] width = new int[cols];
        for (String[] r : rows) {
            for (int c = 0; c < cols; c++) {
                if (r[c] != null) {
                    width[c] = Math.max(width[c], r[c].length());
                }
            }
        }
        for (String[] r : rows) {
            StringBuilder sb = new StringBuilder();
            for (int c = 0; c < cols; c++) {
                if (rows.get(0)[c] == null) {
                    continue;
                }
                String v = r[c] == null ? "" : r[c];
                sb.append(v).append(" ".repeat(width[c] - v.length() + 2));
            }
            pw.println(sb.toString().stripTrailing());
        }
    }
}
