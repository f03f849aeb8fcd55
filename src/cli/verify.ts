/**
 * `polyadic verify NOTEBOOK --data NAME=PATH ...`: re-derive every analysis recorded in a
 * notebook's metadata from the data files and say, one line per analysis, whether it
 * reproduces.
 *
 * For each analysis: read the selected columns of the file given for its frame, compare the
 * fingerprint, re-run the engine with the recorded settings (binning specs, missing-value
 * policy, estimator, units, maximum order), and compare the resulting binning, the row and
 * multiplet counts, every measure of every summary multiplet and the order histograms. When the
 * analysis recorded evidence (its `statistics` settings), the evidence is re-run with exactly
 * those settings (same seed, in one thread: the engine's results do not depend on the thread
 * count) and every evidence field a summary multiplet holds is compared, with the scope of the
 * evidence (families, null bands, counts) and the count of inadequate multiplets. When the
 * analysis recorded a robustness run, it is re-run with the recorded variants and N and every
 * verdict and agreement value is compared.
 * Values must be identical when the engine version is the recorded one, and within 1e-9
 * (relative above 1) across versions; a null (not computed, or not a finite number) equals
 * only a null.
 *
 * Exit codes: 0 every analysis reproduces; 1 at least one does not (its line says which value
 * and why); 2 bad input (no such notebook, not a notebook, no or an invalid record, a --data
 * option that is malformed or missing, a data file that cannot be read).
 */

import { promises as fs } from 'fs';

import { analyzeCodes, latticeInput, prepareColumns } from '../engine/analyze';
import { errorMessage, isPolyadicError, PolyadicError } from '../engine/errors';
import { fromNats } from '../engine/estimators';
import type { ILattice } from '../engine/lattice';
import { walkLattice } from '../engine/walk';
import { coinformationAll, multipletMeasures } from '../engine/measures';
import { robustnessRun } from '../engine/robustness';
import { checkMultipletCount, forEachMultiplet } from '../engine/multiplets';
import type { ColumnView, IAnalysisResult, IColumnBinning, Units } from '../engine/types';
import { formatCount, plural, wordFor } from '../engine/text';
import { ENGINE_NAME, ENGINE_VERSION } from '../engine/version';
import { fingerprintColumns } from '../record/fingerprint';
import { fingerprintScan, sortedWeightedTable } from '../record/scan-fingerprint';
import type { IPreparedCodes } from '../engine/binning';
import { compareFingerprint, optionsFromRecord, statisticsOptionsFromRecord } from '../record/settings';
import { robustnessBlockOf, robustnessRerunOf } from '../record/robustness';
import { readRecords } from '../record/store';
import { orderHistogram } from '../engine/histogram';
import { evidenceSummaryOf, multipletSummary, statisticsSettingsOf } from '../record/summary';
import type { IAnalysisRecord, IMultipletSummary } from '../record/types';
import { EVIDENCE_FIELDS } from '../results-format';
import { EXIT, ICliStreams, oneLine, parseCommandLine, reportFailure } from './core';
import { aggregateWithDuckDB, type IDuckDBAggregate } from './duckdb';
import { readDataFile, type IDataSource } from './readers';

/** The exit codes of verify (core.ts's, under verify's names). */
export const VERIFY_EXIT = { reproduced: EXIT.done, differs: EXIT.differs, badInput: EXIT.usage } as const;

/** Largest difference allowed across engine versions (absolute up to 1, relative above). */
export const CROSS_VERSION_TOLERANCE = 1e-9;

/** The text of `polyadic verify --help`. */
export const VERIFY_HELP = `Usage: polyadic verify NOTEBOOK --data NAME=PATH [--data NAME=PATH ...]

Re-derive every Polyadic analysis recorded in NOTEBOOK's metadata. NAME is the
dataframe name an analysis recorded (its frame); PATH is a .csv, .tsv, Arrow IPC
(.arrow, .feather, .arrows, .ipc) or .parquet file holding that frame.

For each analysis the fingerprint of the selected columns is compared, the
analysis is re-run with the recorded settings, and every recorded value is
compared: identical under the recorded engine version, within 1e-9 otherwise.
An analysis that recorded evidence (surrogates, bootstrap, pairwise-preserving
null) has it re-run with the recorded seed and settings, and every recorded
p, q, null, interval and band is compared the same way. An analysis that
recorded a robustness run has it re-run with the recorded variants and N, and
every verdict, Kendall's tau and top-10 overlap is compared the same way.

An analysis of a scanned source (its record's origin is 'scan', e.g. from
analyze --via duckdb) has its fingerprint over the sorted weighted table of
distinct binned rows; it is re-derived in memory, or through DuckDB with
--via duckdb (Parquet, CSV or TSV), and compared the same way.

Options:
  --data NAME=PATH      the data file of frame NAME; repeat for several frames
  --via duckdb          re-derive scanned analyses through DuckDB
  -h, --help            show this help

Exit codes: 0 all analyses reproduce, 1 at least one does not, 2 bad input.
`;

