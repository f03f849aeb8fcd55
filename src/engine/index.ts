/** The engine's public API: pure TypeScript, no DOM, no JupyterLab (DESIGN.md §1–3). */

export * from './types';
export * from './errors';
export * from './version';
export * from './table';
export { formatCount, plural, wordFor } from './text';
export {
  AUTO_MAX_LEVELS,
  AUTO_NUMERIC_SPEC,
  BIN_SPEC_FORMS,
  MAX_BIN_COUNT,
  MISSING_CATEGORY,
  applyMissingPolicy,
  binColumn,
  binIndexByEdges,
  defaultBinSpec,
  formatBinSpec,
  parseBinSpec
} from './binning';
export type { IBinOptions, IBinnedColumn, IPreparedCodes } from './binning';
export { binLabels, conditionalTables, contingencyTable, overRepresentedCell, tableMutualInformation } from './contingency';
export type { IContingencyTable, IOverRepresentedCell } from './contingency';
export { optimalKMeans1D } from './kmeans1d';
export type { IKMeansPartition } from './kmeans1d';
export {
  ESTIMATORS,
  checkEstimator,
  countLogCountTable,
  entropyNats,
  entropyOfCounts,
  fromNats,
  needsCounts
} from './estimators';
export type { ICountCells, ICountSummary } from './estimators';
export {
  DEFAULT_MAX_MULTIPLETS,
  binomialOf,
  checkMultipletCount,
  createIndexing,
  forEachInSubtree,
  forEachMultiplet,
  indexOfColumns,
  indexOfMembers,
  largestOrderWithin,
  membersOfIndex,
  multipletCount,
  orderOfIndex,
  subtreeSize
} from './multiplets';
export type { IMultipletIndexing } from './multiplets';
export { assembleLattice, computeLattice, jointEntropyOfCodes, walkSubtree } from './lattice';
export type { ILattice, ILatticeInput, ISubtreeResult } from './lattice';
export { isContinuousEstimator, walkLattice, walkLatticeSubtree } from './walk';
export { computeCopulaLattice, copulaNormalise, gaussianEntropy, normalQuantile, walkCopulaSubtree } from './copula';
export { kendallTau, robustnessRun } from './robustness';
export { chainFromNats, chainsOfLattice, checkChainRequests, GREEDY_CHAINS, latticeOfResult, latticeSource } from './chains';
export type { IRobustnessAgreement, IRobustnessResult, IRobustnessRow, IRobustnessVariant } from './robustness';
export {
  chainAlong,
  coinformationAll,
  coinformationOf,
  computeMeasures,
  conditionalCoinformation,
  conditionalMutualInformation,
  extremalChains,
  jointEntropy,
  multipletMeasures,
  mutualInformation
} from './measures';
export type {
  ColumnSet,
  IConditioningChain,
  IEntropySource,
  IMeasureArrays,
  IMultipletMeasures
} from './measures';
export {
  ALL_ORDERS_UP_TO,
  DEFAULT_MAX_ORDER,
  analyze,
  analyzeCodes,
  latticeInput,
  prepareColumns,
  resolveOptions
} from './analyze';
export type { IResolvedOptions } from './analyze';
export {
  DEFAULT_FIT_MAX_ITERATIONS,
  DEFAULT_FIT_TOLERANCE,
  MAX_FIT_CELLS,
  connectedInformation,
  fitPairwisePreserving
} from './maxent';
export type {
  IConnectedInformation,
  IConnectedInformationOptions,
  IMaxEntFit,
  IMaxEntFitOptions
} from './maxent';
