/**
 * Output of `polyadic analyze`: the analysis result as JSON (the field names of
 * IAnalysisResult, unchanged) or as CSV with one row per multiplet.
 */

import Papa from 'papaparse';

import type { IAnalysisResult, IMultipletRow } from '../engine/types';
import { csvCells, evidenceFieldsOf, MULTIPLET_FIELDS, multipletsCsv } from '../results-format';

/** Re-exported for the CLI's callers; the CSV form itself lives in results-format.ts. */
export { COLUMN_SEPARATOR, MULTIPLET_FIELDS } from '../results-format';

/** Output formats of the CLI. */
export type OutputFormat = 'json' | 'csv';

/** Every output format, for validation and help. */
export const OUTPUT_FORMATS: readonly OutputFormat[] = ['json', 'csv'];

/** Render a result in a format; the text ends with a line break. */
export function formatResult(result: IAnalysisResult, format: OutputFormat): string {
  return format === 'json' ? formatJson(result) : formatCsv(result);
}

/** The result as indented JSON. */
export function formatJson(result: IAnalysisResult): string {
  return JSON.stringify(result, null, 2) + '\n';
}

/**
 * The multiplets as CSV, one row per multiplet (see {@link multipletsCsv}: full precision,
 * formula-like cells quoted).
 */
export function formatCsv(result: IAnalysisResult): string {
  return multipletsCsv(result.multiplets);
}

/** Rows per write when a result is streamed. */
const ROWS_PER_CHUNK = 2000;

/**
 * Write a result whose multiplets come one at a time (`rows`, in place of result.multiplets,
 * e.g. multipletRows of its lattice) through `write`, in chunks: the same bytes as
 * {@link formatResult} of the result with those rows, without holding them all. Every row must
 * have the same fields (a run without statistics), since the CSV's extra fields are read from
 * the first row.
 */
export function writeResult(
  result: IAnalysisResult,
  rows: Iterable<IMultipletRow>,
  format: OutputFormat,
  write: (text: string) => void
): void {
  const iterator = rows[Symbol.iterator]();
  const first = iterator.next();
  function* all(): Generator<IMultipletRow> {
    if (!first.done) {
      yield first.value;
      for (let next = iterator.next(); !next.done; next = iterator.next()) {
        yield next.value;
      }
    }
  }
  if (format === 'csv') {
    const extras = first.done ? [] : evidenceFieldsOf([first.value]);
    const fields = [...MULTIPLET_FIELDS, ...extras];
    let data: (string | number)[][] = [];
    let header = true;
    const flush = (): void => {
      const text = Papa.unparse({ fields, data }, { quotes: false, escapeFormulae: true, newline: '\n', header });
      write(header ? text : '\n' + text);
      header = false;
      data = [];
    };
    for (const row of all()) {
      data.push(csvCells(row, extras));
      if (data.length === ROWS_PER_CHUNK) {
        flush();
      }
    }
    if (header || data.length > 0) {
      flush();
    }
    write('\n');
    return;
  }
  // The JSON around the rows, with a marker where the rows go; a marker the data happen to
  // hold (a column so named) makes the split ambiguous: then the whole text is built at once.
  const marker = 'polyadic-rows-8c1f5e2a';
  const text = formatJson({ ...result, multiplets: marker as unknown as IMultipletRow[] });
  const [head, tail, ...more] = text.split(JSON.stringify(marker));
  if (tail === undefined || more.length > 0) {
    write(formatJson({ ...result, multiplets: Array.from(all()) }));
    return;
  }
  write(head);
  if (first.done) {
    write('[]');
  } else {
    let chunk: string[] = [];
    let opened = false;
    for (const row of all()) {
      chunk.push(JSON.stringify(row, null, 2).replace(/^/gm, '    '));
      if (chunk.length === ROWS_PER_CHUNK) {
        write((opened ? ',\n' : '[\n') + chunk.join(',\n'));
        opened = true;
        chunk = [];
      }
    }
    if (chunk.length > 0) {
      write((opened ? ',\n' : '[\n') + chunk.join(',\n'));
    }
    write('\n  ]');
  }
  write(tail);
}
