/**
 * `polyadic analyze FILE --via duckdb`: DuckDB (its Node binding, embedded and out of core) scans
 * a Parquet file (or a CSV/TSV file typed once into a temporary Parquet file, see duckdb-csv.ts), bins every selected column in SQL with the edges the in-memory engine would
 * compute, and `GROUP BY`s the binned columns into distinct joint rows with their counts. Node
 * never holds the file's rows: it receives column summaries (counts, extremes, exact order
 * statistics, and for scott/doane the column streamed in chunks for numpy's pairwise sums) and
 * the weighted distinct rows.
 *
 * Exactness: the edges come from the engine's own planNumeric on an exact summary (DuckDB's
 * `quantile_disc` gives order statistics, each checked by counting, and numpy's interpolation is
 * ours); a value's bin is numpy's rule evaluated in SQL on IEEE doubles, with the edges written as
 * the shortest decimal that reads back as the same double.
 *
 * Past the cap on distinct rows, an order-limited run counts each multiplet on its own instead:
 * `GROUP BY … GROUPING SETS`, one set per multiplet and a batch of sets per query, gives every
 * multiplet's occupied cells' counts, and the engine's CellCountLattice makes the same lattice
 * as the walk from them. A full lattice needs the joint of every column, so it stops at the cap.
 */

import * as path from 'path';

import { parseBinSpec, formatBinSpec, MAX_BIN_COUNT } from '../engine/binning';
import { checkCategoricalSpec } from '../engine/binning/categorical';
import { occupancyWarning } from '../engine/binning/column';
import {
  INumericSummary,
  mergedLevelsWarning,
  NumericPlan,
  planNumeric,
  summaryNeeds
} from '../engine/binning/numeric';
import { AUTO_MAX_LEVELS } from '../engine/binning/spec';
import { compareCodePoints, refuseAllMissing } from '../engine/binning/shared';
import type { IBinnedColumn } from '../engine/binning/types';
import { CellCountLattice, IMultipletToCount } from '../engine/aggregate/cells';
import { StreamingNumpySum } from '../engine/aggregate/stream-sum';
import { applyWeightedMissingPolicy, IWeightedCodes } from '../engine/aggregate/weighted';
import { analyzeCodes, IResolvedOptions, resolveOptions } from '../engine/analyze';
import { applyMissingPolicy } from '../engine/binning';
import { droppedRowsWarning, nothingLeftError } from '../engine/binning/missing';
import type { ILattice } from '../engine/lattice';
import { errorMessage, PolyadicError } from '../engine/errors';
import { cubeRounded } from '../engine/floatmath';
import { unknownColumn } from '../engine/table';
import { formatCount } from '../engine/text';
import type { IAnalysisResult, IAnalyzeOptions, MissingPolicy } from '../engine/types';
import { delimitedHeader, duckdbFormatOf, stageDelimitedText } from './duckdb-csv';

/** The npm package and version the DuckDB path uses (package.json pins the same). */
export const DUCKDB_PACKAGE = '@duckdb/node-api@1.5.6-r.1';

/**
 * Most distinct joint rows the DuckDB path hands to the walk (our choice: 5 million rows of
 * 20 Int32 codes and a weight are about 420 MB); above it the run stops and says so.
 */
export const MAX_DISTINCT_ROWS = 5_000_000;

/**
 * Grouping sets (multiplets) per query when the fallback counts each multiplet on its own (our
 * choice: each query is one scan of the file, and DuckDB keeps one hash table per set).
 */
export const GROUPING_SETS_PER_QUERY = 64;

/** Limits of the DuckDB path (tests lower them to reach the fallback on a small file). */
export interface IDuckDBLimits {
  /** Default {@link MAX_DISTINCT_ROWS}. */
  maxDistinctRows?: number;
  /** Default {@link GROUPING_SETS_PER_QUERY}. */
  setsPerQuery?: number;
}

/** Most edges of one column binned in SQL (a nested CASE of that many comparisons). */
export const MAX_SQL_BINS = 4096;

/**
 * What the DuckDB path hands over: the weighted distinct rows and what the file held; past the
 * cap, for an order-limited run, the lattice counted multiplet by multiplet instead (the
 * prepared codes then have no rows, only the binnings, counts and warnings).
 */
export interface IDuckDBAggregate {
  prepared: IWeightedCodes;
  /** The lattice from `GROUPING SETS` when the distinct rows passed the cap, else null. */
  lattice: ILattice | null;
  /** Queries the fallback ran (0 without it). */
  queries: number;
  /** Every column name of the file, in file order. */
  names: string[];
  /** DuckDB's version, e.g. 'v1.5.6'. */
  engineVersion: string;
}

/** The types of @duckdb/node-api this module uses (loaded at run time, see {@link loadDuckDB}). */
type DuckDBModule = typeof import('@duckdb/node-api');
type Connection = import('@duckdb/node-api').DuckDBConnection;

