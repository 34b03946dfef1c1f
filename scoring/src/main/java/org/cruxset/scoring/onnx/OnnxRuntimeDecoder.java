package org.cruxset.scoring.onnx;

import ai.onnxruntime.NodeInfo;
import ai.onnxruntime.OnnxJavaType;
import ai.onnxruntime.OnnxTensor;
import ai.onnxruntime.OnnxValue;
import ai.onnxruntime.OrtEnvironment;
import ai.onnxruntime.OrtException;
import ai.onnxruntime.OrtLoggingLevel;
import ai.onnxruntime.OrtSession;
import ai.onnxruntime.TensorInfo;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.FloatBuffer;
import java.nio.IntBuffer;
import java.nio.LongBuffer;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.TreeMap;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.InputMask;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.internal.Parallel;
import org.cruxset.scoring.onnx.reader.ModelReader.Output;
import org.cruxset.scoring.onnx.OnnxOptions.Layout;
import org.cruxset.scoring.onnx.reader.ModelReader;

/**
 * Runs any ONNX classifier of region time series through ONNX Runtime. With a lengths input, samples share padded
 * runs; without one they are run in groups of equal length, since padding would change a recurrent model's result.
 */
public final class OnnxRuntimeDecoder implements Decoder {
    /** Most samples in one run. */
    static final int MAX_RUN_SAMPLES = 256;
    /** Most input floats in one run (32 MB). */
    static final long MAX_RUN_FLOATS = 8L << 20;

    private final ModelCard card;
    private final Layout layout;
    private final Output outputKind;
    private final OrtSession.SessionOptions options;
    private final OrtSession session;
    private final String input;
    private final String lengths;
    private final boolean lengthsInt64;
    private final String output;
    private final int regions;
    private final int classes;

    /**
     * A decoder for the serialized {@code model} described by {@code card}, whose float input is in {@code layout}
     * (not AUTO) and whose output {@code outputName} (null: the single output, else "probabilities", else "scores",
     * else the first [batch, K] one) carries {@code outputKind}; ONNX Runtime uses {@code threads} intra-op threads.
     */
    public OnnxRuntimeDecoder(byte[] model, ModelCard card, Layout layout, Output outputKind, String outputName,
                              int threads) {
        this.card = Objects.requireNonNull(card, "card");
        this.layout = Objects.requireNonNull(layout, "layout");
        this.outputKind = Objects.requireNonNull(outputKind, "outputKind");
        if (layout == Layout.AUTO) {
            throw new IllegalArgumentException("ONNX Runtime needs a definite input layout (batch-first or time-first)");
        }
        if (threads < 1) {
            throw new IllegalArgumentException("threads must be at least 1, found " + threads);
        }
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        OrtSession.SessionOptions opts = null;
        OrtSession s = null;
        try {
            opts = new OrtSession.SessionOptions();
            opts.setIntraOpNumThreads(threads);
            opts.setInterOpNumThreads(1);
            opts.setSessionLogLevel(OrtLoggingLevel.ORT_LOGGING_LEVEL_ERROR);
            s = env.createSession(model, opts);
            this.options = opts;
            this.session = s;

            String series = null;
            String lens = null;
            boolean lens64 = false;
            for (Map.Entry<String, NodeInfo> e : session.getInputInfo().entrySet()) {
                if (!(e.getValue().getInfo() instanceof TensorInfo ti)) {
                    throw new IllegalArgumentException("model input '" + e.getKey() + "' is not a tensor");
                }
                long[] shape = ti.getShape();
                if (ti.type == OnnxJavaType.FLOAT && shape.length == 3 && series == null) {
                    series = e.getKey();
                    if (shape[2] > 0 && shape[2] != card.regions()) {
                        throw new IllegalArgumentException("model input '" + series + "' takes " + shape[2]
                                + " regions, the model card has " + card.regions());
                    }
                } else if ((ti.type == OnnxJavaType.INT32 || ti.type == OnnxJavaType.INT64) && shape.length == 1
                        && lens == null) {
                    lens = e.getKey();
                    lens64 = ti.type == OnnxJavaType.INT64;
                } else {
                    throw new IllegalArgumentException("model input '" + e.getKey() + "' (" + ti.type + " "
                            + java.util.Arrays.toString(shape) + ") is neither the float [batch, time, regions] series "
                            + "nor an int32/int64 [batch] lengths vector");
                }
            }
            if (series == null) {
                throw new IllegalArgumentException("the model has no float input of rank 3 (the region time series)");
            }
            this.input = series;
            this.lengths = lens;
            this.lengthsInt64 = lens64;
            this.regions = card.regions();

            Map<String, NodeInfo> outs = session.getOutputInfo();
            this.output = outputName != null ? outputName : chooseOutput(outs);
            NodeInfo oi = outs.get(output);
            if (oi == null) {
                throw new IllegalArgumentException("the model has no output '" + output + "'; outputs are " + outs.keySet());
            }
            if (!(oi.getInfo() instanceof TensorInfo ti) || ti.type != OnnxJavaType.FLOAT) {
                throw new IllegalArgumentException("model output '" + output + "' is not a float tensor");
            }
            long[] shape = ti.getShape();
            if (shape.length != 2) {
                throw new IllegalArgumentException("model output '" + output + "' has rank " + shape.length
                        + ", expected [batch, classes]");
            }
            this.classes = shape[1] > 0 ? (int) shape[1] : probeWidth();
            if (classes != card.classes()) {
                throw new IllegalArgumentException("model output '" + output + "' gives " + classes
                        + " class scores, but " + card.classes() + " class labels were given");
            }
        } catch (OrtException e) {
            closeQuietly(s, opts);
            throw new IllegalArgumentException("ONNX Runtime cannot load the model: " + e.getMessage(), e);
        } catch (RuntimeException e) {
            closeQuietly(s, opts);
            throw e;
        }
    }

