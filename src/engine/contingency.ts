/**
 * Contingency tables of binned columns: the joint counts of two coded columns, and the same
 * table conditioned on each level of a third. They show what a pair's mutual information or a
 * triplet's co-information is made of: for an XOR-like synergistic triplet the pair looks
 * independent pooled, while its table within each level of the third column is sharp and flips
 * from one level to the next. Pure typed arrays in, plain objects out; no DOM.
 */
import { entropyOfCounts } from './estimators';
import { PolyadicError } from './errors';
import { MISSING_CATEGORY } from './binning';
import type { EstimatorName, IColumnBinning } from './types';
import { formatDataValue } from './text';

/** The joint counts of two coded columns, X down the rows and Y across. */
export interface IContingencyTable {
  /** Levels (codes) of X: the table's rows. */
  rowLevels: number;
  /** Levels of Y: the table's columns. */
  columnLevels: number;
  /** counts[i * columnLevels + j]: rows (or their weights) with X = i and Y = j. */
  counts: Float64Array;
  /** Row sums (the counts of each level of X). */
  rowTotals: Float64Array;
  /** Column sums (the counts of each level of Y). */
  columnTotals: Float64Array;
  /** Sum of every cell. */
  total: number;
}

/** The cell a table holds most above independence (its own margins), and by how much. */
export interface IOverRepresentedCell {
  row: number;
  column: number;
  count: number;
  /** count / (rowTotal · columnTotal / total): 1 is independence, 2 twice as many rows as expected. */
  ratio: number;
}

/**
 * Counts of the joint of X and Y: one pass over the rows. Codes must lie in 0 … levels − 1
 * (after the missing-value policy); `weights` gives each row a weight (1 when absent), as
 * aggregated distinct rows carry their multiplicity.
 */
export function contingencyTable(
  x: ArrayLike<number>,
  xLevels: number,
  y: ArrayLike<number>,
  yLevels: number,
  weights: ArrayLike<number> | null = null
): IContingencyTable {
  Private.checkColumns([x, y], [xLevels, yLevels], weights);
  const table = Private.emptyTable(xLevels, yLevels);
  const counts = table.counts;
  for (let r = 0; r < x.length; r++) {
    const i = x[r];
    const j = y[r];
    Private.checkCode(i, xLevels, r, 'first');
    Private.checkCode(j, yLevels, r, 'second');
    counts[i * yLevels + j] += weights === null ? 1 : weights[r];
  }
  Private.fillTotals(table);
  return table;
}

/**
 * The table of X and Y within each level of Z: element z holds the rows with Z = z. One pass
 * over the rows; the tables sum cell by cell to the pooled {@link contingencyTable}.
 */
export function conditionalTables(
  x: ArrayLike<number>,
  xLevels: number,
  y: ArrayLike<number>,
  yLevels: number,
  z: ArrayLike<number>,
  zLevels: number,
  weights: ArrayLike<number> | null = null
): IContingencyTable[] {
  Private.checkColumns([x, y, z], [xLevels, yLevels, zLevels], weights);
  const tables = Array.from({ length: zLevels }, () => Private.emptyTable(xLevels, yLevels));
  for (let r = 0; r < x.length; r++) {
    const i = x[r];
    const j = y[r];
    const k = z[r];
    Private.checkCode(i, xLevels, r, 'first');
    Private.checkCode(j, yLevels, r, 'second');
    Private.checkCode(k, zLevels, r, 'conditioning');
    tables[k].counts[i * yLevels + j] += weights === null ? 1 : weights[r];
  }
  tables.forEach(Private.fillTotals);
  return tables;
}

/**
 * Mutual information in nats of the table's two columns, H(X) + H(Y) − H(X,Y), each entropy
 * by `estimator` from the table's counts (the possible cells are the table's cells). Whole
 * counts are expected for the estimators that read singletons.
 */
export function tableMutualInformation(table: IContingencyTable, estimator: EstimatorName): number {
  if (table.total <= 0) {
    return 0;
  }
  return (
    entropyOfCounts(estimator, table.rowTotals) +
    entropyOfCounts(estimator, table.columnTotals) -
    entropyOfCounts(estimator, table.counts)
  );
}