/** Load the DuckDB binding, or a usage error naming the package and the install command. */
export async function loadDuckDB(): Promise<DuckDBModule> {
  try {
    return await import('@duckdb/node-api');
  } catch (error) {
    throw new PolyadicError(
      'usage',
      `--via duckdb needs the npm package @duckdb/node-api, which could not be loaded (${errorMessage(error)}); ` +
        `install it with: npm install ${DUCKDB_PACKAGE}`,
      { option: '--via', value: 'duckdb' }
    );
  }
}

/**
 * DuckDB's C-API binding (@duckdb/node-bindings, the version @duckdb/node-api pins), for reading
 * a result chunk's DOUBLE vector as a typed array in place.
 */
export async function loadBindings(): Promise<typeof import('@duckdb/node-bindings')> {
  return await import('@duckdb/node-bindings');
}

/**
 * Bin and aggregate the selected columns of a Parquet file in DuckDB (see the file comment).
 * Options as for `analyze`; errors name the column, row, spec or limit at fault.
 */
export async function aggregateWithDuckDB(
  filePath: string,
  options: IAnalyzeOptions,
  limits: IDuckDBLimits = {}
): Promise<IDuckDBAggregate> {
  const maxDistinctRows = limits.maxDistinctRows ?? MAX_DISTINCT_ROWS;
  const format = duckdbFormatOf(filePath);
  const duckdb = await loadDuckDB();
  const instance = await duckdb.DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  // CSV/TSV: typed once into a temporary Parquet file, which the rest scans (see duckdb-csv.ts)
  const staged = format === 'parquet' ? null : await stageDelimitedText(connection, filePath, format).catch(error => {
    connection.closeSync();
    instance.closeSync();
    throw error;
  });
  const parquet = staged?.parquet ?? filePath;
  try {
    const source = Private.sourceOf(parquet);
    const schema = await Private.describe(connection, parquet);
    const names = schema.map(column => column.name);
    const selected = options.columns ?? names;
    for (const name of selected) {
      if (!names.includes(name)) {
        throw unknownColumn(name, names);
      }
    }
    const rowsResult = await connection.runAndReadAll(`SELECT count(*) FROM ${source}`);
    const rows = Number(rowsResult.getRowsJS()[0][0]);
    if (rows === 0) {
      throw new PolyadicError('input', `${path.basename(filePath)} has columns but no rows.`, {});
    }
    const missing: MissingPolicy = options.missing ?? 'drop';
    const columns: Private.IColumnPlan[] = [];
    for (const name of selected) {
      const type = schema[names.indexOf(name)].type;
      columns.push(await Private.planColumn(connection, source, name, type, rows, options));
    }
    const engineVersion = duckdb.version();
    const grouped = await Private.groupRows(connection, source, columns, maxDistinctRows);
    if (grouped === null) {
      const resolved = resolveOptions(options, columns.length);
      if (resolved.maxOrder >= columns.length) {
        throw new PolyadicError(
          'limit',
          `The selected columns have more than ${formatCount(maxDistinctRows)} distinct binned rows, above what the ` +
            'DuckDB path hands to the walk, and a full lattice needs them all; select fewer columns, use fewer bins, ' +
            'or limit the order with --max-order (each multiplet is then counted in DuckDB on its own).',
          { option: '--via', value: 'duckdb' }
        );
      }
      const counted = await Private.countEachMultiplet(connection, source, columns, rows, missing, resolved, limits);
      return { ...counted, names, engineVersion };
    }
    const binned = Private.binnedColumns(columns, grouped);
    const prepared = applyWeightedMissingPolicy(binned, grouped.weights, missing);
    prepared.warnings = [...binned.flatMap(column => column.warnings), ...prepared.warnings];
    return { prepared, lattice: null, queries: 0, names, engineVersion };
  } finally {
    connection.closeSync();
    instance.closeSync();
    await staged?.remove();
  }
}

/** The column names of a Parquet file as DuckDB reads them (for checking options before the run). */
export async function duckdbColumnNames(filePath: string): Promise<string[]> {
  const format = duckdbFormatOf(filePath);
  if (format !== 'parquet') {
    return await delimitedHeader(filePath, format);
  }
  const duckdb = await loadDuckDB();
  const instance = await duckdb.DuckDBInstance.create(':memory:');
  const connection = await instance.connect();
  try {
    return (await Private.describe(connection, filePath)).map(column => column.name);
  } finally {
    connection.closeSync();
    instance.closeSync();
  }
}

/**
 * `analyze` through DuckDB: aggregate (see {@link aggregateWithDuckDB}), then the engine's
 * analysis of the weighted distinct rows. Refuses what needs the rows themselves.
 */
