/**
 * Reading and changing the record in a notebook's metadata, through a minimal interface the
 * panel wires to `INotebookModel` (`getMetadata` / `setMetadata`) and the CLI to a parsed
 * notebook file. Pure functions: no JupyterLab import.
 *
 * Rules (issue 6): only the `polyadic` key is ever written; a record that fails the schema is
 * reported and never rewritten; a record of a newer layout is read-only; an older layout is
 * migrated on read and written back in the current layout only when the person changes the
 * record (a new run, a rename, a delete) — opening a notebook never rewrites it.
 */

import { PolyadicError } from '../engine/errors';
import { migrateRecord } from './migrate';
import {
  MAX_LABEL_LENGTH,
  RECORD_METADATA_KEY,
  RECORD_VERSION,
  type IAnalysisRecord,
  type IMetadataAccess,
  type IRecordDocument,
  type IRecordProblem
} from './types';
import { problemsError, validateAnalysis, validateRecord } from './validate';

export type { IMetadataAccess } from './types';

/** What a notebook's record holds, as read. */
export interface IRecordState {
  /** `ok` (including no record and a migrated one), `invalid` (see `problems`) or `newer` (read-only). */
  status: 'ok' | 'invalid' | 'newer';
  /** Whether the notebook has a `polyadic` metadata key at all. */
  present: boolean;
  /** Layout version as stored (before migration); null when absent or unreadable. */
  storedVersion: number | null;
  /** Whether the stored layout is older and was migrated for reading. */
  migrated: boolean;
  /** Whether changes are refused (invalid or newer records). */
  readOnly: boolean;
  /** The analyses (of a newer record: those that this version can read, shown read-only). */
  analyses: IAnalysisRecord[];
  /** Problems of an invalid record, each naming its path. */
  problems: IRecordProblem[];
  /** A sentence for the panel's banner: why the record is read-only or was not read. */
  notice: string | null;
}

/** Read the record of a notebook. Never writes. */
export function readRecords(metadata: IMetadataAccess): IRecordState {
  const stored = metadata.get(RECORD_METADATA_KEY);
  if (stored === undefined) {
    return Private.state('ok', { present: false });
  }
  const storedVersion = Private.versionOf(stored);
  const outcome = migrateRecord(stored);
  if (outcome.status === 'newer') {
    return Private.state('newer', {
      storedVersion,
      readOnly: true,
      analyses: Private.readableAnalyses(stored),
      notice: outcome.notice
    });
  }
  if (outcome.status === 'invalid') {
    return Private.invalidState(storedVersion, outcome.problems, false);
  }
  const checked = validateRecord(outcome.document);
  const migrated = outcome.fromVersion !== RECORD_VERSION;
  if (!checked.ok) {
    return Private.invalidState(storedVersion, checked.problems, migrated);
  }
  return Private.state('ok', {
    storedVersion,
    migrated,
    // a copy, so the caller cannot change the metadata object behind the model's back
    analyses: JSON.parse(JSON.stringify(checked.value.analyses)) as IAnalysisRecord[],
    notice: migrated
      ? `This record was written in layout version ${storedVersion}; it is read as version ${RECORD_VERSION} ` +
        'and rewritten only when you change it.'
      : null
  });
}

/** Add a new analysis (after a completed run) and write the record. Returns the new state. */
export function addAnalysis(metadata: IMetadataAccess, analysis: IAnalysisRecord): IRecordState {
  const current = Private.writable(metadata);
  const index = current.analyses.length;
  const checked = validateAnalysis(analysis, `/analyses/${index}`);
  if (!checked.ok) {
    throw problemsError('The new analysis does not fit the record layout', checked.problems);
  }
  if (current.analyses.some(existing => existing.id === analysis.id)) {
    throw new PolyadicError('usage', `An analysis with id '${analysis.id}' is already recorded in this notebook.`, {
      value: analysis.id
    });
  }
  return Private.write(metadata, [...current.analyses, JSON.parse(JSON.stringify(analysis)) as IAnalysisRecord]);
}

/**
 * Put `analysis` in the place of the recorded analysis with the same id (a re-run with the same
 * settings on the same data) and write the record. Returns the new state.
 */
export function replaceAnalysis(metadata: IMetadataAccess, analysis: IAnalysisRecord): IRecordState {
  const current = Private.writable(metadata);
  const index = Private.indexOf(current, analysis.id);
  const checked = validateAnalysis(analysis, `/analyses/${index}`);
  if (!checked.ok) {
    throw problemsError('The new analysis does not fit the record layout', checked.problems);
  }
  const analyses = current.analyses.slice();
  analyses[index] = JSON.parse(JSON.stringify(analysis)) as IAnalysisRecord;
  return Private.write(metadata, analyses);
}

/**
 * Whether two analyses are the same run: the same engine on the same data (frame, rows, sample
 * and fingerprint) with the same settings (columns in order, each column's binning spec, the
 * missing-value policy, the estimator, the units, the highest order and the statistics
 * settings). Ids, labels, times and results are not compared: a re-run gives the same results.
 */
