package org.cruxset.scoring.internal;

import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.IntConsumer;

/** Runs an indexed loop on a bounded number of threads; indices are handed out in chunks, order of work unspecified. */
public final class Parallel {
    private Parallel() {
    }

    /** The default thread count: all available cores. */
    public static int defaultThreads() {
        return Runtime.getRuntime().availableProcessors();
    }

    /** Calls {@code body} once for every index in [0, n) using at most {@code threads} threads. */
    public static void forRange(int n, int threads, IntConsumer body) {
        if (n <= 0) {
            return;
        }
        int workers = Math.max(1, Math.min(threads, n));
        if (workers == 1) {
            for (int i = 0; i < n; i++) {
                body.accept(i);
            }
            return;
        }
        AtomicInteger next = new AtomicInteger();
        ExecutorService pool = Executors.newFixedThreadPool(workers, r -> {
            Thread t = new Thread(r, "cruxset-worker");
            t.setDaemon(true);
            return t;
        });
        try {
            List<Future<?>> futures = new ArrayList<>();
            for (int w = 0; w < workers; w++) {
                futures.add(pool.submit(() -> {
                    for (int i = next.getAndIncrement(); i < n; i = next.getAndIncrement()) {
                        body.accept(i);
                    }
                }));
            }
            for (Future<?> f : futures) {
                f.get();
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted", e);
        } catch (ExecutionException e) {
            Throwable c = e.getCause();
            if (c instanceof RuntimeException re) {
                throw re;
            }
            if (c instanceof Error err) {
                throw err;
            }
            throw new IllegalStateException(c);
        } finally {
            pool.shutdownNow();
        }
    }
}