export async function analyzeViaDuckDB(
  filePath: string,
  options: IAnalyzeOptions,
  limits: IDuckDBLimits = {}
): Promise<{ result: IAnalysisResult; note: string; scan: IDuckDBScan | null }> {
  if (options.estimator === 'gaussian-copula') {
    throw new PolyadicError(
      'usage',
      '--via duckdb hands over binned counts, and the Gaussian-copula estimator needs the ranks of every row; ' +
        'use a discrete estimator with --via duckdb, or leave out --via.',
      { option: '--estimator', value: 'gaussian-copula' }
    );
  }
  const statistics = options.statistics ?? {};
  for (const [key, flag] of [
    ['surrogates', '--surrogates'],
    ['sharpen', '--sharpen']
  ] as const) {
    if ((statistics[key] ?? 0) > 0) {
      throw new PolyadicError(
        'usage',
        `${flag} is not available with --via duckdb: surrogates shuffle each column's rows on its own, which the ` +
          'distinct joint rows with their counts no longer have; leave out --via for it (--bootstrap and ' +
          '--beyond-pairs work with --via duckdb).',
        { option: flag }
      );
    }
  }
  const aggregate = await aggregateWithDuckDB(filePath, options, limits);
  for (const [key, flag, verb] of [
    ['bootstrap', '--bootstrap', 'resamples'],
    ['beyondPairs', '--beyond-pairs', 'fits the counts of']
  ] as const) {
    if (aggregate.lattice !== null && (statistics[key] ?? 0) > 0) {
      throw new PolyadicError(
        'limit',
        `${flag} ${verb} the distinct joint rows, and these columns have more than ` +
          `${formatCount(limits.maxDistinctRows ?? MAX_DISTINCT_ROWS)} of them, so each multiplet was counted on its own ` +
          'and there are no joint rows; select fewer columns or use fewer bins for it, or leave it out.',
        { option: flag }
      );
    }
  }
  const prepared = aggregate.prepared;
  const result = analyzeCodes(prepared, options, aggregate.lattice ?? undefined);
  const note =
    aggregate.lattice === null
      ? `DuckDB ${aggregate.engineVersion} binned ${formatCount(prepared.rows)} rows into ` +
        `${formatCount(prepared.weights.length)} distinct binned rows.`
      : `DuckDB ${aggregate.engineVersion} binned ${formatCount(prepared.rows)} rows; they have more than ` +
        `${formatCount(limits.maxDistinctRows ?? MAX_DISTINCT_ROWS)} distinct binned rows, so each of the ` +
        `${formatCount(aggregate.lattice.indexing.size - 1)} multiplets up to order ${aggregate.lattice.indexing.maxOrder} ` +
        `was counted in DuckDB on its own (GROUP BY … GROUPING SETS, ${formatCount(aggregate.queries)} ` +
        `${aggregate.queries === 1 ? 'query' : 'queries'}, each a scan of the file) instead of by the walk; the values are the same.`;
  const scan: IDuckDBScan | null =
    aggregate.lattice === null ? { engine: { name: 'duckdb', version: aggregate.engineVersion }, table: prepared } : null;
  return { result, note, scan };
}

/** What a record of a DuckDB run keeps of the scan: DuckDB's version and the weighted table walked. */
export interface IDuckDBScan {
  engine: { name: 'duckdb'; version: string };
  /** The prepared weighted codes (after the missing-value policy), as the walk took them. */
  table: IWeightedCodes;
}

namespace Private {
  /** The table function that reads the file, with each row's number in the file. */
  export function sourceOf(filePath: string): string {
    return `read_parquet(${quoteString(filePath)}, file_row_number = true)`;
  }

  /** The file's columns and DuckDB types (without the row number). */
  export async function describe(connection: Connection, filePath: string): Promise<{ name: string; type: string }[]> {
    let schema: { name: string; type: string }[];
    try {
      const described = await connection.runAndReadAll(`DESCRIBE SELECT * FROM ${sourceOf(filePath)}`);
      schema = described.getRowsJS().map(row => ({ name: String(row[0]), type: String(row[1]) }));
    } catch (error) {
      throw new PolyadicError('input', `DuckDB cannot read '${filePath}' as Parquet: ${errorMessage(error)}`, {
        value: filePath
      });
    }
    return schema.filter(column => column.name !== 'file_row_number');
  }

  /** How one column is read and binned in SQL. */
  export interface IColumnPlan {
    name: string;
    dtype: string;
    /** The spec as the record keeps it. */
    specText: string;
    /** SQL giving the bin code (numeric plans) or the value (categories), NULL when missing. */
    expression: string;
    missingCount: number;
    firstMissingRow: number;
    /** Numeric binning, or null for text and boolean categories. */
    plan: NumericPlan | null;
  }

