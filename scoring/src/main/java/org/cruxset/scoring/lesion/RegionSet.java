package org.cruxset.scoring.lesion;

import java.util.Arrays;
import java.util.Objects;

/** An immutable set of region input positions over an atlas of {@code universe} regions, stored as bits. */
public final class RegionSet implements Comparable<RegionSet> {
    private final int universe;
    private final long[] bits;
    private final int size;

    private RegionSet(int universe, long[] bits) {
        this.universe = universe;
        this.bits = bits;
        int n = 0;
        for (long w : bits) {
            n += Long.bitCount(w);
        }
        this.size = n;
    }

    /** The empty set over {@code universe} regions. */
    public static RegionSet empty(int universe) {
        if (universe < 1) {
            throw new IllegalArgumentException("universe must be at least 1, found " + universe);
        }
        return new RegionSet(universe, new long[(universe + 63) >>> 6]);
    }

    /** The set holding every region. */
    public static RegionSet all(int universe) {
        long[] b = new long[(universe + 63) >>> 6];
        for (int i = 0; i < universe; i++) {
            b[i >>> 6] |= 1L << i;
        }
        return new RegionSet(universe, b);
    }

    /** The set of the given positions. */
    public static RegionSet of(int universe, int... positions) {
        long[] b = empty(universe).bits.clone();
        for (int p : positions) {
            Objects.checkIndex(p, universe);
            b[p >>> 6] |= 1L << p;
        }
        return new RegionSet(universe, b);
    }

    /** The set whose bit words are {@code words} (copied); bits at or above {@code universe} must be clear. */
    public static RegionSet ofWords(int universe, long[] words) {
        long[] b = Arrays.copyOf(words, (universe + 63) >>> 6);
        if (words.length > b.length) {
            for (int i = b.length; i < words.length; i++) {
                if (words[i] != 0) {
                    throw new IllegalArgumentException("bits beyond universe " + universe);
                }
            }
        }
        if ((universe & 63) != 0 && (b[b.length - 1] >>> (universe & 63)) != 0) {
            throw new IllegalArgumentException("bits beyond universe " + universe);
        }
        return new RegionSet(universe, b);
    }

    public int universe() {
        return universe;
    }

    /** Number of regions in the set. */
    public int size() {
        return size;
    }

    public boolean isEmpty() {
        return size == 0;
    }

    public boolean contains(int p) {
        Objects.checkIndex(p, universe);
        return (bits[p >>> 6] & (1L << p)) != 0;
    }

    /** This set plus {@code p}. */
    public RegionSet with(int p) {
        Objects.checkIndex(p, universe);
        long[] b = bits.clone();
        b[p >>> 6] |= 1L << p;
        return new RegionSet(universe, b);
    }

    /** This set without {@code p}. */
    public RegionSet without(int p) {
        Objects.checkIndex(p, universe);
        long[] b = bits.clone();
        b[p >>> 6] &= ~(1L << p);
        return new RegionSet(universe, b);
    }

    /** Union with another set over the same universe. */
    public RegionSet union(RegionSet o) {
        requireSameUniverse(o);
        long[] b = bits.clone();
        for (int i = 0; i < b.length; i++) {
            b[i] |= o.bits[i];
        }
        return new RegionSet(universe, b);
    }

    /** This set without the members of another set over the same universe. */
    public RegionSet minus(RegionSet o) {
        requireSameUniverse(o);
        long[] b = bits.clone();
        for (int i = 0; i < b.length; i++) {
            b[i] &= ~o.bits[i];
        }
        return new RegionSet(universe, b);
    }

    /** The members common to this set and another over the same universe. */
    public RegionSet intersect(RegionSet o) {
        requireSameUniverse(o);
        long[] b = bits.clone();
        for (int i = 0; i < b.length; i++) {
            b[i] &= o.bits[i];
        }
        return new RegionSet(universe, b);
    }

    /** Whether every member of another set over the same universe is a member of this one. */
    public boolean containsAll(RegionSet o) {
        requireSameUniverse(o);
        for (int i = 0; i < bits.length; i++) {
            if ((o.bits[i] & ~bits[i]) != 0) {
                return false;
            }
        }
        return true;
    }

    /** The positions in ascending order. */
    public int[] positions() {
        int[] out = new int[size];
        int k = 0;
        for (int w = 0; w < bits.length; w++) {
            long word = bits[w];
            while (word != 0) {
                out[k++] = (w << 6) + Long.numberOfTrailingZeros(word);
                word &= word - 1;
            }
        }
        return out;
    }

    /** A copy of the bit words. */
    public long[] words() {
        return bits.clone();
    }

    private void requireSameUniverse(RegionSet o) {
        if (o.universe != universe) {
            throw new IllegalArgumentException("region sets over different atlases: " + universe + " vs " + o.universe);
        }
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof RegionSet r && r.universe == universe && Arrays.equals(r.bits, bits);
    }

    @Override
    public int hashCode() {
        return 31 * universe + Arrays.hashCode(bits);
    }

    @Override
    public int compareTo(RegionSet o) {
        int c = Integer.compare(size, o.size);
        if (c != 0) {
            return c;
        }
        for (int w = bits.length - 1; w >= 0; w--) {
            c = Long.compareUnsigned(bits[w], o.bits[w]);
            if (c != 0) {
                return c;
            }
        }
        return Integer.compare(universe, o.universe);
    }

    @Override
    public String toString() {
        return Arrays.toString(positions());
    }
}
