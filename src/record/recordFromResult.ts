/**
 * Build the record of a completed analysis from the options it ran with, its result and where
 * its data came from. The panel calls this after every run and hands the record to the store.
 */

import { resolveOptions } from '../engine/analyze';
import { PolyadicError } from '../engine/errors';
import { plural } from '../engine/text';
import type { ColumnView, IAnalysisResult, IAnalyzeOptions, IMultipletRow, MissingPolicy } from '../engine/types';
import type { IFingerprint } from './fingerprint';
import type { IScanFingerprint, IWeightedTable } from './scan-fingerprint';
import { newRecordId } from './ids';
import { DEFAULT_SUMMARY_SIZE, evidenceSummaryOf, histogramsOfRows, statisticsSettingsOf, topMultiplets } from './summary';
import {
  FINGERPRINT_ENCODING,
  MAX_LABEL_LENGTH,
  SCAN_FINGERPRINT_ENCODING,
  type IAnalysisRecord,
  type ISampleInfo,
  type ISourceOrigin
} from './types';
import { completeAnalysis, problemsError } from './validate';

/** A scanned source: the engine that binned and grouped it, and the weighted table it gave. */
export interface IRecordScan {
  engine: { name: 'duckdb' | 'spark'; version: string };
  /** The weighted codes the walk took (distinct binned rows after the missing-value policy). */
  table: IWeightedTable;
}

/** Where the analysed data came from. */
export interface IRecordSource {
  /** Dataframe name (kernel variable) or, for the CLI, the file name. */
  frame: string;
  /** The selected columns as the engine read them (name, dtype and kind are recorded). */
  columns: readonly Pick<ColumnView, 'name' | 'dtype' | 'kind'>[];
  /**
   * Fingerprint of those columns (`fingerprintColumns`), or for a scanned source of its
   * weighted table (`fingerprintScan`).
   */
  fingerprint: IFingerprint | IScanFingerprint;
  /** The row-cap sample, when the frame was sampled. */
  sample?: ISampleInfo;
  /** Present when another engine scanned the source (the record's origin is then 'scan'). */
  scan?: IRecordScan;
}

/** Everything a record is built from. */
export interface IRecordInput {
  options: IAnalyzeOptions;
  result: IAnalysisResult;
  source: IRecordSource;
  /** Label; default names the frame, the columns, the binning, the estimator, the units and the order. */
  label?: string;
  /** Id; default a new random one. */
  id?: string;
  /** When the analysis ran; default now. */
  created?: Date;
  /** Multiplets kept on each side of the summary; default {@link DEFAULT_SUMMARY_SIZE}. */
  summarySize?: number;
}

/**
 * The record of an analysis, checked against the schema (a failure is a PolyadicError naming
 * the field, e.g. a label that is too long).
 */
export function recordFromResult(input: IRecordInput): IAnalysisRecord {
  const { result, source } = input;
  const selected = result.columns.map(column => column.name);
  const origin = Private.originOf(source, result);
  const digests = 'columns' in source.fingerprint ? source.fingerprint.columns : null;
  const fingerprinted = digests ? digests.map(column => column.name) : selected;
  const read = source.columns.map(column => column.name);
  if (!Private.sameList(selected, fingerprinted) || !Private.sameList(selected, read)) {
    throw new PolyadicError(
      'internal',
      `The fingerprint covers columns [${fingerprinted.join(', ')}] and the source lists [${read.join(', ')}], ` +
        `but the analysis used [${selected.join(', ')}]; they must be the same, in the same order.`
    );
  }
  const missing = resolveOptions(input.options, selected.length).missing;
  const { summary, histograms } = Private.summaryOf(result, input.summarySize ?? DEFAULT_SUMMARY_SIZE);
  const analysis: Record<string, unknown> = {
    id: input.id ?? newRecordId(),
    label: Private.cleanLabel(input.label ?? defaultLabel(source.frame, result, missing)),
    created: (input.created ?? new Date()).toISOString(),
    engine: { name: result.engine.name, version: result.engine.version },
    source: {
      frame: source.frame,
      rows: result.rows,
      columns: source.columns.map((column, i) => ({
        name: column.name,
        dtype: column.dtype,
        kind: column.kind,
        ...(digests ? { sha256: digests[i].sha256 } : {})
      })),
      ...(source.sample ? { sample: { ...source.sample } } : {}),
      fingerprint: { encoding: source.fingerprint.encoding, sha256: source.fingerprint.sha256 },
      origin
    },
    columns: selected,
    binning: result.columns.map(column => ({
      name: column.name,
      method: column.binning.method,
      spec: column.binning.spec,
      bins: column.bins,
      ...(column.binning.edges ? { edges: [...column.binning.edges] } : {}),
      ...(column.binning.categories ? { categories: [...column.binning.categories] } : {}),
      ...(column.binning.missing_code !== undefined ? { missing_code: column.binning.missing_code } : {})
    })),
    missing,
    estimator: result.estimator,
    units: result.units,
    max_order: result.max_order,
    // the settings the engine ran with, not those asked for: a record never claims evidence it lacks
    ...(result.statistics ? { statistics: statisticsSettingsOf(result.statistics) } : {}),
    summary: {
      synergy: summary.synergy,
      redundancy: summary.redundancy,
      multiplet_count: result.multiplet_count,
      rows_used: result.rows_used,
      ...(histograms ? { histograms } : {}),
      ...(result.inadequate_count !== undefined ? { inadequate_count: result.inadequate_count } : {}),
      ...(result.statistics ? { evidence: evidenceSummaryOf(result.statistics) } : {})
    }
  };
  const checked = completeAnalysis(analysis);
  if (!checked.ok) {
    throw problemsError('The analysis cannot be recorded', checked.problems);
  }
  return checked.value;
}