  /** A SQL identifier in double quotes. */
  export function quoteName(name: string): string {
    return `"${name.replace(/"/g, '""')}"`;
  }

  /** A SQL string literal. */
  export function quoteString(text: string): string {
    return `'${text.replace(/'/g, "''")}'`;
  }

  /** A double as SQL: the shortest decimal that reads back as the same double (JavaScript's). */
  export function double(value: number): string {
    if (!Number.isFinite(value)) {
      throw new PolyadicError('internal', `A bin edge ${value} is not finite.`);
    }
    return `CAST('${Object.is(value, -0) ? '-0.0' : String(value)}' AS DOUBLE)`;
  }

  /** The engine's dtype name of a DuckDB column type (as the in-memory Parquet reader names it). */
  export function dtypeOf(name: string, type: string): { dtype: string; kind: 'numeric' | 'categorical' } {
    const numeric: Record<string, string> = {
      DOUBLE: 'float64',
      FLOAT: 'float32',
      TINYINT: 'int8',
      SMALLINT: 'int16',
      INTEGER: 'int32',
      BIGINT: 'int64',
      UTINYINT: 'uint8',
      USMALLINT: 'uint16',
      UINTEGER: 'uint32',
      UBIGINT: 'uint64'
    };
    if (type in numeric) {
      return { dtype: numeric[type], kind: 'numeric' };
    }
    if (type === 'BOOLEAN') {
      return { dtype: 'bool', kind: 'categorical' };
    }
    if (type === 'VARCHAR') {
      return { dtype: 'string', kind: 'categorical' };
    }
    throw new PolyadicError(
      'input',
      `Column '${name}' has the DuckDB type ${type}, which the DuckDB path does not read yet (numbers, booleans ` +
        'and text only); leave it out with --columns, or leave out --via.',
      { column: name, value: type }
    );
  }