/** Run `polyadic verify` on its arguments (after the word `verify`); resolves to the exit code. */
export async function runVerify(args: string[], io: ICliStreams): Promise<number> {
  let parsed: Private.ICommand;
  let analyses: IAnalysisRecord[];
  try {
    const command = Private.parseCommand(args);
    if (command === 'help') {
      io.stdout.write(VERIFY_HELP);
      return VERIFY_EXIT.reproduced;
    }
    parsed = command;
    analyses = await Private.readAnalyses(parsed.notebook);
    Private.checkData(parsed, analyses);
  } catch (error) {
    // a failure before any analysis ran: usage and input problems are 2, bugs 1
    return reportFailure(error, io, { usageExit: VERIFY_EXIT.badInput });
  }
  io.stdout.write(
    `polyadic verify: ${oneLine(parsed.notebook)}: ${plural(analyses.length, 'analysis', 'analyses')}
`
  );
  const sources = new Map<string, Promise<IDataSource>>();
  let reproduced = 0;
  let badInput = false;
  for (const analysis of analyses) {
    const head = `${analysis.id}  ${oneLine(analysis.label)}  `;
    let outcome: Private.IOutcome;
    try {
      const file = parsed.data.get(analysis.source.frame) as string;
      outcome =
        analysis.source.origin?.kind === 'scan' || parsed.via === 'duckdb'
          ? await Private.verifyScan(analysis, file, parsed.via, sources)
          : await Private.verifyAnalysis(analysis, file, sources);
    } catch (error) {
      if (isPolyadicError(error) && error.kind !== 'internal') {
        badInput = true;
        outcome = { ok: false, text: `CANNOT READ DATA: ${error.message}` };
      } else {
        outcome = { ok: false, text: `ERROR: ${errorMessage(error)}` };
      }
    }
    if (outcome.ok) {
      reproduced++;
    }
    io.stdout.write(head + oneLine(outcome.text) + '\n');
  }
  // "1 of 1 analyses reproduce": the summary line keeps one wording for scripts that read it
  io.stdout.write(`${formatCount(reproduced)} of ${formatCount(analyses.length)} analyses reproduce.\n`);
  if (badInput) {
    return VERIFY_EXIT.badInput;
  }
  return reproduced === analyses.length ? VERIFY_EXIT.reproduced : VERIFY_EXIT.differs;
}

/** Module-private helpers. */
namespace Private {
  /** A parsed command line. */
  export interface ICommand {
    notebook: string;
    /** Frame name → data file path. */
    data: Map<string, string>;
    /** Re-derive scanned records through DuckDB (else in memory). */
    via?: 'duckdb';
  }

  /** The verdict on one analysis. */
  export interface IOutcome {
    ok: boolean;
    text: string;
  }

