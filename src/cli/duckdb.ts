/**
 * `polyadic analyze FILE --via duckdb`: DuckDB (its Node binding, embedded and out of core) scans
 * a Parquet file (or a CSV/TSV file typed once into a temporary Parquet file, see duckdb-csv.ts), bins every selected column in SQL with the edges the in-memory engine would
 * compute, and `GROUP BY`s the binned columns into distinct joint rows with their counts. Node
 * never holds the file's rows: it receives column summaries (counts, extremes, exact order
 * statistics, and for scott/doane the column streamed in chunks for numpy's pairwise sums) and
 * the weighted distinct rows.
 *
 * Exactness: the edges come from the engine's own planNumeric on an exact summary (order
 * statistics from bucket counts and the sorted values of the buckets holding the ranks, see
 * Private.rankedValues, and numpy's interpolation is ours); a value's bin is numpy's rule
 * evaluated in SQL on IEEE doubles, with the edges written as the shortest decimal that reads
 * back as the same double.
 *
 * Past the cap on distinct rows, an order-limited run counts each multiplet on its own instead:
 * `GROUP BY … GROUPING SETS`, one set per multiplet and a batch of sets per query, gives every
 * multiplet's occupied cells' counts, and the engine's CellCountLattice makes the same lattice
 * as the walk from them. A full lattice needs the joint of every column, so it stops at the cap.
 */

import * as path from 'path';

import type { IBinnedColumn } from '../engine/binning/types';
import { CellCountLattice, IMultipletToCount } from '../engine/aggregate/cells';
import {
  binnedColumns,
  IColumnScanner,
  IOutsideValue,
  IScanDetailRequest,
  IScanGroupKey,
  IScannedColumnDetails,
  IScannedColumnFacts,
  IScannedFacts,
  IScannedGroups,
  IScanPlan,
  MAX_DISTINCT_ROWS,
  MAX_SCAN_BINS,
  planScan,
  ScannedKeys,
  ScannedKind,
  weightedCodes
} from '../engine/aggregate/scan';
import { StreamingNumpySum } from '../engine/aggregate/stream-sum';
import type { IWeightedCodes } from '../engine/aggregate/weighted';
import { analyzeCodes, IResolvedOptions, resolveOptions } from '../engine/analyze';
import { applyMissingPolicy } from '../engine/binning';
import { droppedRowsWarning, nothingLeftError } from '../engine/binning/missing';
import { AUTO_MAX_LEVELS } from '../engine/binning/spec';
import type { ILattice } from '../engine/lattice';
import { errorMessage, PolyadicError } from '../engine/errors';
import { cubeRounded } from '../engine/floatmath';
import { unknownColumn } from '../engine/table';
import { formatCount } from '../engine/text';
import type { IAnalysisResult, IAnalyzeOptions, MissingPolicy } from '../engine/types';
import { delimitedHeader, duckdbFormatOf, stageDelimitedText } from './duckdb-csv';

/** The npm package and version the DuckDB path uses (package.json pins the same). */
export const DUCKDB_PACKAGE = '@duckdb/node-api@1.5.6-r.1';

/** Most distinct joint rows the DuckDB path hands to the walk (the scan driver's cap); above it the run stops and says so. */
export { MAX_DISTINCT_ROWS };

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
  /** Default {@link RANK_BUCKETS}. */
  rankBuckets?: number;
  /** Default {@link RANK_FETCH_LIMIT}. */
  rankFetchLimit?: number;
  /** Default {@link LEVEL_SAMPLE_ROWS}. */
  levelSampleRows?: number;
}

/**
 * Equal-width buckets over a column's range for its exact order statistics (our choice): one
 * `GROUP BY` of the bucket counts each bucket's values and their extremes; a wanted rank is then
 * its bucket's minimum or maximum, or the values of the few buckets holding ranks are fetched and
 * sorted in Node. DuckDB's `quantile_disc` instead holds and sorts the whole column (400 MB and
 * tens of seconds for 5·10^7 doubles).
 */
export const RANK_BUCKETS = 65_536;

/**
 * Most values fetched into Node to sort for the order statistics of one column (our choice:
 * 8 MB of doubles); a bucket above it (a heavy cluster of distinct values) is ranked inside
 * DuckDB by `quantile_disc` over that bucket alone.
 */
export const RANK_FETCH_LIMIT = 1 << 20;

