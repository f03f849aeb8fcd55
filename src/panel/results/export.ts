/**
 * Provenance of what the Results section exports. A table's CSV is the CLI's own CSV
 * (`multipletsCsv` of src/results-format.ts) with an `adequacy` column appended and, above it,
 * comment lines `# key: value` that say where the numbers come from: the frame, the record id,
 * the engine, the estimator, the units, each column's binning, the rows used, the filters. Chart
 * images carry the same facts in their subtitle, and every file is named after its frame and
 * record. The layout is documented in README.md ("Exports").
 */
import { formatCount, plural } from '../../engine/text';
import type { IAnalysisResult, MissingPolicy } from '../../engine/types';
import { multipletsCsv } from '../../results-format';
import type { ITableFilter, TableSide } from './table';

/** Where exported results come from. */
export interface IExportSource {
  /** The result exported. */
  result: IAnalysisResult;
  /** Dataframe name in the kernel. */
  frame?: string;
  /** Id of the record of the run (`pd-…`). */
  recordId?: string;
  /** Missing-value policy of the run. */
  missing?: MissingPolicy;
  /** The row-cap sample the run read, when it read one. */
  sample?: { rows: number; originalRows: number; seed: number };
}

/** One comment line of an export: `# key: value`. */
export type ProvenanceEntry = readonly [key: string, value: string];

/** Name of the column the export appends to the CLI's CSV columns. */
export const ADEQUACY_COLUMN = 'adequacy';

/**
 * The facts every export carries, in this order: engine, frame, record, rows (and sample),
 * estimator, units, highest order, missing-value policy, then one `binning` line per column
 * (`name = spec → n bins`; the name is what stands before the last " = ").
 */
export function provenanceEntries(source: IExportSource, exported: Date = new Date()): ProvenanceEntry[] {
  const { result } = source;
  const entries: ProvenanceEntry[] = [
    ['engine', `${result.engine.name} ${result.engine.version}`],
    ['exported', exported.toISOString()],
    ['frame', source.frame ?? '(unnamed)'],
    ['record', source.recordId ?? '(not recorded)'],
    ['rows', `${formatCount(result.rows_used)} used of ${formatCount(result.rows)}`]
  ];
  if (source.sample) {
    entries.push([
      'sample',
      `${formatCount(source.sample.rows)} of ${plural(source.sample.originalRows, 'row')}, seed ${source.sample.seed}`
    ]);
  }
  entries.push(
    ['estimator', result.estimator],
    ['units', result.units],
    ['max_order', String(result.max_order)],
    ['missing', source.missing ?? 'drop']
  );
  for (const column of result.columns) {
    const bins =
      column.binning.method === 'categorical'
        ? plural(column.bins, 'category', 'categories')
        : `${column.binning.method}, ${plural(column.bins, 'bin')}`;
    entries.push(['binning', `${column.name} = ${column.binning.spec} → ${bins}`]);
  }
  entries.push(['sign', 'co-information < 0 synergy-dominated, > 0 redundancy-dominated (Bell 2003)']);
  return entries;
}

/** The entries that say which table and filters a CSV holds. */
export function tableEntries(side: TableSide, filter: ITableFilter, rows: number, total: number): ProvenanceEntry[] {
  const filters: string[] = [];
  if (filter.column.trim() !== '') {
    filters.push(`a column name containing "${filter.column.trim()}"`);
  }
  if (filter.order !== null) {
    filters.push(`order ${filter.order}`);
  }
  if (filter.mask !== null) {
    filters.push('one histogram bar');
  }
  if (filter.qAtMost !== null) {
    filters.push(`q ≤ ${filter.qAtMost}`);
  }
  return [
    ['table', side === 'synergy' ? 'synergy (co-information < 0, most negative first)' : 'redundancy (co-information > 0, most positive first)'],
    ['filter', filters.length === 0 ? 'none' : filters.join(', ')],
    ['multiplets', `${formatCount(rows)} of ${formatCount(total)}`],
    [ADEQUACY_COLUMN, 'rows used / possible joint cells of the multiplet (product of its columns’ bin counts); below 1, fewer rows than cells']
  ];
}

/**
 * The CLI's CSV of `rows` with the comment lines of `entries` above it and the adequacy of each
 * row appended as a last column. Values go on one line each: control characters (from frame or
 * column names) are written as `\uXXXX`.
 */
export function provenanceCsv(
  rows: Parameters<typeof multipletsCsv>[0],
  adequacy: ArrayLike<number>,
  entries: readonly ProvenanceEntry[]
): string {
  const list = Array.from(rows);
  if (list.length !== adequacy.length) {
    throw new Error(`The export has ${list.length} rows but ${adequacy.length} adequacy values.`);
  }
  // The adequacy goes where the CLI's CSV puts it (right after the measures, before any statistics).
  const body = multipletsCsv(list.map((row, i) => ({ ...row, [ADEQUACY_COLUMN]: adequacy[i] })));
  return provenanceLines(entries) + body;
}

/** The comment lines `# key: value` of `entries`, each ending in a newline; values on one line each. */
export function provenanceLines(entries: readonly ProvenanceEntry[]): string {
  return entries.map(([key, value]) => `# ${key}: ${Private.oneLine(value)}\n`).join('');
}

/** One line of text that names an export's frame and record, for a chart's subtitle. */
export function provenanceLine(source: IExportSource): string {
  const { result } = source;
  return (
    `${source.frame ?? 'unnamed frame'} · record ${source.recordId ?? '(not recorded)'} · ` +
    `${formatCount(result.rows_used)} rows · ${result.estimator} · ${result.units} · ${result.engine.name} ${result.engine.version}`
  );
}

/** A file name (no extension) naming the frame and the record: `polyadic-<frame>-<record>-<what>`. */
export function exportFileName(source: Pick<IExportSource, 'frame' | 'recordId'>, what: string): string {
  const parts = ['polyadic', source.frame, source.recordId, what].filter((part): part is string => !!part);
  // characters that file systems or browsers refuse or change become "_"
  return parts.map(part => part.replace(/[^A-Za-z0-9._-]+/g, '_').slice(0, 60)).join('-');
}

namespace Private {
  /** A value on one line: control characters written as \uXXXX escapes. */
  export function oneLine(text: string): string {
    // eslint-disable-next-line no-control-regex
    return text.replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]/g, c => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
  }
}
