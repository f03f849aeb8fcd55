/**
 * The records section listens to the analysis state: every completed run is first compared
 * with the chosen (restored) analysis when it read the same frame, which raises the "data
 * changed" banner on that analysis, and is then recorded in the notebook.
 */
import { IDisposable } from '@lumino/disposable';

import type { IAnalysisState, IRunCompleted } from '../analysis/types';
import type { IPolyadicPanel } from '../../tokens';

/** Record every completed run of `analysis` in `records` until the handle is disposed. */
export function recordCompletedRuns(analysis: IAnalysisState, records: IPolyadicPanel.IRecords): IDisposable {
  let disposed = false;
  const onRun = (_: IAnalysisState, run: IRunCompleted): void => {
    void Private.handle(run, records);
  };
  analysis.runCompleted.connect(onRun);
  return {
    get isDisposed() {
      return disposed;
    },
    dispose: () => {
      disposed = true;
      analysis.runCompleted.disconnect(onRun);
    }
  };
}

namespace Private {
  /** Compare, then record; runs one after the other so the check sees the restored analysis. */
  export async function handle(run: IRunCompleted, records: IPolyadicPanel.IRecords): Promise<void> {
    const { frame } = run;
    if (frame.columns !== undefined) {
      await records.checkData({
        name: frame.name,
        columns: frame.columns,
        rows: frame.rows,
        originalRows: frame.originalRows,
        sampled: frame.sampled,
        seed: frame.seed
      });
    }
    await records.recordRun(run);
  }
}