/** Rows of the start of a file whose distinct values decide most columns' level counts at once (our choice). */
export const LEVEL_SAMPLE_ROWS = 65_536;

/** Most edges of one column binned in SQL (a nested CASE of that many comparisons): the scan driver's cap. */
export const MAX_SQL_BINS = MAX_SCAN_BINS;

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
 * Bin and aggregate the selected columns of a Parquet file in DuckDB (see the file comment):
 * the engine's scan driver (src/engine/aggregate/scan.ts) plans and bins through a
 * {@link DuckDBScanner}; past the cap, the GROUPING SETS fallback. Options as for `analyze`;
 * errors name the column, row, spec or limit at fault.
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
    const engineVersion = duckdb.version();
    const scanner = new DuckDBScanner(connection, source, schema, path.basename(filePath), engineVersion, limits);
    const missing: MissingPolicy = options.missing ?? 'drop';
    const plan = await planScan(scanner, selected, options);
    const grouped = await scanner.group(
      plan.columns.map(column => column.key),
      maxDistinctRows
    );
    if (grouped === null) {
      const resolved = resolveOptions(options, plan.columns.length);
      if (resolved.maxOrder >= plan.columns.length) {
        throw new PolyadicError(
          'limit',
          `The selected columns have more than ${formatCount(maxDistinctRows)} distinct binned rows, above what the ` +
            'DuckDB path hands to the walk, and a full lattice needs them all; select fewer columns, use fewer bins, ' +
            'or limit the order with --max-order (each multiplet is then counted in DuckDB on its own).',
          { option: '--via', value: 'duckdb' }
        );
      }
      const counted = await Private.countEachMultiplet(scanner, plan, missing, resolved, limits);
      return { ...counted, names, engineVersion };
    }
    const prepared = weightedCodes(plan, grouped, missing);
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

/**
 * DuckDB as a scanner of a Parquet file (src/engine/aggregate/scan.ts): each step is SQL over
 * `read_parquet` with each row's number in the file; the engine's driver decides the binning.
 */
export class DuckDBScanner implements IColumnScanner {
  /** A scanner over `source` (a table function) whose columns and DuckDB types are `schema`. */
  constructor(
    connection: Connection,
    source: string,
    schema: { name: string; type: string }[],
    readonly label: string,
    engineVersion: string,
    limits: IDuckDBLimits = {}
  ) {
    this._connection = connection;
    this._source = source;
    this._schema = schema;
    this._engineVersion = engineVersion;
    this._limits = limits;
  }

  /**
   * Counts, missing rows, extremes and the first ±Inf of every column in one scan of the file;
   * levels (distinct values up to AUTO_MAX_LEVELS + 1) from the start of the file, checked
   * against the whole file (see {@link Private.levels}).
   */
  async facts(columns: string[]): Promise<IScannedFacts> {
    const sql = columns.map(name => this._sql(name));
    const parts = ['count(*)'];
    sql.forEach(({ x, value, missing, present, dtype, kind }) => {
      parts.push(`count(*) FILTER (WHERE ${missing})`, `min(file_row_number) FILTER (WHERE ${missing})`);
      if (kind === 'numeric') {
        const rounded = dtype === 'int64' || dtype === 'uint64' ? `bool_or(CAST(${value} AS HUGEINT) <> CAST(${x} AS HUGEINT)) FILTER (WHERE ${present})` : 'false';
        parts.push(
          `min(${value}) FILTER (WHERE ${present})`,
          `max(${value}) FILTER (WHERE ${present})`,
          `min(file_row_number) FILTER (WHERE ${present} AND isinf(${value}))`,
          rounded
        );
      }
    });
    const answer = await Private.one(this._connection, `SELECT ${parts.join(', ')} FROM ${this._source}`);
    const rows = Number(answer[0]);
    let at = 1;
    const found: IScannedColumnFacts[] = [];
    const numeric: number[] = [];
    for (let i = 0; i < columns.length; i++) {
      const { dtype, kind, float } = sql[i];
      const missingCount = Number(answer[at]);
      const firstMissing = answer[at + 1];
      at += 2;
      const base = {
        name: columns[i],
        dtype,
        kind: (kind === 'numeric' ? 'numeric' : dtype === 'bool' ? 'bool' : 'string') as ScannedKind,
        missingCount,
        firstMissingRow: firstMissing === null ? -1 : Number(firstMissing),
        count: rows - missingCount
      };
      if (kind !== 'numeric') {
        found.push({ ...base, levels: 0, integer: dtype === 'bool', rounded: false, infinite: null, min: null, max: null });
        continue;
      }
      const [min, max, firstInfinite, rounded] = answer.slice(at, at + 4);
      at += 4;
      if (missingCount === rows) {
        found.push({ ...base, levels: 0, integer: false, rounded: false, infinite: null, min: null, max: null });
        continue;
      }
      let infinite: { row: number; value: number } | null = null;
      if (firstInfinite !== null) {
        const row = Number(firstInfinite);
        const value = await Private.one(this._connection, `SELECT ${sql[i].value} FROM ${this._source} WHERE file_row_number = ${row}`);
        infinite = { row, value: Number(value[0]) };
      }
      numeric.push(found.length);
      found.push({ ...base, levels: 0, integer: !float, rounded: rounded === true, infinite, min: Number(min), max: Number(max) });
    }
    const levels = await Private.levels(
      this._connection,
      this._source,
      numeric.map(i => sql[i]),
      this._limits.levelSampleRows ?? LEVEL_SAMPLE_ROWS
    );
    numeric.forEach((i, k) => {
      found[i].levels = levels[k];
    });
    for (const column of found) {
      this._facts.set(column.name, column);
    }
    return { rows, engine: { name: 'duckdb', version: this._engineVersion }, columns: found };
  }