  /** Parse the arguments strictly; usage errors name the option or value at fault. */
  export function parseCommand(args: string[]): ICommand | 'help' {
    const parsed = parseCommandLine(
      args,
      { data: { type: 'string', multiple: true }, via: { type: 'string' }, help: { type: 'boolean', short: 'h' } },
      'verify'
    );
    if (parsed.values.help) {
      return 'help';
    }
    const [notebook, ...extra] = parsed.positionals;
    if (notebook === undefined) {
      throw new PolyadicError('usage', 'verify needs a NOTEBOOK: polyadic verify NOTEBOOK --data NAME=PATH ...');
    }
    if (extra.length > 0) {
      throw new PolyadicError('usage', `Unexpected argument '${extra[0]}'; verify takes one NOTEBOOK.`, {
        value: extra[0]
      });
    }
    const data = new Map<string, string>();
    for (const text of parsed.values.data ?? []) {
      const at = text.indexOf('=');
      if (at <= 0 || at === text.length - 1) {
        throw new PolyadicError('usage', `--data expects NAME=PATH (a frame name and a data file), got '${text}'.`, {
          option: '--data',
          value: text
        });
      }
      const name = text.slice(0, at);
      if (data.has(name)) {
        throw new PolyadicError('usage', `--data is given twice for frame '${name}'.`, { option: '--data', value: name });
      }
      data.set(name, text.slice(at + 1));
    }
    const via = parsed.values.via as string | undefined;
    if (via !== undefined && via !== 'duckdb') {
      throw new PolyadicError('usage', `--via takes duckdb, not '${via}'.`, { option: '--via', value: via });
    }
    return { notebook, data, via: via === 'duckdb' ? 'duckdb' : undefined };
  }

  /** The analyses recorded in a notebook file; errors name the file and, for a bad record, the path. */
  export async function readAnalyses(notebook: string): Promise<IAnalysisRecord[]> {
    let text: string;
    try {
      text = await fs.readFile(notebook, 'utf8');
    } catch (error) {
      const code = (error as NodeJS.ErrnoException).code;
      const reason = code === 'ENOENT' ? 'does not exist' : code === 'EISDIR' ? 'is a directory' : 'cannot be read';
      throw new PolyadicError('input', `Notebook '${notebook}' ${reason}.`, { value: notebook });
    }
    let document: unknown;
    try {
      document = JSON.parse(text);
    } catch (error) {
      throw new PolyadicError('input', `'${notebook}' is not a notebook: it is not JSON (${(error as Error).message}).`, {
        value: notebook
      });
    }
    const metadata = (document as { metadata?: unknown } | null)?.metadata;
    if (typeof metadata !== 'object' || metadata === null || Array.isArray(metadata)) {
      throw new PolyadicError('input', `'${notebook}' is not a notebook: it has no metadata object.`, { value: notebook });
    }
    const state = readRecords({
      get: key => (Object.prototype.hasOwnProperty.call(metadata, key) ? (metadata as Record<string, unknown>)[key] : undefined),
      set: () => {
        throw new PolyadicError('internal', 'verify never writes a notebook.');
      }
    });
    if (!state.present) {
      throw new PolyadicError('input', `'${notebook}' has no Polyadic record (no 'polyadic' key in its metadata); nothing to verify.`);
    }
    if (state.status === 'newer') {
      throw new PolyadicError('input', `'${notebook}': ${state.notice}`);
    }
    if (state.status === 'invalid') {
      const listed = state.problems.slice(0, 10).map(problem => problem.message).join(' ');
      throw new PolyadicError('input', `'${notebook}' has an invalid Polyadic record: ${listed}`, {
        path: state.problems[0]?.path
      });
    }
    if (state.analyses.length === 0) {
      throw new PolyadicError('input', `'${notebook}' has a Polyadic record with no analyses; nothing to verify.`);
    }
    return state.analyses;
  }

  /** Every recorded frame has a --data file, and every --data names a recorded frame. */
  export function checkData(command: ICommand, analyses: IAnalysisRecord[]): void {
    const frames = [...new Set(analyses.map(analysis => analysis.source.frame))];
    for (const name of command.data.keys()) {
      if (!frames.includes(name)) {
        throw new PolyadicError(
          'usage',
          `--data names frame '${name}', which no analysis in the notebook used; recorded frames: ${frames.map(f => `'${f}'`).join(', ')}.`,
          { option: '--data', value: name }
        );
      }
    }
    const missing = frames.filter(frame => !command.data.has(frame));
    if (missing.length > 0) {
      throw new PolyadicError(
        'usage',
        `No data file for ${wordFor(missing.length, 'frame')} ${missing.map(f => `'${f}'`).join(', ')}; ` +
          `give ${missing.map(f => `--data ${f}=PATH`).join(' ')}.`,
        { option: '--data', value: missing[0] }
      );
    }
  }

