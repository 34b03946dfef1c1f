package org.cruxset.cluster;

import java.io.Serializable;
import java.util.ArrayList;
import java.util.IdentityHashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.broadcast.Broadcast;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.DecoderSource;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.decoder.ModelCard;

/**
 * A local decoder's twin whose passes run on Spark's executors. Binding a batch broadcasts its samples once; each
 * call of {@link Bound#probabilities} is one Spark job of {@link SparkBackend#slices} tasks, each decoding a
 * contiguous share of the masks with the same engine, kernels and lesion fill values as this machine would, and the
 * probabilities come back in the order asked. A fill other than zero is evaluated here once per bound batch and
 * broadcast as values, so executors need neither the reference statistics nor the fill's seed.
 */
final class SparkDecoder implements Decoder {
    private final SparkBackend backend;
    private final Broadcast<DecoderSource> source;
    private final ModelCard card;
    /** Names this decoder in executors' caches (unique across Spark contexts, unlike broadcast ids). */
    private final String id = java.util.UUID.randomUUID().toString();
    private final List<SparkBound> bounds = new ArrayList<>();

    SparkDecoder(SparkBackend backend, Decoder local, Broadcast<DecoderSource> source) {
        this.backend = backend;
        this.source = source;
        ModelCard c = local.card();
        this.card = c.withEngine(c.engine(), "passes decoded by " + backend.describe() + ", engine " + c.engine()
                + " on every executor (" + c.engineReason() + ")");
    }

    @Override
    public ModelCard card() {
        return card;
    }

    /** Four sets per task slot of the cluster (or per driver thread, if more), at most 4,096: one job per call. */
    @Override
    public int setsPerCall(int threads) {
        return Math.min(4096, 4 * Math.max(threads, backend.context().defaultParallelism()));
    }

    @Override
    public Bound bind(InputBatch batch) {
        SparkBound b = new SparkBound(batch);
        synchronized (bounds) {
            bounds.add(b);
        }
        return b;
    }

    /** A batch's samples as broadcast: regions, each sample's time-major values and length. */
    record Samples(int regions, float[][] series, int[] lengths) implements Serializable {
        InputBatch batch() {
            return InputBatch.of(regions, series, lengths);
        }
    }

    /** One mask to decode: its position in the call and its lesioned model inputs. */
    record Item(int index, int[] positions) implements Serializable {
    }

    /** One decoded mask: its position, probabilities [sample][class], the executor and the kernels it used. */
    record Result(int index, float[][] probabilities, String executor, String kernels) implements Serializable {
    }

    private final class SparkBound implements Bound {
        private final InputBatch batch;
        private final String samplesId = java.util.UUID.randomUUID().toString();
        private final Broadcast<Samples> samples;
        private final Map<LesionFill, Broadcast<float[][]>> fills = new IdentityHashMap<>();

        SparkBound(InputBatch batch) {
            this.batch = batch;
            float[][] series = new float[batch.size()][];
            int[] lengths = new int[batch.size()];
            for (int s = 0; s < series.length; s++) {
                series[s] = batch.series(s);
                lengths[s] = batch.length(s);
            }
            this.samples = backend.context().broadcast(new Samples(batch.regions(), series, lengths));
        }

        @Override
        public float[][][] probabilities(List<InputMask> masks, int threads) {
            float[][][] out = new float[masks.size()][][];
            Map<LesionFill, List<Item>> byFill = new IdentityHashMap<>();
            for (int i = 0; i < masks.size(); i++) {
                byFill.computeIfAbsent(masks.get(i).fill(), f -> new ArrayList<>()).add(new Item(i,
                        masks.get(i).regions().positions()));
            }
            for (Map.Entry<LesionFill, List<Item>> e : byFill.entrySet()) {
                Broadcast<float[][]> values = e.getKey().isZero() ? null : values(e.getKey());
                List<Item> items = e.getValue();
                int slices = backend.slices(items.size());
                List<Result> results = backend.context().parallelize(items, slices)
                        .mapPartitions(new DecodeTask(id, source, samplesId, samples, values)).collect();
                for (Result r : results) {
                    out[r.index()] = r.probabilities();
                    backend.saw(r.executor(), r.kernels());
                }
                backend.counted(slices, items.size());
            }
            return out;
        }

        /** The fill's values for every sample and region of the batch, broadcast once per fill. */
        private Broadcast<float[][]> values(LesionFill fill) {
            Broadcast<float[][]> b = fills.get(fill);
            if (b == null) {
                if (fills.size() >= 4) {
                    fills.values().forEach(Broadcast::unpersist);
                    fills.clear();
                }
                int n = batch.regions();
                float[][] v = new float[batch.size()][];
                for (int s = 0; s < v.length; s++) {
                    int len = batch.length(s);
                    v[s] = new float[len * n];
                    float[] buf = new float[len];
                    for (int r = 0; r < n; r++) {
                        fill.fill(batch, s, r, buf);
                        for (int t = 0; t < len; t++) {
                            v[s][t * n + r] = buf[t];
                        }
                    }
                }
                b = backend.context().broadcast(v);
                fills.put(fill, b);
            }
            return b;
        }
    }

    /** Drops this decoder's broadcasts from the executors (the model, and every bound batch and fill). */
    @Override
    public void close() {
        synchronized (bounds) {
            for (SparkBound b : bounds) {
                b.samples.unpersist();
                b.fills.values().forEach(Broadcast::unpersist);
            }
            bounds.clear();
        }
        source.unpersist();
    }
}