  /** Exact order statistics, numpy's std and skewness (streamed sums), distinct values with counts. */
  async details(requests: IScanDetailRequest[]): Promise<IScannedColumnDetails[]> {
    const answers: IScannedColumnDetails[] = [];
    for (const request of requests) {
      const { value, present, float } = this._sql(request.name);
      const facts = this._facts.get(request.name) ?? (await this.facts([request.name])).columns[0];
      const count = facts.count;
      const ranks = new Map<number, number>();
      if (request.ranks.length > 0) {
        await Private.rankedValues(this._connection, this._source, value, present, facts, request.ranks, ranks, {
          buckets: this._limits.rankBuckets ?? RANK_BUCKETS,
          fetchLimit: this._limits.rankFetchLimit ?? RANK_FETCH_LIMIT
        });
      }
      let std: number | null = null;
      let skewness: number | null = null;
      if (request.std) {
        const mean = (await Private.streamSum(this._connection, this._source, value, present, count, !float)) / count;
        const squares = `(${value} - ${Private.double(mean)}) * (${value} - ${Private.double(mean)})`;
        std = Math.sqrt((await Private.streamSum(this._connection, this._source, squares, present, count, false)) / count);
        if (request.skewness && std > 0) {
          const deviation = `(${value} - ${Private.double(mean)}) / ${Private.double(std)}`;
          skewness = (await Private.streamSum(this._connection, this._source, deviation, present, count, false, cubeRounded)) / count;
        }
      }
      let distinct: IScannedColumnDetails['distinct'] = null;
      if (request.distinct) {
        const result = await this._connection.runAndReadAll(
          `SELECT ${value} AS v, count(*) FROM ${this._source} WHERE ${present} GROUP BY v ORDER BY v`
        );
        const pairs = result.getRowsJS();
        distinct = {
          values: Float64Array.from(pairs, pair => Number(pair[0])),
          counts: Float64Array.from(pairs, pair => Number(pair[1]))
        };
      }
      answers.push({ name: request.name, orderStatistics: request.ranks.map(rank => ranks.get(rank) as number), std, skewness, distinct });
    }
    return answers;
  }

  /** The first value outside [lo, hi] in file order. */
  async firstOutside(name: string, lo: number, hi: number): Promise<IOutsideValue | null> {
    const { value, present } = this._sql(name);
    const outside = await Private.one(
      this._connection,
      `SELECT file_row_number, ${value} FROM ${this._source} WHERE ${present} AND (${value} < ${Private.double(lo)} OR ${value} > ${Private.double(hi)}) ORDER BY file_row_number LIMIT 1`,
      true
    );
    return outside.length > 0 ? { row: Number(outside[0]), value: Number(outside[1]) } : null;
  }