  /** Verify one analysis against its data file. */
  export async function verifyAnalysis(
    analysis: IAnalysisRecord,
    file: string,
    sources: Map<string, Promise<IDataSource>>
  ): Promise<IOutcome> {
    const key = `${file}\u0000${analysis.columns.join('\u0000')}`;
    let pending = sources.get(key);
    if (!pending) {
      pending = readDataFile(file, { columns: analysis.columns });
      sources.set(key, pending);
    }
    let source: IDataSource;
    try {
      source = await pending;
    } catch (error) {
      // a selected column that is gone is a change of the data, not a bad file
      if (isPolyadicError(error) && error.kind === 'usage' && typeof error.detail.column === 'string') {
        return { ok: false, text: `DATA CHANGED: column '${error.detail.column}' is not in ${file}.` };
      }
      throw error;
    }
    const sample = analysis.source.sample;
    if (sample && source.rows !== analysis.source.rows) {
      return {
        ok: false,
        text:
          `NOT CHECKED: the analysis read a seeded sample of ${formatCount(sample.row_cap)} of ${plural(sample.original_rows, 'row')} ` +
          `(seed ${sample.seed}); ${file} has ${plural(source.rows, 'row')}. Give a file holding the sampled rows.`
      };
    }
    const changed = await dataChange(analysis, source.columns);
    if (changed) {
      return { ok: false, text: `DATA CHANGED: ${changed}` };
    }
    return rerunOutcome(analysis, () => rerunDifferences(analysis, source.columns), 'reproduced');
  }

  /** The verdict of a re-run: its differences, or 'reproduced' (`reproduced`: the word, with how) and the count of values. */
  function rerunOutcome(analysis: IAnalysisRecord, rerun: () => string[], reproduced: string): IOutcome {
    let differences: string[];
    try {
      differences = rerun();
    } catch (error) {
      if (isPolyadicError(error) && error.kind !== 'internal') {
        return { ok: false, text: `DIFFERS: the re-run with the recorded settings fails: ${error.message}` };
      }
      throw error;
    }
    if (differences.length > 0) {
      const more = differences.length > 3 ? ` (and ${differences.length - 3} more)` : '';
      return { ok: false, text: `DIFFERS: ${differences.slice(0, 3).join('; ')}${more}` };
    }
    const exact = sameEngine(analysis) ? 'identical' : `within ${CROSS_VERSION_TOLERANCE} (recorded with ${analysis.engine.name} ${analysis.engine.version})`;
    return { ok: true, text: `${reproduced} (${plural(countValues(analysis), 'value')} ${exact})` };
  }

  /** Why the data differs from the recorded fingerprint, or null when it matches. */
  async function dataChange(analysis: IAnalysisRecord, columns: ColumnView[]): Promise<string | null> {
    const now = await fingerprintColumns(columns);
    const recorded = analysis.source.fingerprint.sha256;
    if (now.sha256 === recorded) {
      return null;
    }
    const reasons: string[] = [];
    const rows = columns.length ? lengthOf(columns[0]) : 0;
    if (rows !== analysis.source.rows) {
      reasons.push(`${plural(analysis.source.rows, 'row')} recorded, ${formatCount(rows)} now`);
    }
    const kinds = new Map(columns.map(column => [column.name, column.kind]));
    const changed: string[] = [];
    for (const name of compareFingerprint(analysis, now).changedColumns) {
      const recordedKind = analysis.source.columns.find(column => column.name === name)?.kind;
      if (recordedKind !== kinds.get(name)) {
        reasons.push(`column '${name}' was read as ${recordedKind}, now as ${kinds.get(name)}`);
      } else {
        changed.push(`'${name}'`);
      }
    }
    if (changed.length > 0) {
      reasons.push(`values differ in ${wordFor(changed.length, 'column')} ${changed.join(', ')}`);
    }
    return `fingerprint ${recorded.slice(0, 12)}… recorded, ${now.sha256.slice(0, 12)}… now` + (reasons.length ? ` (${reasons.join('; ')})` : '');
  }

  function lengthOf(column: ColumnView): number {
    return column.kind === 'numeric' ? column.values.length : column.codes.length;
  }

  /** Whether the analysis was recorded by this engine version (values must then be identical). */
  export function sameEngine(analysis: IAnalysisRecord): boolean {
    return analysis.engine.name === ENGINE_NAME && analysis.engine.version === ENGINE_VERSION;
  }