    private static String chooseOutput(Map<String, NodeInfo> outs) {
        if (outs.size() == 1) {
            return outs.keySet().iterator().next();
        }
        for (String preferred : List.of("probabilities", "scores")) {
            if (outs.containsKey(preferred)) {
                return preferred;
            }
        }
        for (Map.Entry<String, NodeInfo> e : outs.entrySet()) {
            if (e.getValue().getInfo() instanceof TensorInfo ti && ti.getShape().length == 2) {
                return e.getKey();
            }
        }
        throw new IllegalArgumentException("none of the outputs " + outs.keySet() + " is a [batch, classes] tensor");
    }

    private static void closeQuietly(OrtSession s, OrtSession.SessionOptions o) {
        try {
            if (s != null) {
                s.close();
            }
        } catch (OrtException ignored) {
            // nothing more to release
        }
        if (o != null) {
            o.close();
        }
    }

    /** The output width, found by running one zero sample of one step. */
    private int probeWidth() throws OrtException {
        float[][] out = run(new float[][] {new float[regions]}, new int[] {1}, 1);
        return out[0].length;
    }

    @Override
    public ModelCard card() {
        return card;
    }

    /** The input layout this decoder feeds. */
    public Layout layout() {
        return layout;
    }

    /** Whether the model takes a lengths input (samples are then padded into shared runs). */
    public boolean hasLengths() {
        return lengths != null;
    }

    /** The output read as class scores. */
    public String output() {
        return output;
    }

    @Override
    public Bound bind(InputBatch batch) {
        if (batch.regions() != regions) {
            throw new IllegalArgumentException("batch has " + batch.regions() + " regions, the model takes " + regions);
        }
        return (masks, threads) -> probabilities(batch, masks, threads);
    }

    /** One run: the (mask, sample) pairs it holds and the time length it is padded to. */
    private record Run(int[] masks, int[] samples, int length) {
    }

    private float[][][] probabilities(InputBatch batch, List<InputMask> masks, int threads) {
        int m = masks.size();
        int n = batch.size();
        float[][][] out = new float[m][n][];
        if (m == 0 || n == 0) {
            return out;
        }
        // Without a lengths input, runs hold samples of one length only; with one, every sample is padded to the
        // batch's longest so that a sample's result does not depend on which run it lands in.
        Map<Integer, List<Integer>> groups = new TreeMap<>();
        for (int s = 0; s < n; s++) {
            groups.computeIfAbsent(lengths != null ? batch.maxLength() : batch.length(s), k -> new ArrayList<>()).add(s);
        }
        List<Run> runs = new ArrayList<>();
        for (Map.Entry<Integer, List<Integer>> g : groups.entrySet()) {
            int len = g.getKey();
            List<Integer> samples = g.getValue();
            int cap = (int) Math.max(1, Math.min(MAX_RUN_SAMPLES, MAX_RUN_FLOATS / ((long) len * regions)));
            int total = m * samples.size();
            for (int from = 0; from < total; from += cap) {
                int size = Math.min(cap, total - from);
                int[] rm = new int[size];
                int[] rs = new int[size];
                for (int j = 0; j < size; j++) {
                    int job = from + j;
                    rm[j] = job / samples.size();
                    rs[j] = samples.get(job % samples.size());
                }
                runs.add(new Run(rm, rs, len));
            }
        }
        Parallel.forRange(runs.size(), threads, r -> {
            Run run = runs.get(r);
            int size = run.samples().length;
            float[][] series = new float[size][];
            int[] lens = new int[size];
            for (int j = 0; j < size; j++) {
                int s = run.samples()[j];
                float[] x = new float[batch.series(s).length];
                masks.get(run.masks()[j]).apply(batch, s, x);
                series[j] = x;
                lens[j] = batch.length(s);
            }
            float[][] probs;
            try {
                probs = run(series, lens, run.length());
            } catch (OrtException e) {
                throw new IllegalStateException("ONNX Runtime failed on a run of " + size + " samples: " + e.getMessage(), e);
            }
            for (int j = 0; j < size; j++) {
                out[run.masks()[j]][run.samples()[j]] = probs[j];
            }
        });
        return out;
    }