export function sameRun(a: IAnalysisRecord, b: IAnalysisRecord): boolean {
  const settings = (analysis: IAnalysisRecord): string =>
    JSON.stringify([
      [analysis.engine.name, analysis.engine.version],
      analysis.source.frame,
      analysis.source.rows,
      analysis.source.sample ? [analysis.source.sample.seed, analysis.source.sample.row_cap, analysis.source.sample.original_rows] : null,
      [analysis.source.fingerprint.encoding, analysis.source.fingerprint.sha256],
      analysis.columns,
      analysis.binning.map(binning => [binning.name, binning.spec]),
      analysis.missing,
      analysis.estimator,
      analysis.units,
      analysis.max_order,
      Object.entries(analysis.statistics ?? {}).sort(([x], [y]) => (x < y ? -1 : x > y ? 1 : 0))
    ]);
  return settings(a) === settings(b);
}

/** Rename an analysis and write the record. The label is trimmed; it must be one line of 1–200 characters. */
export function renameAnalysis(metadata: IMetadataAccess, id: string, label: string): IRecordState {
  const current = Private.writable(metadata);
  const index = Private.indexOf(current, id);
  const analyses = current.analyses.map(analysis => ({ ...analysis }));
  const trimmed = label.trim();
  analyses[index].label = trimmed;
  const checked = validateAnalysis(analyses[index], `/analyses/${index}`);
  if (!checked.ok) {
    const length = Array.from(trimmed).length;
    const reason =
      length === 0
        ? 'it is empty'
        : length > MAX_LABEL_LENGTH
          ? `it has ${length} characters, more than ${MAX_LABEL_LENGTH}`
          : 'it must be one line without control characters';
    throw new PolyadicError('usage', `The name cannot be used: ${reason}.`, { option: 'label', path: `/analyses/${index}/label` });
  }
  return Private.write(metadata, analyses);
}

/** Delete an analysis and write the record (an empty list stays as `{ version, analyses: [] }`). */
export function deleteAnalysis(metadata: IMetadataAccess, id: string): IRecordState {
  const current = Private.writable(metadata);
  const index = Private.indexOf(current, id);
  return Private.write(
    metadata,
    current.analyses.filter((_, i) => i !== index)
  );
}

/** The analysis with an id, or undefined. */
export function findAnalysis(state: IRecordState, id: string): IAnalysisRecord | undefined {
  return state.analyses.find(analysis => analysis.id === id);
}

/** Module-private helpers. */
namespace Private {
  /** A state with defaults for the fields not given. */
  export function state(status: IRecordState['status'], fields: Partial<IRecordState>): IRecordState {
    return {
      status,
      present: true,
      storedVersion: null,
      migrated: false,
      readOnly: false,
      analyses: [],
      problems: [],
      notice: null,
      ...fields
    };
  }

  export function invalidState(storedVersion: number | null, problems: IRecordProblem[], migrated: boolean): IRecordState {
    const first = problems[0]?.message ?? 'it does not match the record layout';
    const more = problems.length > 1 ? ` (${problems.length - 1} more problem${problems.length === 2 ? '' : 's'})` : '';
    return state('invalid', {
      storedVersion,
      migrated,
      readOnly: true,
      problems,
      notice:
        `The Polyadic record in this notebook's metadata is not valid${migrated ? ' after migration' : ''}: ` +
        `${first}${more}. It is left untouched; fix it in the notebook's metadata or remove it.`
    });
  }

  export function versionOf(stored: unknown): number | null {
    const version = typeof stored === 'object' && stored !== null ? (stored as { version?: unknown }).version : undefined;
    return typeof version === 'number' && Number.isInteger(version) ? version : null;
  }

  /** The analyses of a newer record that also fit this version's layout. */
  export function readableAnalyses(stored: unknown): IAnalysisRecord[] {
    const analyses = (stored as { analyses?: unknown }).analyses;
    if (!Array.isArray(analyses)) {
      return [];
    }
    return analyses
      .filter(analysis => validateAnalysis(analysis).ok)
      .map(analysis => JSON.parse(JSON.stringify(analysis)) as IAnalysisRecord);
  }

  /** The current state, or an error saying why the record cannot be changed. */
  export function writable(metadata: IMetadataAccess): IRecordState {
    const current = readRecords(metadata);
    if (current.status === 'newer') {
      throw new PolyadicError('usage', current.notice ?? 'The record is read-only.', { path: '/version' });
    }
    if (current.status === 'invalid') {
      throw new PolyadicError('input', current.notice ?? 'The record is not valid.', {
        path: current.problems[0]?.path ?? '',
        problems: current.problems
      });
    }
    return current;
  }

  export function indexOf(state: IRecordState, id: string): number {
    const index = state.analyses.findIndex(analysis => analysis.id === id);
    if (index < 0) {
      throw new PolyadicError('usage', `No analysis with id '${String(id).slice(0, 80)}' is recorded in this notebook.`, {
        value: String(id).slice(0, 80)
      });
    }
    return index;
  }

  /** Check the whole new record, write it under the one key, and return the state read back. */
  export function write(metadata: IMetadataAccess, analyses: IAnalysisRecord[]): IRecordState {
    const document: IRecordDocument = { version: RECORD_VERSION, analyses };
    const checked = validateRecord(document);
    if (!checked.ok) {
      throw problemsError('The record cannot be saved', checked.problems);
    }
    metadata.set(RECORD_METADATA_KEY, JSON.parse(JSON.stringify(document)));
    return readRecords(metadata);
  }
}
