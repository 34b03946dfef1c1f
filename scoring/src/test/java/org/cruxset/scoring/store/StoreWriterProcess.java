package org.cruxset.scoring.store;

import java.nio.file.Path;
import java.util.List;

/**
 * The child process of the kill test: records {@code count} evaluations of the fixture, one transaction each, into
 * the run {@code runKey}, skipping what the run already paid for, then finishes the run.
 * Arguments: database file, run key, count, milliseconds to sleep after each transaction.
 */
public final class StoreWriterProcess {
    private StoreWriterProcess() {
    }

    public static void main(String[] args) throws InterruptedException {
        Path db = Path.of(args[0]);
        String runKey = args[1];
        int count = Integer.parseInt(args[2]);
        long sleepMillis = Long.parseLong(args[3]);
        try (ResultsStore store = ResultsStore.open(db)) {
            StoreFixtures.registerDataset(store);
            ResultsStore.Run run = store.beginOrResume(StoreFixtures.runInfo(runKey));
            System.out.println("run " + run.id() + " resumed " + run.resumed() + " count " + run.count());
            for (int i = 0; i < count; i++) {
                if (run.paid(StoreFixtures.key(i))) {
                    continue;
                }
                store.record(run, List.of(StoreFixtures.fresh(i)), List.of(), 1.0);
                if (sleepMillis > 0) {
                    Thread.sleep(sleepMillis);
                }
            }
            store.finish(run);
            System.out.println("finished count " + run.count() + " spent " + run.spent());
        }
    }
}