/**
 * The occupied cell of largest count relative to independence of the table's own margins
 * (ties: the first in row-major order), or null for an empty table. Within the levels of an
 * XOR-like triplet these cells move: the "flip".
 */
export function overRepresentedCell(table: IContingencyTable): IOverRepresentedCell | null {
  if (table.total <= 0) {
    return null;
  }
  let best: IOverRepresentedCell | null = null;
  for (let i = 0; i < table.rowLevels; i++) {
    for (let j = 0; j < table.columnLevels; j++) {
      const count = table.counts[i * table.columnLevels + j];
      if (count <= 0) {
        continue;
      }
      const ratio = (count * table.total) / (table.rowTotals[i] * table.columnTotals[j]);
      if (best === null || ratio > best.ratio * (1 + 1e-12)) {
        best = { row: i, column: j, count, ratio };
      }
    }
  }
  return best;
}

/**
 * A label for every code of a binned column: its category, its bin as an interval of the
 * edges (half-open, the last closed, as numpy.histogram assigns values), or "(missing)" for
 * the code of missing values under the policy `category`.
 */
export function binLabels(binning: IColumnBinning): string[] {
  const { categories, edges, missing_code: missingCode } = binning.binning;
  const labels: string[] = [];
  for (let code = 0; code < binning.bins; code++) {
    if (categories !== undefined && code < categories.length) {
      labels.push(categories[code]);
    } else if (code === missingCode) {
      labels.push(MISSING_CATEGORY);
    } else if (edges !== undefined && code + 1 < edges.length) {
      const last = code + 2 === edges.length;
      labels.push(`[${Private.edge(edges[code])}, ${Private.edge(edges[code + 1])}${last ? ']' : ')'}`);
    } else {
      labels.push(`code ${code}`);
    }
  }
  return labels;
}

namespace Private {
  /** A table of zeros. */
  export function emptyTable(rowLevels: number, columnLevels: number): IContingencyTable {
    return {
      rowLevels,
      columnLevels,
      counts: new Float64Array(rowLevels * columnLevels),
      rowTotals: new Float64Array(rowLevels),
      columnTotals: new Float64Array(columnLevels),
      total: 0
    };
  }

  /** Fill the margins and total of a table from its cells. */
  export function fillTotals(table: IContingencyTable): void {
    const { counts, rowTotals, columnTotals, columnLevels } = table;
    let total = 0;
    for (let i = 0; i < table.rowLevels; i++) {
      for (let j = 0; j < columnLevels; j++) {
        const n = counts[i * columnLevels + j];
        rowTotals[i] += n;
        columnTotals[j] += n;
        total += n;
      }
    }
    table.total = total;
  }

  /** Equal lengths and whole, positive level counts. */
  export function checkColumns(columns: ArrayLike<number>[], levels: number[], weights: ArrayLike<number> | null): void {
    levels.forEach((count, c) => {
      if (!Number.isInteger(count) || count < 1) {
        throw new PolyadicError('usage', `A contingency table needs at least one level per column; column ${c + 1} has ${String(count)}.`);
      }
    });
    const rows = columns[0].length;
    columns.forEach((column, c) => {
      if (column.length !== rows) {
        throw new PolyadicError('input', `Column ${c + 1} of a contingency table has ${column.length} rows but column 1 has ${rows}.`);
      }
    });
    if (weights !== null && weights.length !== rows) {
      throw new PolyadicError('input', `A contingency table has ${rows} rows but ${weights.length} weights.`);
    }
  }

  /** A code inside its column's levels, or an error naming the row. */
  export function checkCode(code: number, levels: number, row: number, which: string): void {
    if (!(code >= 0 && code < levels && Number.isInteger(code))) {
      throw new PolyadicError(
        'input',
        `Row ${row} of the ${which} column has code ${String(code)}, outside 0 … ${levels - 1}: contingency tables count binned codes after the missing-value policy.`,
        { row, value: String(code) }
      );
    }
  }

  /** A bin edge, as every data value is shown. */
  export const edge = formatDataValue;
}