  /** Re-run with the recorded settings; every difference from the record, as text. */
  function rerunDifferences(analysis: IAnalysisRecord, columns: ColumnView[] | null, given?: IPreparedCodes): string[] {
    const equal = sameEngine(analysis) ? (a: number, b: number) => a === b : withinTolerance;
    const differences: string[] = [];
    const options = optionsFromRecord(analysis);
    const prepared = given ?? prepareColumns(columns as ColumnView[], options);
    prepared.binnings.forEach((binning, i) => {
      differences.push(...binningDifferences(analysis.binning[i], binning, equal));
    });
    if (prepared.rowsUsed !== analysis.summary.rows_used) {
      differences.push(`rows_used ${analysis.summary.rows_used} vs ${prepared.rowsUsed}`);
    }
    const input = latticeInput(prepared, options);
    const count = checkMultipletCount(prepared.codes.length, input.maxOrder, options.maxMultiplets);
    if (count !== analysis.summary.multiplet_count) {
      differences.push(`multiplet_count ${analysis.summary.multiplet_count} vs ${count}`);
    }
    if (input.maxOrder !== analysis.max_order) {
      differences.push(`max_order ${analysis.max_order} vs ${input.maxOrder}`);
      return differences;
    }
    const lattice = walkLattice(input);
    const coinformation = coinformationAll(lattice);
    const units = analysis.units;
    for (const side of ['synergy', 'redundancy'] as const) {
      analysis.summary[side].forEach((multiplet, i) => {
        differences.push(...multipletDifferences(`${side}[${i}]`, multiplet, lattice, coinformation, prepared.names, units, equal));
      });
    }
    if (analysis.summary.histograms) {
      differences.push(...histogramDifferences(analysis, lattice, coinformation, equal));
    }
    // the evidence and adequacy through the engine's own entry (what analyze() runs after
    // binning), on the lattice just walked from the same codes and options
    const statistics = statisticsOptionsFromRecord(analysis);
    const result = analyzeCodes(prepared, { ...options, ...(statistics ? { statistics } : {}) }, lattice);
    differences.push(...evidenceDifferences(analysis, result, equal));
    if (columns) {
      differences.push(...robustnessDifferences(analysis, columns, equal));
    } else if (analysis.robustness) {
      differences.push('the robustness run re-bins the rows, which a scanned source does not give; verify it without --via');
    }
    return differences;
  }

  /**
   * Verify an analysis of a scanned source (origin 'scan'), or any analysis under --via duckdb:
   * the weighted table from DuckDB (or, without --via, the file's rows binned in memory and
   * grouped), its pdsc1 fingerprint against the record, then the values re-run from it.
   */
  export async function verifyScan(
    analysis: IAnalysisRecord,
    file: string,
    via: 'duckdb' | undefined,
    sources: Map<string, Promise<IDataSource>>
  ): Promise<IOutcome> {
    const scanned = analysis.source.origin?.kind === 'scan';
    if (!scanned) {
      return {
        ok: false,
        text: 'NOT CHECKED: recorded from rows (fingerprint pdfp1, which hashes every row); verify it without --via.'
      };
    }
    const options = { ...optionsFromRecord(analysis), columns: analysis.columns };
    let prepared: IPreparedCodes;
    let columns: ColumnView[] | null = null;
    if (via === 'duckdb') {
      const statistics = statisticsOptionsFromRecord(analysis);
      let aggregate: IDuckDBAggregate;
      try {
        aggregate = await aggregateWithDuckDB(file, { ...options, ...(statistics ? { statistics } : {}) });
      } catch (error) {
        if (isPolyadicError(error) && error.kind === 'usage' && typeof error.detail.column === 'string') {
          return { ok: false, text: `DATA CHANGED: column '${error.detail.column}' is not in ${file}.` };
        }
        throw error;
      }
      if (aggregate.lattice !== null) {
        return { ok: false, text: 'NOT CHECKED: past the cap on distinct rows there is no weighted table to fingerprint.' };
      }
      prepared = aggregate.prepared;
    } else {
      const key = `${file}\u0000${analysis.columns.join('\u0000')}`;
      let pending = sources.get(key);
      if (!pending) {
        pending = readDataFile(file, { columns: analysis.columns });
        sources.set(key, pending);
      }
      columns = (await pending).columns;
      const rows = prepareColumns(columns, options);
      // the rows grouped into the weighted table a scan gives (the bootstrap then resamples it as the scan's run did)
      const grouped = sortedWeightedTable({ codes: rows.codes, weights: new Int32Array(rows.rowsUsed).fill(1) });
      prepared = { ...rows, codes: [...grouped.codes], weights: grouped.weights, rowIndex: null };
    }
    const now = await fingerprintScan({ codes: prepared.codes, weights: prepared.weights as Int32Array }, prepared.rows, prepared.binnings);
    const recorded = analysis.source.fingerprint.sha256;
    if (now.sha256 !== recorded) {
      const origin = analysis.source.origin;
      const reasons: string[] = [];
      if (origin?.kind === 'scan' && origin.input_rows !== prepared.rows) {
        reasons.push(`${plural(origin.input_rows, 'input row')} recorded, ${formatCount(prepared.rows)} now`);
      }
      if (origin?.kind === 'scan' && origin.distinct_rows !== now.distinctRows) {
        reasons.push(`${plural(origin.distinct_rows, 'distinct binned row')} recorded, ${formatCount(now.distinctRows)} now`);
      }
      return {
        ok: false,
        text: `DATA CHANGED: fingerprint ${recorded.slice(0, 12)}… recorded, ${now.sha256.slice(0, 12)}… now` + (reasons.length ? ` (${reasons.join('; ')})` : '')
      };
    }
    const how = via === 'duckdb' ? 'through DuckDB' : 'in memory';
    return rerunOutcome(analysis, () => rerunDifferences(analysis, null, prepared), `reproduced ${how}`);
  }

