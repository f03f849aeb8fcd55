/**
 * Putting a recorded analysis back into the analysis sections (Data, Binning, Estimator),
 * and checking the frame the Dataframe section loads against the chosen analysis' fingerprint.
 * Written against the few members of the analysis model it uses, so it depends on no more.
 */
import type { IDisposable } from '@lumino/disposable';

import type { IPolyadicPanel } from '../../tokens';
import { translationBundle, type ITranslator, type TranslationBundle } from '../../translation';
import type { IRestoreRequest, IRunFrame } from './types';

/** How long a restore waits for the kernel's first listing of frames (our choice: a kernel's start and the silent import). */
export const LISTING_WAIT_MS = 30_000;

/** The members of the analysis model a restore uses. */
export type IRestoreTarget = Pick<IPolyadicPanel.IAnalysis, 'data' | 'binning' | 'estimator' | 'statistics'>;

/**
 * Restore the request's frame, selection, binning specs, estimator, units, maximum order and
 * statistics (a record without statistics sets every count to 0: the run computed none).
 * Resolves to a sentence (in `trans`'s language) naming what could not be restored, or null when
 * everything was.
 */
export async function restoreSettings(
  target: IRestoreTarget,
  request: IRestoreRequest,
  trans: TranslationBundle = translationBundle()
): Promise<string | null> {
  const { data, binning, estimator } = target;
  if (data.listingPending) {
    // a notebook just opened: its kernel's listing is still on its way
    await Private.firstListing(data, LISTING_WAIT_MS);
  }
  if (!data.frames.some(frame => frame.name === request.frame)) {
    return trans.__("The kernel holds no dataframe named '%1'; run the cell that makes it, then restore again.", request.frame);
  }
  if (data.frame !== request.frame || data.fetched === null) {
    await data.pick(request.frame);
  }
  if (data.frame !== request.frame) {
    return trans.__("Another dataframe was picked while '%1' was loading; nothing was restored.", request.frame);
  }
  const wanted = new Set(request.options.columns ?? []);
  const present = new Set(data.columns.map(column => column.name));
  const absent = [...wanted].filter(name => !present.has(name));
  for (const column of data.columns) {
    data.setSelected(column.name, wanted.has(column.name));
  }
  const notSelectable = [...wanted].filter(name => present.has(name) && !data.isSelected(name));
  for (const [name, spec] of Object.entries(request.options.binsByColumn ?? {})) {
    if (binning.specOf(name) !== undefined) {
      binning.setSpec(name, spec);
    }
  }
  if (request.options.estimator !== undefined) {
    estimator.estimator = request.options.estimator;
  }
  if (request.options.units !== undefined) {
    estimator.units = request.options.units;
  }
  estimator.maxOrder = request.options.maxOrder ?? null;
  target.statistics?.restore(request.statistics);
  const missing = [...absent, ...notSelectable];
  return missing.length === 0
    ? null
    : trans._n(
        "Column %2 of the record could not be selected in '%3' (gone, renamed or not readable); the other settings were restored.",
        "Columns %2 of the record could not be selected in '%3' (gone, renamed or not readable); the other settings were restored.",
        missing.length,
        missing.map(name => `'${name}'`).join(', '),
        request.frame
      );
}

/**
 * Keep the records section and the analysis sections together until disposed: a restore
 * request sets the sections, and every frame the Dataframe section loads is checked against the
 * chosen analysis (the "data changed" banner).
 */
export function followRestores(target: IRestoreTarget, records: IPolyadicPanel.IRecords, translator?: ITranslator): IDisposable {
  const trans = translationBundle(translator);
  let disposed = false;
  let lastChecked: IRunFrame | null = null;
  const onRestore = (_: IPolyadicPanel.IRecords, request: IRestoreRequest): void => {
    void restoreSettings(target, request, trans).then(problem => {
      if (!disposed) {
        records.setNotice(problem);
      }
    });
  };
  const check = (): void => {
    const fetched = target.data.fetched;
    const chosen = records.selected;
    if (fetched === null || chosen === null || fetched.name !== chosen.source.frame) {
      return;
    }
    if (fetched === lastChecked && records.dataCheckOf(chosen.id) !== null) {
      return;
    }
    lastChecked = fetched;
    void records.checkData(fetched);
  };
  records.restoreRequested.connect(onRestore);
  target.data.changed.connect(check);
  records.changed.connect(check);
  return {
    get isDisposed() {
      return disposed;
    },
    dispose: () => {
      disposed = true;
      records.restoreRequested.disconnect(onRestore);
      target.data.changed.disconnect(check);
      records.changed.disconnect(check);
    }
  };
}

namespace Private {
  /** Resolves once `data` has its first listing (or gave up on it), or after `ms`. */
  export function firstListing(data: IRestoreTarget['data'], ms: number): Promise<void> {
    return new Promise(resolve => {
      const finish = (): void => {
        clearTimeout(timer);
        data.changed.disconnect(onChange);
        resolve();
      };
      const onChange = (): void => {
        if (!data.listingPending) {
          finish();
        }
      };
      const timer = setTimeout(finish, ms);
      data.changed.connect(onChange);
    });
  }
}
