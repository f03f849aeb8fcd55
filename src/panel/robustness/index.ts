/** The robustness section of the results view: model, view, and the extras hook that mounts it. */
import type { Widget } from '@lumino/widgets';

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
  record?: RobustnessModel.Recorder;
}

/**
 * The `extras` of a results document: a robustness section that follows the view's model (a live
 * run can be checked; a view restored from the record cannot, and says why).
 */
export function robustnessExtras(options: IRobustnessExtrasOptions): (results: ResultsModel) => Widget[] {
  return results => {
    const model = new RobustnessModel({ engine: options.engine, record: options.record });
    const follow = (): void => {
      const id = results.context.recordId;
      const live = results.result !== null && !results.context.restored && id !== undefined;
      model.setRun(live ? options.runOf(id) : null);
    };
    results.changed.connect(follow);
    follow();
    const section = new RobustnessSection({ model });
    section.disposed.connect(() => results.changed.disconnect(follow));
    return [section];
  };
}
