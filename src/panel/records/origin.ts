/**
 * The sentence that says a recorded analysis came from a scan: the records list and the
 * analysis cell show it under the analysis, so a record of a DuckDB relation or a Spark
 * DataFrame never reads as one of rows the page held.
 */
import { scanEngineName } from '../../bridge/protocol';
import { formatCount } from '../../engine/text';
import type { IAnalysisRecord } from '../../record/types';
import type { TranslationBundle } from '../../translation';

/** "Scanned by DuckDB 1.5.2: 300 rows binned and grouped into 57 distinct binned rows.", or null for an analysis of rows. */
export function scanOriginText(analysis: IAnalysisRecord, trans: TranslationBundle): string | null {
  const origin = analysis.source.origin;
  if (origin?.kind !== 'scan') {
    return null;
  }
  return trans.__(
    'Scanned by %1 %2: %3 binned and grouped into %4.',
    scanEngineName(origin.engine.name),
    origin.engine.version,
    trans._n('%2 row', '%2 rows', origin.input_rows, formatCount(origin.input_rows)),
    trans._n('%2 distinct binned row', '%2 distinct binned rows', origin.distinct_rows, formatCount(origin.distinct_rows))
  );
}
