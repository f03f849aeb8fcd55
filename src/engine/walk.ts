/**
 * The lattice of any estimator: the discrete walk over codes (lattice.ts) for the count
 * estimators, the Cholesky-extension walk over normal scores (copula/walk.ts) for the Gaussian
 * copula. Both take the same input and give the same layout, so every caller that walks a
 * lattice (analyze, the replicates, a worker's units, verify) goes through here.
 */

import { computeCopulaLattice, walkCopulaSubtree } from './copula/walk';
import { computeLattice, ILattice, ILatticeInput, ISubtreeResult, walkSubtree } from './lattice';
import type { EstimatorName } from './types';

/** Whether an estimator works from continuous scores rather than counts. */
export function isContinuousEstimator(estimator: EstimatorName): boolean {
  return estimator === 'gaussian-copula';
}

/** The whole lattice of an input, in this thread. */
export function walkLattice(input: ILatticeInput): ILattice {
  return isContinuousEstimator(input.estimator) ? computeCopulaLattice(input) : computeLattice(input);
}

/** The subtree of multiplets whose smallest column is `root`. */
export function walkLatticeSubtree(input: ILatticeInput, root: number): ISubtreeResult {
  return isContinuousEstimator(input.estimator) ? walkCopulaSubtree(input, root) : walkSubtree(input, root);
}
