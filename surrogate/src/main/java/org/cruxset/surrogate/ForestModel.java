package org.cruxset.surrogate;

import java.time.OffsetDateTime;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.logging.Level;
import java.util.logging.Logger;
import org.cruxset.scoring.lesion.RegionSet;
import org.tribuo.Example;
import org.tribuo.Model;
import org.tribuo.MutableDataset;

import org.tribuo.common.tree.RandomForestTrainer;
import org.tribuo.ensemble.EnsembleModel;
import org.tribuo.impl.ArrayExample;
import org.tribuo.provenance.SimpleDataSourceProvenance;
import org.tribuo.regression.RegressionFactory;
import org.tribuo.regression.Regressor;
import org.tribuo.regression.ensemble.AveragingCombiner;
import org.tribuo.regression.rtree.CARTRegressionTrainer;
import org.tribuo.regression.rtree.impurity.MeanSquaredError;

/**
 * A random forest of regression trees (Tribuo's {@code RandomForestTrainer} over {@code CARTRegressionTrainer}: each
 * tree on a bootstrap sample, a share {@code featureFraction} of the regions tried at each split), the mean of the
 * trees as the prediction and their spread as the uncertainty (sd across members, so a set unlike any seen gets the
 * trees' disagreement, not a calibrated interval); draw k is tree k. Features: one 0/1 indicator per region and the
 * set's size over N (without it, a tree of indicators sees a set far smaller than any it was trained on only
 * through the few regions it splits on, and predicts it like its neighbours). Refits from scratch; seeded.
 */
public final class ForestModel implements SurrogateModel {
    private static final String OUTPUT = "score";
    private final int regions;
    private final int trees;
    private final int maxDepth;
    private final float featureFraction;
    private final long seed;
    private final String[] names;
    private List<Model<Regressor>> members;
    private int fitted;
    private double seconds;

    /** A forest of {@code trees} trees of depth at most {@code maxDepth} over {@code regions} regions. */
    public ForestModel(int regions, int trees, int maxDepth, double featureFraction, long seed) {
        if (regions < 1 || trees < 2 || maxDepth < 1 || !(featureFraction > 0 && featureFraction <= 1)) {
            throw new IllegalArgumentException("need regions >= 1, trees >= 2, maxDepth >= 1 and featureFraction in "
                    + "(0, 1], found " + regions + ", " + trees + ", " + maxDepth + ", " + featureFraction);
        }
        this.regions = regions;
        this.trees = trees;
        this.maxDepth = maxDepth;
        this.featureFraction = (float) featureFraction;
        this.seed = seed;
        this.names = new String[regions + 1];
        int width = Integer.toString(regions - 1).length();
        for (int i = 0; i < regions; i++) {
            names[i] = String.format(Locale.ROOT, "r%0" + width + "d", i);
        }
        names[regions] = "size";
        // Tribuo logs every trained tree at INFO; a search fits many forests.
        Logger.getLogger("org.tribuo").setLevel(Level.WARNING);
    }

    private Example<Regressor> example(RegionSet s, double y) {
        if (s.universe() != regions) {
            throw new IllegalArgumentException("set over " + s.universe() + " regions, the model over " + regions);
        }
        double[] v = new double[regions + 1];
        for (int p : s.positions()) {
            v[p] = 1;
        }
        v[regions] = (double) s.size() / regions;
        return new ArrayExample<>(new Regressor(OUTPUT, y), names, v);
    }

    @Override
    public void fit(List<RegionSet> sets, double[] y) {
        if (sets.size() != y.length || sets.isEmpty()) {
            throw new IllegalArgumentException(sets.size() + " sets and " + y.length + " scores: need as many, at least 1");
        }
        long t0 = System.nanoTime();
        RegressionFactory factory = new RegressionFactory();
        MutableDataset<Regressor> data = new MutableDataset<>(new SimpleDataSourceProvenance("lesion sets",
                OffsetDateTime.parse("2000-01-01T00:00Z"), factory), factory);
        for (int i = 0; i < y.length; i++) {
            data.add(example(sets.get(i), y[i]));
        }
        CARTRegressionTrainer tree = new CARTRegressionTrainer(maxDepth, 1f, 0f, featureFraction, false,
                new MeanSquaredError(), seed);
        RandomForestTrainer<Regressor> forest = new RandomForestTrainer<>(tree, new AveragingCombiner(), trees, seed);
        EnsembleModel<Regressor> model = (EnsembleModel<Regressor>) forest.train(data);
        members = new ArrayList<>(model.getModels());
        fitted = y.length;
        seconds = (System.nanoTime() - t0) / 1e9;
    }

    private double[][] memberPredictions(List<RegionSet> sets) {
        if (members == null) {
            throw new IllegalStateException("the model has not been fitted");
        }
        double[][] out = new double[members.size()][sets.size()];
        for (int i = 0; i < sets.size(); i++) {
            Example<Regressor> e = example(sets.get(i), 0);
            for (int m = 0; m < members.size(); m++) {
                org.tribuo.Prediction<Regressor> p = members.get(m).predict(e);
                out[m][i] = p.getOutput().getValues()[0];
            }
        }
        return out;
    }

    @Override
    public SurrogateModel.Prediction predict(List<RegionSet> sets) {
        double[][] byMember = memberPredictions(sets);
        double[] mean = new double[sets.size()];
        double[] sd = new double[sets.size()];
        int m = byMember.length;
        for (int i = 0; i < mean.length; i++) {
            double s = 0;
            double s2 = 0;
            for (double[] row : byMember) {
                s += row[i];
                s2 += row[i] * row[i];
            }
            mean[i] = s / m;
            sd[i] = Math.sqrt(Math.max(0, (s2 - s * s / m) / (m - 1)));
        }
        return new SurrogateModel.Prediction(mean, sd);
    }

    @Override
    public double[] draw(List<RegionSet> sets, int k) {
        if (members == null) {
            throw new IllegalStateException("the model has not been fitted");
        }
        Model<Regressor> tree = members.get(Math.floorMod(k, members.size()));
        double[] out = new double[sets.size()];
        for (int i = 0; i < out.length; i++) {
            out[i] = tree.predict(example(sets.get(i), 0)).getOutput().getValues()[0];
        }
        return out;
    }

    @Override
    public String describe() {
        return String.format(Locale.ROOT, "random forest (Tribuo CART regression trees): %d trees of depth at most %d "
                + "over %d regions, %.0f%% of them tried per split, last fit on %d sets in %.2f s", trees, maxDepth,
                regions, 100.0 * featureFraction, fitted, seconds);
    }
}