  /** Summarize and plan one column (see the file comment). */
  export async function planColumn(
    connection: Connection,
    source: string,
    name: string,
    type: string,
    rows: number,
    options: IAnalyzeOptions
  ): Promise<IColumnPlan> {
    const { dtype, kind } = dtypeOf(name, type);
    const column = { name, dtype };
    const x = quoteName(name);
    const float = dtype === 'float64' || dtype === 'float32';
    const missingSql = float ? `(${x} IS NULL OR isnan(${x}))` : `(${x} IS NULL)`;
    const text = options.binsByColumn?.[name];
    const given =
      text !== undefined
        ? parseBinSpec(text)
        : kind === 'numeric' && options.bins !== undefined
          ? parseBinSpec(options.bins)
          : kind === 'categorical'
            ? { method: 'categorical' as const }
            : { method: 'auto' as const };
    const specText = formatBinSpec(given);
    const counted = await one(
      connection,
      `SELECT count(*) FILTER (WHERE ${missingSql}), min(file_row_number) FILTER (WHERE ${missingSql}) FROM ${source}`
    );
    const missingCount = Number(counted[0]);
    const firstMissingRow = counted[1] === null ? -1 : Number(counted[1]);
    if (missingCount === rows) {
      refuseAllMissing({ kind: 'numeric', name, dtype, values: new Float64Array(0), missing: null }, rows);
    }
    if (kind === 'categorical') {
      checkCategoricalSpec(column, given.method === 'auto' ? { method: 'categorical' } : given, specText);
      const value = dtype === 'bool' ? `CASE WHEN ${x} THEN 'true' WHEN NOT ${x} THEN 'false' END` : x;
      return { name, dtype, specText, expression: value, missingCount, firstMissingRow, plan: null };
    }
    const value = `CAST(${x} AS DOUBLE)`;
    const present = `NOT ${missingSql}`;
    const basics = await one(
      connection,
      `SELECT count(*), min(${value}), max(${value}),
         min(file_row_number) FILTER (WHERE isinf(${value})),
         ${dtype === 'int64' || dtype === 'uint64' ? `bool_or(CAST(${value} AS HUGEINT) <> CAST(${x} AS HUGEINT))` : 'false'}
       FROM ${source} WHERE ${present}`
    );
    const count = Number(basics[0]);
    const levelsRow = await one(
      connection,
      `SELECT count(*) FROM (SELECT DISTINCT ${value} FROM ${source} WHERE ${present} LIMIT ${AUTO_MAX_LEVELS + 1})`
    );
    const levels = Number(levelsRow[0]);
    let infinite: { row: number; value: number } | null = null;
    if (basics[3] !== null) {
      const row = Number(basics[3]);
      const found = await one(connection, `SELECT ${value} FROM ${source} WHERE file_row_number = ${row}`);
      infinite = { row, value: Number(found[0]) };
    }
    const needs = summaryNeeds(given, count, levels);
    const ranks = new Map<number, number>();
    if (needs.ranks.length > 0 && infinite === null) {
      await orderStatistics(connection, source, value, present, count, needs.ranks, ranks);
    }
    let std: number | null = null;
    let skewness: number | null = null;
    const integer = !float;
    if (needs.std && infinite === null) {
      const mean = (await streamSum(connection, source, value, present, count, integer)) / count;
      const squares = `(${value} - ${double(mean)}) * (${value} - ${double(mean)})`;
      std = Math.sqrt((await streamSum(connection, source, squares, present, count, false)) / count);
      if (needs.skewness && std > 0) {
        const sigma = std;
        skewness =
          (await streamSum(connection, source, `(${value} - ${double(mean)}) / ${double(sigma)}`, present, count, false, cubeRounded)) /
          count;
      }
    }
    let distinct: { values: Float64Array; counts: Float64Array } | null = null;
    if (needs.distinct) {
      const result = await connection.runAndReadAll(
        `SELECT ${value} AS v, count(*) FROM ${source} WHERE ${present} GROUP BY v ORDER BY v`
      );
      const pairs = result.getRowsJS();
      if (pairs.length > MAX_DISTINCT_ROWS) {
        throw new PolyadicError(
          'limit',
          `Column '${name}' has ${formatCount(pairs.length)} distinct values, above the ${formatCount(MAX_DISTINCT_ROWS)} ` +
            `the DuckDB path takes for ${specText}; choose quantile:K or width:K for it.`,
          { column: name, option: 'bins', value: specText }
        );
      }
      distinct = {
        values: Float64Array.from(pairs, pair => Number(pair[0])),
        counts: Float64Array.from(pairs, pair => Number(pair[1]))
      };
    }
    const summary: INumericSummary = {
      count,
      missingCount,
      firstMissingRow,
      integer,
      rounded: basics[4] === true,
      levels,
      infinite,
      min: Number(basics[1]),
      max: Number(basics[2]),
      orderStatistic: rank => {
        const found = ranks.get(rank);
        if (found === undefined) {
          throw new PolyadicError('internal', `Order statistic ${rank} of column '${name}' was not fetched.`);
        }
        return found;
      },
      std: () => {
        if (std === null) {
          throw new PolyadicError('internal', `The standard deviation of column '${name}' was not computed.`);
        }
        return std;
      },
      skewness: () => {
        if (skewness === null) {
          throw new PolyadicError('internal', `The skewness of column '${name}' was not computed.`);
        }
        return skewness;
      },
      distinct: () => {
        if (distinct === null) {
          throw new PolyadicError('internal', `The distinct values of column '${name}' were not fetched.`);
        }
        return distinct;
      }
    };
    const plan = planNumeric(column, given, specText, MAX_BIN_COUNT, summary);
    if (plan.kind === 'categorical') {
      return { name, dtype, specText, expression: `CASE WHEN ${present} THEN ${value} END`, missingCount, firstMissingRow, plan };
    }
    if (plan.edges.length - 1 > MAX_SQL_BINS) {
      throw new PolyadicError(
        'limit',
        `Column '${name}': ${plan.specText} gives ${formatCount(plan.edges.length - 1)} bins, above the ` +
          `${formatCount(MAX_SQL_BINS)} the DuckDB path bins in SQL; choose fewer bins for this column.`,
        { column: name, option: 'bins', value: specText }
      );
    }
    if (plan.kind === 'edges') {
      const edges = plan.edges;
      const outside = await one(
        connection,
        `SELECT file_row_number, ${value} FROM ${source} WHERE ${present} AND (${value} < ${double(edges[0])} OR ${value} > ${double(edges[edges.length - 1])}) ORDER BY file_row_number LIMIT 1`,
        true
      );
      if (outside.length > 0) {
        const row = Number(outside[0]);
        const bad = Number(outside[1]);
        throw new PolyadicError(
          'input',
          `Column '${name}' has the value ${bad} at row ${row}, outside the edges ` +
            `${edges[0]} … ${edges[edges.length - 1]} of ${plan.specText}; widen the edges or choose ` +
            'another binning.',
          { column: name, row, value: String(bad), option: 'bins' }
        );
      }
    }
    const code = plan.kind === 'uniform' ? uniformCode(value, plan.edges, plan.first, plan.last) : searchCode(value, plan.edges, 0, plan.edges.length - 2);
    return { name, dtype, specText, expression: `CASE WHEN ${present} THEN ${code} END`, missingCount, firstMissingRow, plan };
  }

  /**
   * The bin of `value` by arbitrary edges as binIndexByEdges gives it: the largest i in lo … hi
   * with edges[i] ≤ value (a nested CASE, log2 of the bins deep); the last bin is closed.
   */
  export function searchCode(value: string, edges: number[], lo: number, hi: number): string {
    if (lo >= hi) {
      return String(lo);
    }
    const mid = (lo + hi + 1) >>> 1;
    return `CASE WHEN ${value} >= ${double(edges[mid])} THEN ${searchCode(value, edges, mid, hi)} ELSE ${searchCode(value, edges, lo, mid - 1)} END`;
  }