  /**
   * The SQL giving a key: the bin code (numpy's equal-width rule for uniform edges, else the
   * search over the edges; the driver refused values outside `edges:` first), the number
   * itself, or the text ('true'/'false' for booleans); NULL when missing.
   */
  expression(key: IScanGroupKey): string {
    const { x, value, present, dtype, kind } = this._sql(key.name);
    if (kind !== 'numeric') {
      return dtype === 'bool' ? `CASE WHEN ${x} THEN 'true' WHEN NOT ${x} THEN 'false' END` : x;
    }
    if (key.edges === null) {
      return `CASE WHEN ${present} THEN ${value} END`;
    }
    const code = key.uniform
      ? Private.uniformCode(value, key.edges, key.uniform.first, key.uniform.last)
      : Private.searchCode(value, key.edges, 0, key.edges.length - 2);
    return `CASE WHEN ${present} THEN ${code} END`;
  }

  /** `GROUP BY` of the keys' SQL expressions, counting rows; null past `maxDistinctRows`. */
  async group(keys: IScanGroupKey[], maxDistinctRows: number): Promise<IScannedGroups | null> {
    const selects = keys.map((key, i) => `${this.expression(key)} AS c${i}`).join(', ');
    const groups = keys.map((_key, i) => `c${i}`).join(', ');
    const result = await this._connection.stream(`SELECT ${selects}, count(*) AS n FROM ${this._source} GROUP BY ${groups}`);
    const values: unknown[][] = keys.map(() => []);
    const weights: number[] = [];
    for (;;) {
      const chunk = await result.fetchChunk();
      if (!chunk || chunk.rowCount === 0) {
        break;
      }
      const data = chunk.getColumns();
      for (let c = 0; c < keys.length; c++) {
        for (const item of data[c]) {
          values[c].push(item);
        }
      }
      for (const n of data[keys.length]) {
        weights.push(Number(n));
      }
      if (weights.length > maxDistinctRows) {
        return null;
      }
    }
    return { keys: keys.map((key, c) => this._keys(key, values[c])), weights: Int32Array.from(weights) };
  }

  /** The rows' binned keys as a subquery (columns c0, c1, …), for the GROUPING SETS fallback. */
  binnedRows(keys: IScanGroupKey[]): string {
    return `(SELECT ${keys.map((key, i) => `${this.expression(key)} AS c${i}`).join(', ')} FROM ${this._source})`;
  }

  /** DuckDB's answer to one SQL query (its first row). */
  one(sql: string, optional = false): Promise<unknown[]> {
    return Private.one(this._connection, sql, optional);
  }

  /** DuckDB's connection (the fallback streams from it). */
  get connection(): Connection {
    return this._connection;
  }

  /** The SQL pieces of a column: the name, the value as DOUBLE, the missing and present tests. */
  private _sql(name: string): {
    x: string;
    value: string;
    missing: string;
    present: string;
    float: boolean;
    dtype: string;
    kind: 'numeric' | 'categorical';
  } {
    const column = this._schema.find(c => c.name === name);
    if (column === undefined) {
      throw unknownColumn(name, this._schema.map(c => c.name));
    }
    const { dtype, kind } = Private.dtypeOf(name, column.type);
    const x = Private.quoteName(name);
    const float = dtype === 'float64' || dtype === 'float32';
    const missing = float ? `(${x} IS NULL OR isnan(${x}))` : `(${x} IS NULL)`;
    return { x, value: `CAST(${x} AS DOUBLE)`, missing, present: `NOT ${missing}`, float, dtype, kind };
  }

  /** One key column from DuckDB's values (codes, numbers or texts; NULL missing). */
  private _keys(key: IScanGroupKey, values: unknown[]): ScannedKeys {
    const valid = Uint8Array.from(values, v => (v === null ? 0 : 1));
    if (this._sql(key.name).kind !== 'numeric') {
      return { kind: 'texts', values: values.map(v => (v === null ? null : String(v))) };
    }
    if (key.edges === null) {
      return { kind: 'numbers', values: Float64Array.from(values, v => (v === null ? 0 : Number(v))), valid };
    }
    return { kind: 'bins', codes: Int32Array.from(values, v => (v === null ? -1 : Number(v))), valid };
  }

  private _connection: Connection;
  private _source: string;
  private _schema: { name: string; type: string }[];
  private _engineVersion: string;
  private _limits: IDuckDBLimits;
  /** The facts of each column this scanner has read (details need their counts and extremes). */
  private _facts = new Map<string, IScannedColumnFacts>();
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

