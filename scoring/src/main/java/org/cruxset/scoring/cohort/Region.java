package org.cruxset.scoring.cohort;

import java.util.Objects;

/** One parcel of an atlas: its index in the atlas file, its name and the network it belongs to. */
public record Region(int index, String name, String network) {
    public Region {
        Objects.requireNonNull(name, "name");
        Objects.requireNonNull(network, "network");
        if (name.isBlank()) {
            throw new IllegalArgumentException("region name must not be blank (index " + index + ")");
        }
    }
}
