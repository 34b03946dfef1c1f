package org.cruxset.search.cli;

import java.io.PrintWriter;

/** A one-line progress bar with elapsed time and an estimate of the time left (redrawn in place on a terminal). */
final class ProgressBar {
    private final PrintWriter out;
    private final String label;
    private final long start = System.nanoTime();
    private final boolean terminal = System.console() != null;

    ProgressBar(PrintWriter out, String label) {
        this.out = out;
        this.label = label;
    }

    void update(int done, int total, String detail) {
        double elapsed = (System.nanoTime() - start) / 1e9;
        double eta = done == 0 ? Double.NaN : elapsed / done * (total - done);
        int width = 24;
        int filled = (int) Math.round(width * (double) done / total);
        String bar = "#".repeat(filled) + "-".repeat(width - filled);
        String line = String.format("%s [%s] %d/%d  %s  %s elapsed, at most %s left", label, bar, done, total, detail,
                seconds(elapsed), seconds(eta));
        if (terminal) {
            out.print("\r" + line + "\u001b[K");
        } else {
            out.println(line);
        }
        out.flush();
    }

    void done() {
        if (terminal) {
            out.println();
        }
        out.flush();
    }

    private static String seconds(double s) {
        if (Double.isNaN(s)) {
            return "?";
        }
        long v = Math.round(s);
        return v >= 60 ? (v / 60) + "m" + String.format("%02d", v % 60) + "s" : v + "s";
    }
}
