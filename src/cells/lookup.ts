/**
 * What a analysis cell's output shows: its MIME payload names a record id, which is
 * looked up in the notebook's record. Pure (no DOM), so every case is checked in unit tests.
 */
import { isRecordId } from '../record/ids';
import { findAnalysis, readRecords, type IMetadataAccess } from '../record/store';
import type { IAnalysisRecord } from '../record/types';
import { translationBundle, type TranslationBundle } from '../translation';

/** The outcome of a lookup: an analysis to draw, or a message saying why there is none. */
export type CellLookup =
  | { kind: 'analysis'; analysis: IAnalysisRecord; readOnly: boolean }
  | { kind: 'message'; level: 'error' | 'warning'; text: string };

/**
 * Resolve the payload of an `application/vnd.polyadic.analysis+json` output against a
 * notebook's metadata (`null` when the output is not in a notebook); the messages in `trans`'s
 * language (as written without it).
 */
export function lookupAnalysisCell(
  payload: unknown,
  metadata: IMetadataAccess | null,
  trans: TranslationBundle = translationBundle()
): CellLookup {
  const id = typeof payload === 'object' && payload !== null ? (payload as { record_id?: unknown }).record_id : undefined;
  if (!isRecordId(id)) {
    return {
      kind: 'message',
      level: 'error',
      text: trans.__(
        'This output does not name a Polyadic record: its record_id must be pd- followed by 8 to 32 ' +
          'lower-case letters or digits.'
      )
    };
  }
  if (metadata === null) {
    return {
      kind: 'message',
      level: 'warning',
      text: trans.__("Analysis %1 is kept in a notebook's record; this output is not in a notebook, so it cannot be drawn here.", id)
    };
  }
  const state = readRecords(metadata);
  if (state.status === 'invalid') {
    return { kind: 'message', level: 'error', text: state.notice ?? trans.__('The notebook’s Polyadic record is not valid.') };
  }
  const analysis = findAnalysis(state, id);
  if (analysis === undefined) {
    return {
      kind: 'message',
      level: 'warning',
      text:
        state.status === 'newer'
          ? trans.__('Analysis %1 was written by a newer Polyadic and cannot be read by this version.', id)
          : trans.__(
              'Analysis %1 is not in this notebook’s record: it was deleted, or the cell came from another notebook. ' +
                'Run the analysis again and insert a new cell.',
              id
            )
    };
  }
  return { kind: 'analysis', analysis, readOnly: state.readOnly };
}