  /**
   * The recorded robustness block against a re-run with its settings (the recorded binning as
   * the base, the recorded variant texts and N): every verdict and agreement value.
   */
  function robustnessDifferences(analysis: IAnalysisRecord, columns: ColumnView[], equal: (a: number, b: number) => boolean): string[] {
    const rerun = robustnessRerunOf(analysis);
    if (!rerun || !analysis.robustness) {
      return [];
    }
    const result = robustnessRun(columns, rerun.base, rerun.variants, rerun.top);
    const now = robustnessBlockOf(result);
    return structureDifferences('robustness', analysis.robustness.results, now.results, equal);
  }

  /**
   * The evidence of the re-run against the record's: the settings the engine resolved, every
   * evidence field each summary multiplet holds (and, for an analysis with statistics, every
   * field the re-run computes that the record lacks), the scope of the evidence and the count of
   * inadequate multiplets.
   */
  function evidenceDifferences(analysis: IAnalysisRecord, result: IAnalysisResult, equal: (a: number, b: number) => boolean): string[] {
    const out: string[] = [];
    const summary = analysis.summary;
    if (summary.inadequate_count !== undefined && summary.inadequate_count !== result.inadequate_count) {
      out.push(`inadequate_count ${summary.inadequate_count} vs ${result.inadequate_count ?? 'none'}`);
    }
    if (analysis.statistics) {
      if (!result.statistics) {
        out.push('statistics recorded, but the re-run with those settings computes no evidence');
      } else {
        const now = statisticsSettingsOf(result.statistics);
        for (const key of Object.keys(analysis.statistics) as (keyof typeof now)[]) {
          if (analysis.statistics[key] !== now[key]) {
            out.push(`statistics.${key} ${analysis.statistics[key]} vs ${now[key]}`);
          }
        }
      }
    }
    const rows = new Map(result.multiplets.map(row => [multipletKey(row.columns), row]));
    for (const side of ['synergy', 'redundancy'] as const) {
      summary[side].forEach((recorded, i) => {
        const label = `${side}[${i}] {${recorded.columns.join(', ')}}`;
        const row = rows.get(multipletKey(recorded.columns));
        if (!row) {
          out.push(`${label} is not among the re-run's multiplets`);
          return;
        }
        const now = multipletSummary(row);
        for (const field of EVIDENCE_FIELDS) {
          const held = field in recorded;
          // a record with statistics holds every field the engine computed; an older layout
          // (or a record without evidence) is compared only on what it holds
          if (!held && !(analysis.statistics && field in now)) {
            continue;
          }
          const difference = valueDifference(held ? recorded[field] : undefined, now[field], equal);
          if (difference) {
            out.push(`${label} ${field} ${difference}`);
          }
        }
      });
    }
    if (summary.evidence || result.statistics) {
      out.push(
        ...structureDifferences(
          'evidence',
          summary.evidence,
          result.statistics && analysis.statistics ? evidenceSummaryOf(result.statistics) : undefined,
          equal
        )
      );
    }
    return out;
  }

