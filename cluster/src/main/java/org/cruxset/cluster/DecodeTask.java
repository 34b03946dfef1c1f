package org.cruxset.cluster;

import java.util.ArrayList;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import org.apache.spark.SparkEnv;
import org.apache.spark.api.java.function.FlatMapFunction;
import org.apache.spark.broadcast.Broadcast;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.DecoderSource;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.LesionFill;
import org.cruxset.scoring.kernel.Kernels;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.scoring.onnx.OnnxModels;

/**
 * The executor's side of a job: decodes one task's masks, one thread per task (an executor runs as many tasks at
 * once as it has cores). Decoders and bound batches are opened once per executor JVM and kept, keyed by their
 * broadcasts, so a run pays for them once.
 */
final class DecodeTask implements FlatMapFunction<Iterator<SparkDecoder.Item>, SparkDecoder.Result> {
    // Keyed by ids the driver draws at random (not broadcast ids, which start again in every Spark context), least
    // recently used first; an evicted decoder is closed.
    private static final Map<String, Decoder> DECODERS = new LinkedHashMap<>(8, 0.75f, true) {
        @Override
        protected boolean removeEldestEntry(Map.Entry<String, Decoder> eldest) {
            if (size() > 4) {
                BOUND.keySet().removeIf(k -> k.startsWith(eldest.getKey() + "/"));
                eldest.getValue().close();
                return true;
            }
            return false;
        }
    };
    private static final Map<String, Decoder.Bound> BOUND = new LinkedHashMap<>(16, 0.75f, true) {
        @Override
        protected boolean removeEldestEntry(Map.Entry<String, Decoder.Bound> eldest) {
            return size() > 32;
        }
    };

    private final String decoderId;
    private final Broadcast<DecoderSource> source;
    private final String samplesId;
    private final Broadcast<SparkDecoder.Samples> samples;
    private final Broadcast<float[][]> values;

    DecodeTask(String decoderId, Broadcast<DecoderSource> source, String samplesId,
               Broadcast<SparkDecoder.Samples> samples, Broadcast<float[][]> values) {
        this.decoderId = decoderId;
        this.source = source;
        this.samplesId = samplesId;
        this.samples = samples;
        this.values = values;
    }

    @Override
    public Iterator<SparkDecoder.Result> call(Iterator<SparkDecoder.Item> items) {
        List<SparkDecoder.Item> work = new ArrayList<>();
        items.forEachRemaining(work::add);
        if (work.isEmpty()) {
            return List.<SparkDecoder.Result>of().iterator();
        }
        Decoder.Bound bound = bound();
        int regions = samples.value().regions();
        LesionFill fill = values == null ? LesionFill.ZERO : new Values(values.value());
        List<InputMask> masks = new ArrayList<>(work.size());
        for (SparkDecoder.Item it : work) {
            masks.add(new InputMask(RegionSet.of(regions, it.positions()), fill));
        }
        float[][][] probs = bound.probabilities(masks, 1);
        String executor = SparkEnv.get() == null ? "driver" : SparkEnv.get().executorId();
        String kernels = Kernels.get().name();
        List<SparkDecoder.Result> out = new ArrayList<>(work.size());
        for (int i = 0; i < work.size(); i++) {
            out.add(new SparkDecoder.Result(work.get(i).index(), probs[i], executor, kernels));
        }
        return out.iterator();
    }

    private Decoder.Bound bound() {
        String key = decoderId + "/" + samplesId;
        synchronized (BOUND) {
            Decoder.Bound b = BOUND.get(key);
            if (b == null) {
                Decoder d = DECODERS.get(decoderId);
                if (d == null) {
                    d = OnnxModels.open(source.value());
                    DECODERS.put(decoderId, d);
                }
                InputBatch batch = samples.value().batch();
                b = d.bind(batch);
                BOUND.put(key, b);
            }
            return b;
        }
    }

    /** A lesion fill read from values computed by the driver (sample × time-major regions). */
    private record Values(float[][] v) implements LesionFill {
        @Override
        public void fill(InputBatch batch, int sample, int region, float[] out) {
            int n = batch.regions();
            int len = batch.length(sample);
            for (int t = 0; t < len; t++) {
                out[t] = v[sample][t * n + region];
            }
        }

        @Override
        public boolean isZero() {
            return false;
        }
    }
}