  /** A column's value as SQL: {@link double}, and ±Inf (a value, never an edge) as DuckDB spells it. */
  export function valueConstant(value: number): string {
    return Number.isFinite(value) ? double(value) : `CAST('${value > 0 ? 'inf' : '-inf'}' AS DOUBLE)`;
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

  /** The SQL pieces of a column that {@link levels} and {@link rankedValues} read. */
  type ColumnSql = { value: string; present: string };

  /**
   * Each numeric column's distinct values, counted up to AUTO_MAX_LEVELS + 1, without a hash
   * of the whole column: the distinct values among the first `sampleRows` rows decide a column
   * that has more than AUTO_MAX_LEVELS of them there; for the others, one scan of the file
   * counts the values outside the sample's (none: the sample's count is the column's); a column
   * with values outside them is counted by `SELECT DISTINCT … LIMIT` over the file.
   */
  export async function levels(connection: Connection, source: string, columns: ColumnSql[], sampleRows: number): Promise<number[]> {
    if (columns.length === 0) {
      return [];
    }
    const cap = AUTO_MAX_LEVELS + 1;
    const sample = `(SELECT * FROM ${source} LIMIT ${sampleRows})`;
    const seen = (
      await one(
        connection,
        `SELECT ${columns.map(({ value, present }) => `count(DISTINCT ${value}) FILTER (WHERE ${present})`).join(', ')} FROM ${sample}`
      )
    ).map(Number);
    const found = seen.map(n => Math.min(n, cap));
    const few = columns.flatMap((_column, i) => (seen[i] < cap ? [i] : []));
    if (few.length === 0) {
      return found;
    }
    const lists = await one(
      connection,
      `SELECT ${few.map(i => `list(DISTINCT ${columns[i].value}) FILTER (WHERE ${columns[i].present})`).join(', ')} FROM ${sample}`
    );
    const outside = (
      await one(
        connection,
        `SELECT ${few
          .map((i, k) => {
            const known = ((lists[k] as unknown[] | null) ?? []).map(v => valueConstant(Number(v)));
            const test = known.length === 0 ? '' : ` AND ${columns[i].value} NOT IN (${known.join(', ')})`;
            return `count(*) FILTER (WHERE ${columns[i].present}${test})`;
          })
          .join(', ')} FROM ${source}`
      )
    ).map(Number);
    for (let k = 0; k < few.length; k++) {
      if (outside[k] > 0) {
        const { value, present } = columns[few[k]];
        const counted = await one(connection, `SELECT count(*) FROM (SELECT DISTINCT ${value} FROM ${source} WHERE ${present} LIMIT ${cap})`);
        found[few[k]] = Number(counted[0]);
      }
    }
    return found;
  }

  /**
   * Exact order statistics by rank (0-based among the present values) without sorting the
   * column: the values' range in `buckets` equal-width buckets (the bucket computed in SQL, the
   * same expression selecting a bucket's values again), each bucket's count, minimum and
   * maximum from one `GROUP BY`; a rank is its bucket's minimum or maximum when it is the
   * bucket's first or last, the value when the bucket holds one; otherwise the values of the
   * buckets holding ranks are fetched (up to `fetchLimit` of them) and sorted here, and a bucket
   * above that is ranked inside DuckDB ({@link orderStatistics} over the bucket).
   */
  export async function rankedValues(
    connection: Connection,
    source: string,
    value: string,
    present: string,
    facts: { count: number; min: number | null; max: number | null },
    wanted: number[],
    out: Map<number, number>,
    limits: { buckets: number; fetchLimit: number }
  ): Promise<void> {
    const { min, max, count } = facts;
    if (min === null || max === null) {
      throw new PolyadicError('internal', 'Order statistics were asked of a column without values.');
    }
    if (min === max) {
      wanted.forEach(rank => out.set(rank, min));
      return;
    }
    const width = (max - min) / limits.buckets;
    if (!(width > 0 && Number.isFinite(width))) {
      await orderStatistics(connection, source, value, present, count, wanted, out);
      return;
    }
    const bucket = `CAST(least(greatest(floor((${value} - ${double(min)}) / ${double(width)}), 0), ${limits.buckets - 1}) AS INTEGER)`;
    // each present value with its bucket (columns b, v), for the counts and again for the fetch
    const bucketed = `(SELECT ${bucket} AS b, ${value} AS v FROM ${source} WHERE ${present})`;
    const rows = (await connection.runAndReadAll(`SELECT b, count(*), min(v), max(v) FROM ${bucketed} GROUP BY b ORDER BY b`)).getRowsJS();
    // each wanted rank's bucket and its rank there
    const toFetch = new Map<number, { below: number; count: number; ranks: number[] }>();
    let below = 0;
    let r = 0;
    const sorted = [...wanted].sort((a, b) => a - b);
    for (const row of rows) {
      const n = Number(row[1]);
      const lo = Number(row[2]);
      const hi = Number(row[3]);
      while (r < sorted.length && sorted[r] < below + n) {
        const rank = sorted[r++];
        const local = rank - below;
        if (lo === hi || local === 0) {
          out.set(rank, lo);
        } else if (local === n - 1) {
          out.set(rank, hi);
        } else {
          const entry = toFetch.get(Number(row[0])) ?? { below, count: n, ranks: [] };
          entry.ranks.push(rank);
          toFetch.set(Number(row[0]), entry);
        }
      }
      below += n;
    }
    if (r < sorted.length || below !== count) {
      throw new PolyadicError('internal', `DuckDB's bucket counts of a column add up to ${below} values, not ${count}.`);
    }
    const light: number[] = [];
    let fetched = 0;
    for (const [b, entry] of [...toFetch].sort((x, y) => x[1].count - y[1].count)) {
      if (fetched + entry.count <= limits.fetchLimit) {
        light.push(b);
        fetched += entry.count;
      } else {
        // a heavy bucket: ranked inside DuckDB over its own values
        const local = new Map<number, number>();
        await orderStatistics(connection, source, value, `${present} AND ${bucket} = ${b}`, entry.count, entry.ranks.map(rank => rank - entry.below), local);
        entry.ranks.forEach(rank => out.set(rank, local.get(rank - entry.below) as number));
      }
    }
    if (light.length > 0) {
      const values = new Map<number, number[]>(light.map(b => [b, []]));
      const result = await connection.runAndReadAll(
        `SELECT b, v FROM ${bucketed} WHERE b IN (${light.join(', ')})`
      );
      for (const [b, v] of result.getRowsJS()) {
        values.get(Number(b))!.push(Number(v));
      }
      for (const b of light) {
        const entry = toFetch.get(b)!;
        const ordered = Float64Array.from(values.get(b)!).sort();
        if (ordered.length !== entry.count) {
          throw new PolyadicError('internal', `DuckDB gave ${ordered.length} values of a bucket it counted ${entry.count} in.`);
        }
        entry.ranks.forEach(rank => out.set(rank, ordered[rank - entry.below]));
      }
    }
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

  /**
   * The fallback past the cap (see the file comment): each column's binning and warnings from
   * its own `GROUP BY`, the missing-value policy from the columns' counts (`drop` counts the
   * complete rows in SQL), then every multiplet's cell counts by `GROUPING SETS`, a batch of
   * sets per query.
   */
  export async function countEachMultiplet(
    scanner: DuckDBScanner,
    plan: IScanPlan,
    missing: MissingPolicy,
    resolved: IResolvedOptions,
    limits: IDuckDBLimits
  ): Promise<{ prepared: IWeightedCodes; lattice: ILattice; queries: number }> {
    const columns = plan.columns;
    const rows = plan.rows;
    const binned: IBinnedColumn[] = [];
    for (const column of columns) {
      const marginal = await scanner.group([column.key], Number.MAX_SAFE_INTEGER);
      binned.push(binnedColumns([column], marginal as IScannedGroups).columns[0]);
    }
    // The policy on columns without rows: it reads only their counts (and `drop` is done in SQL).
    const shape = applyMissingPolicy(
      binned.map(column => ({ ...column, codes: new Int32Array(0), missingCount: missing === 'drop' ? 0 : column.missingCount })),
      missing
    );
    const complete = columns.map((_column, i) => `c${i} IS NOT NULL`).join(' AND ');
    const binnedRows = scanner.binnedRows(columns.map(column => column.key)) + (missing === 'drop' ? ` WHERE ${complete}` : '');
    const warnings = binned.flatMap(column => column.warnings);
    let rowsUsed = rows;
    if (missing === 'drop' && columns.some(column => column.missingCount > 0)) {
      rowsUsed = Number((await scanner.one(`SELECT count(*) FROM ${binnedRows}`))[0]);
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
      await countBatch(scanner.connection, binnedRows, multiplets.slice(start, start + perQuery), lattice);
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