  /**
   * numpy.histogram's equal-width rule in SQL (as assignUniform): the index from the value, the
   * last bin closed, then one step down or up against the actual edges.
   */
  export function uniformCode(value: string, edges: number[], first: number, last: number): string {
    const count = edges.length - 1;
    const list = `[${edges.map(double).join(', ')}]`;
    const raw = `least(CAST(trunc(((${value} - ${double(first)}) / ${double(last - first)}) * ${count}) AS BIGINT), ${count - 1})`;
    // DuckDB lists are indexed from 1.
    const down = `(${raw} - CASE WHEN ${value} < ${list}[${raw} + 1] THEN 1 ELSE 0 END)`;
    return `(${down} + CASE WHEN ${value} >= ${list}[${down} + 2] AND ${down} <> ${count - 1} THEN 1 ELSE 0 END)`;
  }

  /**
   * Exact order statistics by rank: DuckDB's `quantile_disc` at (rank + ½) / n, each checked by
   * counting (#{x < v} ≤ rank < #{x ≤ v}); a rank that fails the check is read by sorting.
   */
  export async function orderStatistics(
    connection: Connection,
    source: string,
    value: string,
    present: string,
    count: number,
    wanted: number[],
    out: Map<number, number>
  ): Promise<void> {
    const qs = wanted.map(rank => `${(rank + 0.5) / count}`).join(', ');
    const found = await one(connection, `SELECT quantile_disc(${value}, [${qs}]) FROM ${source} WHERE ${present}`);
    const candidates = (found[0] as unknown[]).map(Number);
    const checks = candidates
      .map(v => `count(*) FILTER (WHERE ${value} < ${double(v)}), count(*) FILTER (WHERE ${value} <= ${double(v)})`)
      .join(', ');
    const counts = (await one(connection, `SELECT ${checks} FROM ${source} WHERE ${present}`)).map(Number);
    for (let i = 0; i < wanted.length; i++) {
      const rank = wanted[i];
      if (counts[2 * i] <= rank && rank < counts[2 * i + 1]) {
        out.set(rank, candidates[i]);
      } else {
        const sorted = await one(connection, `SELECT ${value} AS v FROM ${source} WHERE ${present} ORDER BY v LIMIT 1 OFFSET ${rank}`);
        out.set(rank, Number(sorted[0]));
      }
    }
  }

  /** numpy's sum of an SQL expression over the present rows in row order, streamed (see stream-sum.ts). */
  export async function streamSum(
    connection: Connection,
    source: string,
    expression: string,
    present: string,
    count: number,
    fromIntegers: boolean,
    map?: (v: number) => number
  ): Promise<number> {
    const bindings = await loadBindings();
    const sum = new StreamingNumpySum(count, fromIntegers);
    const result = await connection.stream(`SELECT CAST(${expression} AS DOUBLE) FROM ${source} WHERE ${present}`);
    const buffer = new Float64Array(4096);
    for (;;) {
      const chunk = await result.fetchChunk();
      if (!chunk || chunk.rowCount === 0) {
        break;
      }
      const vector = bindings.data_chunk_get_vector(chunk.chunk, 0);
      const validity = bindings.vector_get_validity(vector, Math.ceil(chunk.rowCount / 64) * 8);
      // no mask (null at run time): every row valid
      for (let i = 0; validity !== null && i < Math.min(chunk.rowCount, validity.length * 8); i++) {
        if ((validity[i >> 3] & (1 << (i & 7))) === 0) {
          throw new PolyadicError('internal', 'DuckDB gave a NULL among the present values of a column.');
        }
      }
      const doubles = bindings.vector_get_data(vector, chunk.rowCount * 8);
      // DuckDB's DOUBLE vector, read in place (one chunk's typed array, no value-by-value reading)
      const column = new Float64Array(doubles.buffer, doubles.byteOffset, chunk.rowCount);
      if (map) {
        const values = column.length <= buffer.length ? buffer.subarray(0, column.length) : new Float64Array(column.length);
        for (let i = 0; i < column.length; i++) {
          values[i] = map(column[i]);
        }
        sum.push(values);
      } else {
        sum.push(column);
      }
    }
    return sum.result();
  }