  /** A multiplet's identity: its column names as a set. */
  function multipletKey(columns: readonly string[]): string {
    return JSON.stringify([...columns].sort());
  }

  /** How a recorded value differs from the re-run's ('recorded vs now'), or '' when equal. */
  function valueDifference(recorded: unknown, now: unknown, equal: (a: number, b: number) => boolean): string {
    const show = (value: unknown): string => (value === undefined ? 'absent' : JSON.stringify(value));
    if (typeof recorded === 'number' && typeof now === 'number') {
      return equal(recorded, now) ? '' : `${recorded} vs ${now}`;
    }
    return recorded === now ? '' : `${show(recorded)} vs ${show(now)}`;
  }

  /**
   * Differences between two plain JSON values (the evidence summaries), each named by its path,
   * e.g. `evidence.null_bands[0].high 0.1 vs 0.2`; numbers compared with `equal`.
   */
  function structureDifferences(where: string, recorded: unknown, now: unknown, equal: (a: number, b: number) => boolean): string[] {
    const isObject = (value: unknown): value is Record<string, unknown> => typeof value === 'object' && value !== null;
    if (Array.isArray(recorded) && Array.isArray(now)) {
      if (recorded.length !== now.length) {
        return [`${where} has ${formatCount(recorded.length)} entries recorded, ${formatCount(now.length)} now`];
      }
      return recorded.flatMap((item, i) => structureDifferences(`${where}[${i}]`, item, now[i], equal));
    }
    if (isObject(recorded) && isObject(now) && !Array.isArray(recorded) && !Array.isArray(now)) {
      const keys = [...new Set([...Object.keys(recorded), ...Object.keys(now)])];
      return keys.flatMap(key => structureDifferences(`${where}.${key}`, recorded[key], now[key], equal));
    }
    const difference = valueDifference(recorded, now, equal);
    return difference ? [`${where} ${difference}`] : [];
  }

  /** Differences between a recorded binning and the re-run's. */
  function binningDifferences(
    recorded: IAnalysisRecord['binning'][number],
    now: IColumnBinning,
    equal: (a: number, b: number) => boolean
  ): string[] {
    const where = `binning of '${recorded.name}'`;
    const out: string[] = [];
    if (recorded.bins !== now.bins) {
      out.push(`${where} bins ${recorded.bins} vs ${now.bins}`);
    }
    const edges = now.binning.edges;
    if ((recorded.edges === undefined) !== (edges === undefined) || (recorded.edges && edges && recorded.edges.length !== edges.length)) {
      out.push(`${where} edges [${recorded.edges?.join(', ') ?? ''}] vs [${edges?.join(', ') ?? ''}]`);
    } else if (recorded.edges && edges) {
      const j = recorded.edges.findIndex((edge, k) => !equal(edge, edges[k]));
      if (j >= 0) {
        out.push(`${where} edges[${j}] ${recorded.edges[j]} vs ${edges[j]}`);
      }
    }
    // the order of the categories is the source library's (a pandas categorical keeps its own,
    // a CSV file reads sorted) and changes no measure: compare them as sets
    const sorted = (list: string[] | undefined): string | null => (list ? JSON.stringify([...list].sort()) : null);
    if (sorted(recorded.categories) !== sorted(now.binning.categories)) {
      out.push(`${where} categories ${sorted(recorded.categories)} vs ${sorted(now.binning.categories)}`);
    }
    if (recorded.missing_code !== now.binning.missing_code) {
      out.push(`${where} missing_code ${recorded.missing_code ?? 'none'} vs ${now.binning.missing_code ?? 'none'}`);
    }
    return out;
  }

