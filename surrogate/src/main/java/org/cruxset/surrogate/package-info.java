/**
 * Surrogate models of a lesion set's score with uncertainty ({@link org.cruxset.surrogate.SurrogateModel}: the sparse
 * Bayesian quadratic model of BOCS and an additive baseline) and surrogate-assisted minimisation by Thompson sampling
 * ({@link org.cruxset.surrogate.ThompsonSearch}).
 */
package org.cruxset.surrogate;
