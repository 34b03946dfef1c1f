/** Models of decoding accuracy as a function of the lesion set, with uncertainty (later issues). */
package org.cruxset.surrogate;
