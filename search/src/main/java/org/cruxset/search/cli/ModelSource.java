package org.cruxset.search.cli;

import org.cruxset.scoring.decoder.Decoder;
import org.cruxset.scoring.decoder.DecoderSource;

/** A command's model as a cluster's executors need it (--spark): the options that opened it, or the demo's. */
interface ModelSource {
    /** What another JVM needs to open {@code opened} exactly as here. */
    DecoderSource source(Decoder opened);
}
