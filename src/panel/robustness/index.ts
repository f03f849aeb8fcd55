/** The robustness section of the results view: model, view, and the extras hook that mounts it. */
import type { Widget } from '@lumino/widgets';

import type { IAnalysisRecord } from '../../record/types';
import type { ITranslator } from '../../translation';
import type { IRunCompleted } from '../analysis/types';
import type { ResultsModel } from '../results/model';
import { type IRobustnessEngine, RobustnessModel } from './model';
import { RobustnessSection } from './view';

export * from './model';
export * from './view';

/** What {@link robustnessExtras} needs. */
export interface IRobustnessExtrasOptions {
  engine: IRobustnessEngine;
  /** This session's completed run of an analysis, if any. */
  runOf: (analysisId: string) => IRunCompleted | null;
  /** The recorded analysis of an id, if the followed notebook's record holds it. */
  recordOf?: (analysisId: string) => IAnalysisRecord | null;
  record?: RobustnessModel.Recorder;
  /** Translates the section's strings. */
  translator?: ITranslator;
}

/**
 * The `extras` of a results document: a robustness section that follows the view's model (a live
 * run can be checked; a view restored from the record cannot, says why, and shows the check the
 * record keeps, if any).
 */
export function robustnessExtras(options: IRobustnessExtrasOptions): (results: ResultsModel) => Widget[] {
  return results => {
    const model = new RobustnessModel({ engine: options.engine, record: options.record, translator: options.translator });
    const follow = (): void => {
      const id = results.context.recordId;
      const live = results.result !== null && !results.context.restored && id !== undefined;
      model.setRun(live ? options.runOf(id) : null);
      // a view restored from the record shows the check the record keeps
      model.setRecorded(!live && id !== undefined ? (options.recordOf?.(id) ?? null) : null);
    };
    results.changed.connect(follow);
    follow();
    const section = new RobustnessSection({ model, translator: options.translator });
    section.disposed.connect(() => results.changed.disconnect(follow));
    return [section];
  };
}
