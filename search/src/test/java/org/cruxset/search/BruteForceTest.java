package org.cruxset.search;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Path;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.ResultSet;
import java.sql.Statement;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import org.cruxset.scoring.eval.CollapseCriterion;
import org.cruxset.scoring.eval.ScoringSession;
import org.cruxset.scoring.eval.SetScore;
import org.cruxset.scoring.lesion.RegionSet;
import org.cruxset.search.bench.PlantedProblem;
import org.cruxset.search.strategy.ExhaustiveStrategy;
import org.cruxset.search.strategy.GeneticStrategy;
import org.cruxset.search.strategy.LocalStrategy;
import org.cruxset.search.strategy.local.LocalSearch;
import org.cruxset.search.strategy.GrowStrategy;
import org.cruxset.search.strategy.PruneStrategy;
import org.cruxset.search.strategy.RandomStrategy;
import org.cruxset.search.strategy.RankedStrategy;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * On a problem of 14 regions, brute force over all 2^14 sets proves the minimum; exhaustive and random (budget 2^14)
 * find it, exhaustive certifies it, and the irreducibility certificates of ranked, grow and prune agree with brute
 * force.
 */
class BruteForceTest {
    static final long SEED = 3;
    static PlantedProblem problem;
    static int[] ids;
    static boolean[] critical;
    static int minimum;
    static Set<RegionSet> minimumSets;

    @BeforeAll
    static void bruteForce(@TempDir Path dir) {
        problem = new PlantedProblem(Planted.small(), SEED);
        try (ScoringSession s = Planted.session(problem, Double.POSITIVE_INFINITY, null, "ids")) {
            ids = PlantedProblem.ids(s.inputs().batch());
        }
        int n = problem.config().regions();
        CollapseCriterion c = CollapseCriterion.defaults();
        SetScore intact = problem.score(RegionSet.empty(n), ids);
        critical = new boolean[1 << n];
        minimum = Integer.MAX_VALUE;
        for (int bits = 1; bits < critical.length; bits++) {
            critical[bits] = c.critical(problem.score(set(n, bits), ids), intact);
            if (critical[bits]) {
                minimum = Math.min(minimum, Integer.bitCount(bits));
            }
        }
        minimumSets = new HashSet<>();
        for (int bits = 1; bits < critical.length; bits++) {
            if (critical[bits] && Integer.bitCount(bits) == minimum) {
                minimumSets.add(set(n, bits));
            }
        }
    }

    static RegionSet set(int n, int bits) {
        RegionSet s = RegionSet.empty(n);
        for (int i = 0; i < n; i++) {
            if ((bits >>> i & 1) != 0) {
                s = s.with(i);
            }
        }
        return s;
    }

    static int bits(RegionSet s) {
        int b = 0;
        for (int p : s.positions()) {
            b |= 1 << p;
        }
        return b;
    }

    /** Brute force: {@code s} is critical and none of its one-region-smaller subsets is. */
    static boolean irreducible(RegionSet s) {
        int b = bits(s);
        if (!critical[b]) {
            return false;
        }
        for (int p : s.positions()) {
            if (critical[b & ~(1 << p)]) {
                return false;
            }
        }
        return true;
    }

    // Source: analytic result (exhaustive enumeration of all 2^14 sets is the definition of the minimum).
    @Test
    void theGeneratorsProofAgreesWithBruteForce() {
        assertEquals(problem.minimumSize(), minimum);
        assertEquals(new HashSet<>(problem.minimumSets()), minimumSets);
        PlantedProblem.Proof proof = problem.proof(ids, CollapseCriterion.defaults());
        assertTrue(proof.holds(), proof.toString());
        assertTrue(proof.margin() > 0, proof.toString());
    }

    @Test
    void exhaustiveFindsEveryMinimumSetAndCertifiesNothingSmaller(@TempDir Path dir) throws Exception {
        int n = problem.config().regions();
        ExhaustiveStrategy ex = new ExhaustiveStrategy(RegionSet.all(n), "all");
        try (ScoringSession s = Planted.session(problem, 1 << n, dir, "exhaustive")) {
            SearchRun.Result r = Planted.run(s, ex, 1, true);
            assertEquals("finished", r.status());
            assertEquals(minimum, r.bestSize());
            Set<RegionSet> found = new HashSet<>();
            for (SearchRun.Reported x : r.reported()) {
                found.add(x.set());
                assertTrue(irreducible(x.set()), "reported " + x.set() + " is irreducible by brute force");
                assertTrue(x.certificate() != null);
            }
            assertEquals(minimumSets, found);
            assertEquals(minimum - 1, ex.certifiedUpTo());
        }
        try (Connection c = DriverManager.getConnection("jdbc:sqlite:" + dir.resolve(ScoringSession.STORE_FILE));
             Statement st = c.createStatement();
             ResultSet rs = st.executeQuery("SELECT max(max_size) FROM certificates WHERE kind = 'exhaustive'")) {
            assertEquals(minimum - 1, rs.getInt(1), "stored certificate: no critical set up to size minimum - 1");
        }
    }