  /** The distinct joint rows of the binned columns and their counts. */
  export async function groupRows(
    connection: Connection,
    source: string,
    columns: IColumnPlan[],
    maxDistinctRows: number
  ): Promise<{ keys: unknown[][]; weights: Int32Array } | null> {
    const selects = columns.map((column, i) => `${column.expression} AS c${i}`).join(', ');
    const groups = columns.map((_column, i) => `c${i}`).join(', ');
    const result = await connection.stream(`SELECT ${selects}, count(*) AS n FROM ${source} GROUP BY ${groups}`);
    const keys: unknown[][] = columns.map(() => []);
    const weights: number[] = [];
    for (;;) {
      const chunk = await result.fetchChunk();
      if (!chunk || chunk.rowCount === 0) {
        break;
      }
      const data = chunk.getColumns();
      for (let c = 0; c < columns.length; c++) {
        for (const item of data[c]) {
          keys[c].push(item);
        }
      }
      for (const n of data[columns.length]) {
        weights.push(Number(n));
      }
      if (weights.length > maxDistinctRows) {
        return null;
      }
    }
    return { keys, weights: Int32Array.from(weights) };
  }

  /**
   * The binned columns over the distinct rows: categories mapped to codes in the engine's order
   * (code points for text, ascending numbers), equal joint rows merged, and the warnings of the
   * in-memory binning from weighted counts.
   */
  export function binnedColumns(
    columns: IColumnPlan[],
    grouped: { keys: unknown[][]; weights: Int32Array }
  ): IBinnedColumn[] {
    const distinct = grouped.weights.length;
    const binned = columns.map((column, c) => {
      const keys = grouped.keys[c];
      const codes = new Int32Array(distinct).fill(-1);
      let bins: number;
      const binning: IBinnedColumn['binning'] = {
        name: column.name,
        bins: 0,
        binning: { method: column.plan?.method ?? 'categorical', spec: column.specText }
      };
      if (column.plan === null) {
        const texts = [...new Set(keys.filter(key => key !== null).map(String))].sort(compareCodePoints);
        const rank = new Map(texts.map((text, i) => [text, i]));
        keys.forEach((key, i) => {
          if (key !== null) {
            codes[i] = rank.get(String(key)) as number;
          }
        });
        bins = texts.length;
        binning.binning.categories = texts;
      } else if (column.plan.kind === 'categorical') {
        const codeOf = new Map<number, number>();
        column.plan.values.forEach((value, code) => codeOf.set(value, code));
        keys.forEach((key, i) => {
          if (key !== null) {
            codes[i] = codeOf.get(Number(key)) as number;
          }
        });
        bins = column.plan.values.length;
        binning.binning.categories = column.plan.categories;
      } else {
        keys.forEach((key, i) => {
          if (key !== null) {
            codes[i] = Number(key);
          }
        });
        bins = column.plan.edges.length - 1;
        binning.binning.edges = column.plan.edges;
      }
      binning.bins = bins;
      return { name: column.name, codes, bins, binning, missingCount: column.missingCount, firstMissingRow: column.firstMissingRow, warnings: [...(column.plan?.warnings ?? [])] };
    });
    const { columns: merged, weights } = mergeRows(binned, grouped.weights);
    merged.forEach((column, c) => {
      const occupiedWeights = new Float64Array(column.bins);
      column.codes.forEach((code, i) => {
        if (code >= 0) {
          occupiedWeights[code] += weights[i];
        }
      });
      let occupied = 0;
      let present = 0;
      occupiedWeights.forEach(w => {
        occupied += w > 0 ? 1 : 0;
        present += w;
      });
      const plan = columns[c].plan;
      if (plan !== null) {
        const warning = mergedLevelsWarning(column.name, plan, occupied);
        if (warning) {
          column.warnings.push(warning);
        }
      }
      const categorical = column.binning.binning.method === 'categorical';
      // As many occupied codes as present rows means each weight is 1: an identifier.
      const warning = occupancyWarning(column.name, categorical, occupied, present);
      if (warning) {
        column.warnings.push(warning);
      }
    });
    grouped.weights = weights;
    return merged;
  }

  /** Merge distinct rows whose codes coincide after mapping (e.g. −0 and 0), adding their weights. */
  function mergeRows(columns: IBinnedColumn[], weights: Int32Array): { columns: IBinnedColumn[]; weights: Int32Array } {
    const index = new Map<string, number>();
    const keep: number[] = [];
    const merged: number[] = [];
    for (let i = 0; i < weights.length; i++) {
      const key = columns.map(column => column.codes[i]).join(',');
      const at = index.get(key);
      if (at === undefined) {
        index.set(key, keep.length);
        keep.push(i);
        merged.push(weights[i]);
      } else {
        merged[at] += weights[i];
      }
    }
    return {
      columns: columns.map(column => ({ ...column, codes: Int32Array.from(keep, i => column.codes[i]) })),
      weights: Int32Array.from(merged)
    };
  }

