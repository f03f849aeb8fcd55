/**
 * The Gaussian-copula estimator (Ince et al. 2017, Human Brain Mapping 38:1541–1573): copula
 * normalisation of each continuous column, Gaussian entropies from the covariance of the normal
 * scores with the analytic bias correction, over the same lattice as the discrete walk.
 */
export { covarianceMatrix, entropyOffsets, gaussianEntropy, gaussianEntropyBias, logDeterminant, LN_TWO_PI_E } from './gaussian';
export { COPULA_SPEC, isCopulaSpec, prepareCopulaColumns } from './prepare';
export type { ICopulaPrepareOptions } from './prepare';
export { digamma, normalQuantile } from './special';
export { averageRanks, copulaNormalise, rankCodes, scoresOfCodes, scoreTable } from './transform';
export {
  COPULA_ESTIMATOR,
  computeCopulaLattice,
  logDeterminantsOfSubtree,
  prepareCopulaWalk,
  walkCopulaSubtree
} from './walk';
export type { ICopulaWalkInput } from './walk';
