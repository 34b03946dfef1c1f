package org.cruxset.cluster;

import org.cruxset.scoring.decoder.DecodeBackend;

/** Registers {@link SparkBackend} as the decode backend named {@code spark} (option {@code --spark MASTER}). */
public final class SparkBackendProvider implements DecodeBackend.Provider {
    @Override
    public String name() {
        return "spark";
    }

    @Override
    public DecodeBackend open(String master) {
        return SparkBackend.at(master);
    }
}
