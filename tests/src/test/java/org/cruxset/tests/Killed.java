package org.cruxset.tests;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.TimeUnit;

/** Runs a cruxset command in a child JVM and kills it with SIGKILL once its store holds enough rows. */
final class Killed {
    private Killed() {
    }

    /** The first column of the first row of {@code sql} on the store {@code db} (0 when there is none). */
    static long count(Path db, String sql) throws SQLException {
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + db);
             Statement st = c.createStatement();
             ResultSet rs = st.executeQuery(sql)) {
            return rs.next() ? rs.getLong(1) : 0;
        }
    }

    /**
     * Starts {@code cruxset args} in a child JVM (log in {@code dir/child.log}), waits until {@code countSql} on the
     * store {@code db} reaches {@code atLeast}, kills the child with SIGKILL and returns the count it saw.
     */
    static long runAndKill(Path dir, List<String> args, Path db, String countSql, long atLeast) throws Exception {
        List<String> cmd = new ArrayList<>(List.of(Path.of(System.getProperty("java.home"), "bin", "java").toString(),
                "-cp", System.getProperty("java.class.path"), "org.cruxset.search.cli.CruxsetCommand"));
        cmd.addAll(args);
        Path log = dir.resolve("child.log");
        Process child = new ProcessBuilder(cmd).redirectErrorStream(true).redirectOutput(log.toFile()).start();
        long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(120);
        long seen = 0;
        while (System.nanoTime() < deadline && child.isAlive()) {
            if (Files.exists(db)) {
                try {
                    seen = count(db, countSql);
                } catch (SQLException busyOrNotYetCreated) {
                    seen = 0;
                }
                if (seen >= atLeast) {
                    break;
                }
            }
            Thread.sleep(10);
        }
        assertTrue(child.isAlive(), "the child must still be running when killed (saw " + seen + " rows); log: "
                + Files.readString(log));
        child.destroyForcibly();
        assertTrue(child.waitFor(30, TimeUnit.SECONDS));
        assertEquals(137, child.exitValue(), "killed by SIGKILL");
        return seen;
    }
}