  /**
   * The fallback past the cap (see the file comment): each column's binning and warnings from
   * its own `GROUP BY`, the missing-value policy from the columns' counts (`drop` counts the
   * complete rows in SQL), then every multiplet's cell counts by `GROUPING SETS`, a batch of
   * sets per query.
   */
  export async function countEachMultiplet(
    connection: Connection,
    source: string,
    columns: IColumnPlan[],
    rows: number,
    missing: MissingPolicy,
    resolved: IResolvedOptions,
    limits: IDuckDBLimits
  ): Promise<{ prepared: IWeightedCodes; lattice: ILattice; queries: number }> {
    const binned: IBinnedColumn[] = [];
    for (const column of columns) {
      const marginal = await groupRows(connection, source, [column], Number.MAX_SAFE_INTEGER);
      binned.push(binnedColumns([column], marginal as { keys: unknown[][]; weights: Int32Array })[0]);
    }
    // The policy on columns without rows: it reads only their counts (and `drop` is done in SQL).
    const shape = applyMissingPolicy(
      binned.map(column => ({ ...column, codes: new Int32Array(0), missingCount: missing === 'drop' ? 0 : column.missingCount })),
      missing
    );
    const complete = columns.map((_column, i) => `c${i} IS NOT NULL`).join(' AND ');
    const selects = columns.map((column, i) => `${column.expression} AS c${i}`).join(', ');
    const binnedRows = `(SELECT ${selects} FROM ${source})` + (missing === 'drop' ? ` WHERE ${complete}` : '');
    const warnings = binned.flatMap(column => column.warnings);
    let rowsUsed = rows;
    if (missing === 'drop' && columns.some(column => column.missingCount > 0)) {
      rowsUsed = Number((await one(connection, `SELECT count(*) FROM ${binnedRows}`))[0]);
      if (rowsUsed === 0) {
        throw nothingLeftError(rows, columns);
      }
      warnings.push(droppedRowsWarning(rows, rowsUsed));
    }
    const lattice = new CellCountLattice(shape.bins, rowsUsed, resolved.maxOrder, resolved.estimator);
    const multiplets = lattice.multiplets();
    const perQuery = limits.setsPerQuery ?? GROUPING_SETS_PER_QUERY;
    let queries = 0;
    for (let start = 0; start < multiplets.length; start += perQuery) {
      await countBatch(connection, binnedRows, multiplets.slice(start, start + perQuery), lattice);
      queries++;
    }
    const prepared: IWeightedCodes = {
      names: shape.names,
      codes: columns.map(() => new Int32Array(0)),
      bins: shape.bins,
      binnings: shape.binnings,
      rows,
      rowsUsed,
      rowIndex: null,
      warnings,
      weights: new Int32Array(0)
    };
    return { prepared, lattice: lattice.result(), queries };
  }

  /**
   * One query of the fallback: the occupied cells' counts of each multiplet in `batch`, told
   * apart by GROUPING() over the batch's columns (a bit set, highest first, for each column a
   * set leaves out).
   */
  async function countBatch(
    connection: Connection,
    binnedRows: string,
    batch: IMultipletToCount[],
    lattice: CellCountLattice
  ): Promise<void> {
    const used = [...new Set(batch.flatMap(multiplet => multiplet.members))].sort((a, b) => a - b);
    const maskOf = (members: number[]): string => {
      let mask = 0n;
      used.forEach((column, p) => {
        if (!members.includes(column)) {
          mask |= 1n << BigInt(used.length - 1 - p);
        }
      });
      return String(mask);
    };
    const sets = batch.map(multiplet => `(${multiplet.members.map(c => `c${c}`).join(', ')})`).join(', ');
    const result = await connection.stream(
      `SELECT GROUPING(${used.map(c => `c${c}`).join(', ')}) AS g, count(*) AS n FROM ${binnedRows} ` +
        `GROUP BY GROUPING SETS (${sets})`
    );
    const counts = new Map<string, number[]>(batch.map(multiplet => [maskOf(multiplet.members), []]));
    for (;;) {
      const chunk = await result.fetchChunk();
      if (!chunk || chunk.rowCount === 0) {
        break;
      }
      const [g, n] = chunk.getColumns();
      for (let i = 0; i < g.length; i++) {
        const cells = counts.get(String(g[i]));
        if (cells === undefined) {
          throw new PolyadicError('internal', `DuckDB gave the grouping ${String(g[i])}, which no multiplet of the batch has.`);
        }
        cells.push(Number(n[i]));
      }
    }
    for (const multiplet of batch) {
      lattice.record(multiplet, counts.get(maskOf(multiplet.members)) as number[]);
    }
  }

  /** The first row of a query (an empty array when `optional` and there is none). */
  export async function one(connection: Connection, sql: string, optional = false): Promise<unknown[]> {
    const result = await connection.runAndReadAll(sql);
    const rows = result.getRowsJS();
    if (rows.length === 0) {
      if (optional) {
        return [];
      }
      throw new PolyadicError('internal', 'A DuckDB query gave no row.');
    }
    return rows[0] as unknown[];
  }
}
