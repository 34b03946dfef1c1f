package org.cruxset.search;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.function.ToDoubleFunction;
import org.cruxset.scoring.cohort.Atlas;
import org.cruxset.scoring.cohort.Cohort;
import org.cruxset.scoring.cohort.Region;
import org.cruxset.scoring.cohort.Sample;
import org.cruxset.scoring.cohort.Split;
import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.InputBatch;
import org.cruxset.scoring.decoder.ModelCard;
import org.cruxset.scoring.decoder.Preprocessing;
import org.cruxset.scoring.lesion.RegionSet;

/**
 * A decoder given by a table: every sample gets probability {@code f(set)} on its true class and the rest spread
 * evenly over the other classes (of 4), so accuracy is 1 while f(set) > 1/4 and 0 below; mean true-class
 * probability is f(set).
 */
final class TableDecoder implements Decoder {
    static final int CLASSES = 4;
    private final ModelCard card;
    private final ToDoubleFunction<RegionSet> f;

    TableDecoder(int regions, ToDoubleFunction<RegionSet> f, String hash) {
        List<String> names = new ArrayList<>();
        for (int i = 0; i < regions; i++) {
            names.add("r" + i);
        }
        this.card = new ModelCard(regions, names, List.of("a", "b", "c", "d"), Preprocessing.NONE, "table", "test", hash,
                Map.of());
        this.f = f;
    }

    /** 8 subjects × 4 samples (one per class), regions named r0, r1, .... */
    static Cohort cohort(int regions) {
        List<Region> rs = new ArrayList<>();
        for (int i = 0; i < regions; i++) {
            rs.add(new Region(i, "r" + i, "net" + (i % 2)));
        }
        List<Sample> samples = new ArrayList<>();
        for (int s = 0; s < 32; s++) {
            samples.add(new Sample("s" + s, "sub" + (s / 4), List.of("a", "b", "c", "d").get(s % 4), Split.UNASSIGNED, 1,
                    regions, new float[regions]));
        }
        return new Cohort(Atlas.of(rs), samples);
    }

    @Override
    public ModelCard card() {
        return card;
    }

    @Override
    public Bound bind(InputBatch batch) {
        return (masks, threads) -> {
            float[][][] out = new float[masks.size()][batch.size()][CLASSES];
            for (int m = 0; m < masks.size(); m++) {
                double p = f.applyAsDouble(masks.get(m).regions());
                for (int s = 0; s < batch.size(); s++) {
                    int y = s % CLASSES;
                    for (int k = 0; k < CLASSES; k++) {
                        out[m][s][k] = (float) (k == y ? p : (1 - p) / (CLASSES - 1));
                    }
                }
            }
            return out;
        };
    }
}