    @Test
    void randomWithBudgetTwoToTheNFindsTheMinimum(@TempDir Path dir) {
        int n = problem.config().regions();
        try (ScoringSession s = Planted.session(problem, 1 << n, dir, "random")) {
            SearchRun.Result r = Planted.run(s, new RandomStrategy(), 5, false);
            assertEquals(minimum, r.bestSize());
            for (SearchRun.Reported x : r.reported()) {
                assertTrue(minimumSets.contains(x.set()), x.set() + " is a minimum set by brute force");
            }
            assertTrue(r.charged() <= 1 << n);
        }
    }

    @Test
    void certificatesOfRankedGrowAndPruneAgreeWithBruteForce(@TempDir Path dir) {
        int n = problem.config().regions();
        List<Strategy> strategies = List.of(new RankedStrategy(null), new GrowStrategy(false, false),
                new GrowStrategy(true, false), new PruneStrategy(null));
        int i = 0;
        for (Strategy strategy : strategies) {
            try (ScoringSession s = Planted.session(problem, Double.POSITIVE_INFINITY, dir.resolve("s" + i++),
                    strategy.name())) {
                SearchRun.Result r = Planted.run(s, strategy, 1, true);
                assertFalse(r.reported().isEmpty(), strategy.name() + " found a critical set");
                for (SearchRun.Reported x : r.reported()) {
                    assertTrue(x.certificate() != null, strategy.name() + ": " + x.set() + " is certified");
                    assertTrue(irreducible(x.set()), strategy.name() + ": certified " + x.set()
                            + " is irreducible by brute force");
                }
            }
        }
    }

    @Test
    void geneticFindsTheProvenMinimum(@TempDir Path dir) {
        try (ScoringSession s = Planted.session(problem, Double.POSITIVE_INFINITY, dir, "genetic")) {
            SearchRun.Result r = Planted.run(s, new GeneticStrategy(GeneticStrategy.Settings.defaults(), null), 1, true);
            assertEquals(minimum, r.bestSize());
            for (SearchRun.Reported x : r.reported()) {
                assertTrue(minimumSets.contains(x.set()), x.set() + " is a minimum set by brute force");
                assertTrue(x.certificate() != null && irreducible(x.set()));
            }
        }
    }

    @Test
    void localFindsTheProvenMinimum(@TempDir Path dir) {
        try (ScoringSession s = Planted.session(problem, Double.POSITIVE_INFINITY, dir, "local")) {
            SearchRun.Result r = Planted.run(s, new LocalStrategy(LocalSearch.Settings.defaults(), null), 1, true);
            assertEquals(minimum, r.bestSize());
            for (SearchRun.Reported x : r.reported()) {
                assertTrue(minimumSets.contains(x.set()), x.set() + " is a minimum set by brute force");
            }
        }
    }

    @Test
    void everyInclusionMinimalSetIsAPruneFixedPoint(@TempDir Path dir) {
        int n = problem.config().regions();
        List<RegionSet> minimal = new ArrayList<>();
        for (int bits = 1; bits < critical.length; bits++) {
            if (irreducible(set(n, bits))) {
                minimal.add(set(n, bits));
            }
        }
        assertTrue(minimal.size() > minimumSets.size(), "the problem has larger inclusion-minimal sets (traps) too");
        int i = 0;
        for (RegionSet m : minimal.subList(0, Math.min(6, minimal.size()))) {
            try (ScoringSession s = Planted.session(problem, Double.POSITIVE_INFINITY, dir.resolve("p" + i++), "prune")) {
                SearchRun.Result r = Planted.run(s, new PruneStrategy(m), 1, false);
                assertEquals(List.of(m), r.reported().stream().map(SearchRun.Reported::set).toList(),
                        "pruning an irreducible set keeps it");
            }
        }
    }
}