  /** The measures of one recorded multiplet, recomputed from the lattice, compared. */
  function multipletDifferences(
    where: string,
    recorded: IMultipletSummary,
    lattice: ILattice,
    coinformation: Float64Array,
    names: string[],
    units: Units,
    equal: (a: number, b: number) => boolean
  ): string[] {
    const members = Int32Array.from(recorded.columns.map(name => names.indexOf(name))).sort();
    const label = `${where} {${recorded.columns.join(', ')}}`;
    const measures = multipletMeasures(lattice, members, members.length, coinformation);
    const now: Record<string, number> = {
      entropy: fromNats(measures.entropy, units),
      co_information: fromNats(measures.coinformation, units),
      total_correlation: fromNats(measures.totalCorrelation, units),
      dual_total_correlation: fromNats(measures.dualTotalCorrelation, units),
      o_information: fromNats(measures.oInformation, units)
    };
    const out: string[] = [];
    for (const field of ['co_information', 'o_information', 'total_correlation', 'dual_total_correlation', 'entropy'] as const) {
      if (!equal(recorded[field], now[field])) {
        out.push(`${label} ${field} ${recorded[field]} vs ${now[field]}`);
      }
    }
    return out;
  }

  /** The order histograms recomputed from every multiplet's co-information, compared. */
  function histogramDifferences(
    analysis: IAnalysisRecord,
    lattice: ILattice,
    coinformation: Float64Array,
    equal: (a: number, b: number) => boolean
  ): string[] {
    const byOrder: number[][] = Array.from({ length: analysis.max_order + 1 }, () => []);
    forEachMultiplet(lattice.indexing, (index, _members, order) => {
      if (order >= 2) {
        byOrder[order].push(fromNats(coinformation[index], analysis.units));
      }
    });
    const out: string[] = [];
    for (const recorded of analysis.summary.histograms ?? []) {
      const now = orderHistogram(recorded.order, byOrder[recorded.order] ?? []);
      const where = `order histogram ${recorded.order}`;
      if (now.edges.length !== recorded.edges.length) {
        out.push(`${where} has ${plural(recorded.counts.length, 'bin')} recorded, ${formatCount(now.counts.length)} now`);
        continue;
      }
      const j = recorded.edges.findIndex((edge, k) => !equal(edge, now.edges[k]));
      if (j >= 0) {
        out.push(`${where} edges[${j}] ${recorded.edges[j]} vs ${now.edges[j]}`);
      }
      // across versions a value within the tolerance may cross a bin edge: counts are compared
      // only under the recorded engine version
      if (sameEngine(analysis)) {
        const k = recorded.counts.findIndex((count, b) => count !== now.counts[b]);
        if (k >= 0) {
          out.push(`${where} counts[${k}] ${recorded.counts[k]} vs ${now.counts[k]}`);
        }
      }
    }
    return out;
  }

  /** |a − b| ≤ 1e-9, relative for magnitudes above 1. */
  export function withinTolerance(a: number, b: number): boolean {
    return Math.abs(a - b) <= CROSS_VERSION_TOLERANCE * Math.max(1, Math.abs(a), Math.abs(b));
  }

  /** How many recorded values a reproduction covers (for the report). */
  function countValues(analysis: IAnalysisRecord): number {
    const multiplets = [...analysis.summary.synergy, ...analysis.summary.redundancy];
    const evidence = multiplets.reduce((sum, multiplet) => sum + EVIDENCE_FIELDS.filter(field => field in multiplet).length, 0);
    const edges = analysis.binning.reduce((sum, binning) => sum + (binning.edges?.length ?? 0), 0);
    const histograms = (analysis.summary.histograms ?? []).reduce((sum, h) => sum + h.edges.length + h.counts.length, 0);
    const scope = analysis.summary.evidence ? Private.leafCount(analysis.summary.evidence) : 0;
    const inadequate = analysis.summary.inadequate_count !== undefined ? 1 : 0;
    const robustness = analysis.robustness ? Private.leafCount(analysis.robustness.results) : 0;
    return robustness + 5 * multiplets.length + evidence + edges + histograms + scope + inadequate + 2;
  }

  /** The number of numbers, strings, booleans and nulls in a JSON value. */
  export function leafCount(value: unknown): number {
    if (Array.isArray(value)) {
      return value.reduce((sum: number, item) => sum + leafCount(item), 0);
    }
    if (typeof value === 'object' && value !== null) {
      return Object.values(value).reduce((sum: number, item) => sum + leafCount(item), 0);
    }
    return 1;
  }
}