    /** Class probabilities of time-major samples {@code series[j]} of {@code lens[j]} steps, padded to {@code length}. */
    private float[][] run(float[][] series, int[] lens, int length) throws OrtException {
        OrtEnvironment env = OrtEnvironment.getEnvironment();
        int b = series.length;
        int nr = regions;
        FloatBuffer x = ByteBuffer.allocateDirect(4 * b * length * nr).order(ByteOrder.nativeOrder()).asFloatBuffer();
        for (int j = 0; j < b; j++) {
            float[] s = series[j];
            for (int t = 0; t < lens[j]; t++) {
                int dst = layout == Layout.BATCH_FIRST ? (j * length + t) * nr : (t * b + j) * nr;
                x.put(dst, s, t * nr, nr);
            }
        }
        long[] shape = layout == Layout.BATCH_FIRST ? new long[] {b, length, nr} : new long[] {length, b, nr};
        Map<String, OnnxTensor> feed = new HashMap<>();
        try {
            feed.put(input, OnnxTensor.createTensor(env, x, shape));
            if (lengths != null) {
                if (lengthsInt64) {
                    LongBuffer l = ByteBuffer.allocateDirect(8 * b).order(ByteOrder.nativeOrder()).asLongBuffer();
                    for (int j = 0; j < b; j++) {
                        l.put(j, lens[j]);
                    }
                    feed.put(lengths, OnnxTensor.createTensor(env, l, new long[] {b}));
                } else {
                    IntBuffer l = ByteBuffer.allocateDirect(4 * b).order(ByteOrder.nativeOrder()).asIntBuffer();
                    l.put(0, lens);
                    feed.put(lengths, OnnxTensor.createTensor(env, l, new long[] {b}));
                }
            }
            try (OrtSession.Result result = session.run(feed, Set.of(output))) {
                OnnxValue v = result.get(output).orElseThrow(() -> new IllegalStateException("no output '" + output + "'"));
                if (!(v instanceof OnnxTensor t)) {
                    throw new IllegalStateException("output '" + output + "' is not a tensor");
                }
                long[] os = t.getInfo().getShape();
                if (os.length != 2 || os[0] != b) {
                    throw new IllegalStateException("output '" + output + "' has shape " + java.util.Arrays.toString(os)
                            + " for a run of " + b + " samples");
                }
                int k = (int) os[1];
                FloatBuffer fb = t.getFloatBuffer();
                float[][] probs = new float[b][k];
                for (int j = 0; j < b; j++) {
                    fb.get(j * k, probs[j], 0, k);
                    toProbabilities(probs[j]);
                }
                return probs;
            }
        } finally {
            for (OnnxTensor t : feed.values()) {
                t.close();
            }
        }
    }

    /** Turns one row of the output into probabilities in place, according to what the output carries. */
    private void toProbabilities(float[] z) {
        switch (outputKind) {
            case PROBABILITIES -> {
            }
            case LOG_PROBABILITIES -> {
                for (int i = 0; i < z.length; i++) {
                    z[i] = (float) Math.exp(z[i]);
                }
            }
            case LOGITS -> {
                double max = Double.NEGATIVE_INFINITY;
                for (float v : z) {
                    max = Math.max(max, v);
                }
                double sum = 0;
                double[] e = new double[z.length];
                for (int i = 0; i < z.length; i++) {
                    e[i] = Math.exp(z[i] - max);
                    sum += e[i];
                }
                for (int i = 0; i < z.length; i++) {
                    z[i] = (float) (e[i] / sum);
                }
            }
            default -> throw new IllegalStateException(outputKind.toString());
        }
    }

    @Override
    public void close() {
        closeQuietly(session, options);
    }
}
