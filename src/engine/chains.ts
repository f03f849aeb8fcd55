/**
 * Conditioning chains of a run, as the CLI writes them and the results view draws them: the
 * chain rule along an ordering X1, X2, …, Xk of columns,
 *
 *   I(X1;…;Xj) = I(X1;…;Xj−1) − I(X1;…;Xj−1 | Xj)
 *
 * (co-information with Bell's sign: negative means synergy dominates; Bell 2003), read from the
 * run's own lattice of joint entropies. A chain starts at its pair: `values[i]` is the
 * co-information of the first i + 2 columns, `steps[i]` = values[i + 1] − values[i] is the
 * term the (i + 3)-th column adds, −I(X1;…;Xi+2 | Xi+3). A chain is at most the run's maximum
 * order long, so every prefix is a multiplet of the run.
 */

import { PolyadicError } from './errors';
import { fromNats } from './estimators';
import { chainAlong, extremalChains, type IEntropySource } from './measures';
import type { ILattice } from './lattice';
import { createIndexing, indexOfColumns } from './multiplets';
import type { ChainRequest, EstimatorName, IAnalysisResult, IChainResult, Units } from './types';

/** The greedy growths, by the name a request gives them. */
export const GREEDY_CHAINS = ['greedy-synergy', 'greedy-redundancy'] as const;

/**
 * A chain in `units` from the chain values of {@link chainAlong} (in nats, the first entry a
 * single column's entropy, which a chain drawn from its pair leaves out).
 */
export function chainFromNats(kind: IChainResult['kind'], columns: string[], nats: readonly number[], units: Units): IChainResult {
  const values = nats.slice(1).map(v => fromNats(v, units));
  const steps = values.slice(1).map((v, i) => v - values[i]);
  return { kind, columns, values, steps };
}

/** An entropy source over a lattice alone: chains no longer than its order read only the lattice. */
export function latticeSource(lattice: ILattice, estimator: EstimatorName): IEntropySource & { lattice: ILattice } {
  return {
    codes: lattice.bins.map(() => new Int32Array(0)),
    bins: lattice.bins,
    estimator,
    lattice
  };
}

/**
 * The chains `requests` asks for, over the lattice of a run whose columns are `names`: every
 * ordering is checked (known, distinct columns, two up to the maximum order), a greedy growth
 * runs up to the maximum order (the synergy one from the most negative triplet, the
 * redundancy one from the pair of most mutual information; see {@link extremalChains}).
 */
export function chainsOfLattice(
  source: IEntropySource & { lattice: ILattice },
  names: readonly string[],
  requests: readonly ChainRequest[],
  units: Units
): IChainResult[] {
  const maxOrder = source.lattice.indexing.maxOrder;
  checkChainRequests(requests, names, maxOrder);
  let greedy: ReturnType<typeof extremalChains> | null = null;
  return requests.map(request => {
    if (request === 'greedy-synergy' || request === 'greedy-redundancy') {
      greedy ??= extremalChains(source, maxOrder);
      const chain = greedy[request === 'greedy-synergy' ? 'synergy' : 'redundancy'];
      return chainFromNats(request, chain.columns.map(c => names[c]), chain.values, units);
    }
    const order = Private.ordering(request, names, maxOrder);
    return chainFromNats('ordering', [...request], chainAlong(source, order).values, units);
  });
}

/**
 * Check chain requests against the columns of a run and its maximum order: one clear message
 * naming the chain and the column at fault.
 */
export function checkChainRequests(requests: readonly ChainRequest[], names: readonly string[], maxOrder: number): void {
  for (const request of requests) {
    if (typeof request === 'string') {
      if (!(GREEDY_CHAINS as readonly string[]).includes(request)) {
        throw new PolyadicError('usage', `Unknown chain '${request}'; a chain is ${GREEDY_CHAINS.join(', ')} or a list of columns.`, {
          option: 'chains',
          value: request
        });
      }
      if (maxOrder < 2 || names.length < 2) {
        throw new PolyadicError('usage', `A ${request} chain needs at least two columns and a maximum order of at least 2.`, {
          option: 'chains',
          value: request
        });
      }
    } else {
      Private.ordering(request, names, maxOrder);
    }
  }
}

/**
 * The lattice of joint entropies (nats) rebuilt from a result that lists every multiplet up to
 * its maximum order, or a message saying why it cannot be (a result cut to its top multiplets).
 */
export function latticeOfResult(result: IAnalysisResult): ILattice | string {
  const n = result.columns.length;
  const maxOrder = Math.min(result.max_order, n);
  const indexing = createIndexing(n, maxOrder);
  if (result.multiplets.length !== result.multiplet_count) {
    return (
      'Conditioning chains need every multiplet of the analysis; this result keeps only its ' +
      'strongest ones. Run again without a top-N limit to see chains.'
    );
  }
  const entropy = new Float64Array(indexing.size);
  const toNats = result.units === 'bits' ? Math.LN2 : 1;
  const indexOf = new Map(result.columns.map((column, i) => [column.name, i]));
  for (const row of result.multiplets) {
    entropy[indexOfColumns(indexing, row.columns.map(name => indexOf.get(name)!))] = row.entropy * toNats;
  }
  return {
    indexing,
    estimator: result.estimator,
    rows: result.rows_used,
    bins: result.columns.map(column => column.bins),
    entropy,
    occupied: new Int32Array(indexing.size)
  };
}

namespace Private {
  /** Column indices of an ordering, checked. */
  export function ordering(request: readonly string[], names: readonly string[], maxOrder: number): number[] {
    const shown = request.join(',');
    if (request.length < 2) {
      throw new PolyadicError('usage', `A conditioning chain starts at a pair: '${shown}' names ${request.length === 1 ? 'one column' : 'none'}.`, {
        option: 'chains',
        value: shown
      });
    }
    if (request.length > maxOrder) {
      throw new PolyadicError(
        'usage',
        `The chain '${shown}' has ${request.length} columns, more than the maximum order ${maxOrder}: every prefix of a chain must be a multiplet of the run.`,
        { option: 'chains', value: shown }
      );
    }
    const indexOf = new Map(names.map((name, i) => [name, i]));
    const seen = new Set<string>();
    return request.map(name => {
      const index = indexOf.get(name);
      if (index === undefined) {
        throw new PolyadicError('usage', `The chain '${shown}' names column '${name}', which is not among the analysed columns (${names.join(', ')}).`, {
          option: 'chains',
          column: name
        });
      }
      if (seen.has(name)) {
        throw new PolyadicError('usage', `The chain '${shown}' lists column '${name}' twice.`, { option: 'chains', column: name });
      }
      seen.add(name);
      return index;
    });
  }
}