/** Longest list of column names a default label spells out; a longer selection is counted. */
export const LABEL_COLUMN_NAMES = 48;

/**
 * The label of an analysis nobody named: what sets it apart from the other analyses of the
 * frame, i.e. the columns (by name when short, else counted), the binning specs, the estimator,
 * the units, the highest order, and the missing-value policy when it is not the default `drop`:
 * "hostile: a, b, c, d; binning auto; miller-madow, bits; orders up to 4".
 */
export function defaultLabel(frame: string, result: IAnalysisResult, missing: MissingPolicy = 'drop'): string {
  const names = result.columns.map(column => column.name);
  const listed = names.join(', ');
  const columns = Array.from(listed).length <= LABEL_COLUMN_NAMES ? listed : plural(names.length, 'column');
  const specs = [...new Set(result.columns.map(column => column.binning.spec))];
  const binning = specs.length <= 2 ? `binning ${specs.join(' + ')}` : `${specs.length} binnings`;
  const policy = missing === 'drop' ? '' : `; missing as ${missing === 'category' ? 'a category' : 'an error'}`;
  return `${frame}: ${columns}; ${binning}; ${result.estimator}, ${result.units}; orders up to ${result.max_order}${policy}`;
}

/** Module-private helpers. */
namespace Private {
  /** The summary of a result's rows, by their array: a run is recorded after it is compared, from the same rows. */
  const summaries = new WeakMap<
    readonly IMultipletRow[],
    { size: number; maxOrder: number; count: number; summary: ReturnType<typeof topMultiplets>; histograms: ReturnType<typeof histogramsOfRows> }
  >();

  /** The top multiplets and order histograms of `result`, computed once per rows and size. */
  export function summaryOf(
    result: IAnalysisResult,
    size: number
  ): { summary: ReturnType<typeof topMultiplets>; histograms: ReturnType<typeof histogramsOfRows> } {
    const rows = result.multiplets;
    const known = summaries.get(rows);
    if (known !== undefined && known.size === size && known.maxOrder === result.max_order && known.count === result.multiplet_count) {
      // each record owns its summary: a copy of a few dozen small objects
      return structuredClone({ summary: known.summary, histograms: known.histograms });
    }
    const fresh = {
      size,
      maxOrder: result.max_order,
      count: result.multiplet_count,
      summary: topMultiplets(rows, size),
      histograms: histogramsOfRows(rows, result.multiplet_count, result.max_order)
    };
    summaries.set(rows, fresh);
    return structuredClone({ summary: fresh.summary, histograms: fresh.histograms });
  }

  /** The source's origin block, checking that the fingerprint fits it. */
  export function originOf(source: IRecordSource, result: IAnalysisResult): ISourceOrigin {
    const scan = source.scan;
    if (!scan) {
      if (source.fingerprint.encoding !== FINGERPRINT_ENCODING) {
        throw new PolyadicError('internal', `A source read row by row has a ${source.fingerprint.encoding} fingerprint.`);
      }
      return { kind: 'rows' };
    }
    if (source.fingerprint.encoding !== SCAN_FINGERPRINT_ENCODING || !('distinctRows' in source.fingerprint)) {
      throw new PolyadicError('internal', `A scanned source needs a ${SCAN_FINGERPRINT_ENCODING} fingerprint of its weighted table.`);
    }
    let weight = 0;
    scan.table.weights.forEach(w => (weight += w));
    if (weight !== result.rows_used || scan.table.codes.length !== result.columns.length) {
      throw new PolyadicError(
        'internal',
        `The weighted table (${scan.table.codes.length} columns, weights summing to ${weight}) is not the one the analysis ` +
          `walked (${result.columns.length} columns, ${result.rows_used} rows used).`
      );
    }
    return {
      kind: 'scan',
      engine: { name: scan.engine.name, version: scan.engine.version },
      input_rows: result.rows,
      distinct_rows: source.fingerprint.distinctRows
    };
  }

  export function sameList(a: readonly string[], b: readonly string[]): boolean {
    return a.length === b.length && a.every((name, i) => name === b[i]);
  }

  /** One line, trimmed, within the length limit (the schema refuses anything else). */
  export function cleanLabel(label: string): string {
    // eslint-disable-next-line no-control-regex
    const line = label.replace(/[\u0000-\u001f\u007f]+/g, ' ').trim();
    return Array.from(line).slice(0, MAX_LABEL_LENGTH).join('') || 'analysis';
  }
}
