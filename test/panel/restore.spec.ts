/**
 * Restoring a record's settings right after its notebook opens, when the kernel's first listing
 * of frames is still on its way: the restore waits for it instead of saying the frame is gone.
 */
import { Signal } from '@lumino/signaling';

import { IRestoreTarget, restoreSettings } from '../../src/panel/records/restore';
import type { IRestoreRequest } from '../../src/panel/records/types';

/** The Dataframe section as a restore sees it, with a listing the test delivers. */
class Frames {
  readonly changed = new Signal<this, void>(this);
  listingPending = true;
  frames: { name: string }[] = [];
  frame: string | null = null;
  columns: { name: string }[] = [];
  fetched = null;
  selected = new Set<string>();

  /** The kernel's listing arrives (or, with `gaveUp`, the bridge fails before it does). */
  deliver(frames: string[], gaveUp = false): void {
    this.listingPending = false;
    this.frames = gaveUp ? [] : frames.map(name => ({ name }));
    this.changed.emit();
  }

  pick(name: string | null): Promise<void> {
    this.frame = name;
    this.columns = [{ name: 'a' }, { name: 'b' }];
    return Promise.resolve();
  }

  setSelected(name: string, selected: boolean): void {
    if (selected) {
      this.selected.add(name);
    } else {
      this.selected.delete(name);
    }
  }

  isSelected(name: string): boolean {
    return this.selected.has(name);
  }
}

function targetOn(data: Frames): IRestoreTarget {
  return {
    data: data as unknown as IRestoreTarget['data'],
    binning: { specOf: () => 'auto', setSpec: () => undefined },
    estimator: { estimator: 'plugin', units: 'bits', maxOrder: null },
    statistics: { restore: () => undefined }
  } as unknown as IRestoreTarget;
}

const request = {
  frame: 'df',
  options: { columns: ['a'], estimator: 'miller-madow', maxOrder: 2 },
  statistics: null
} as unknown as IRestoreRequest;

describe('restoreSettings', () => {
  it('should wait for the kernel’s first listing, then restore the frame and settings', async () => {
    const data = new Frames();
    const target = targetOn(data);
    const restored = restoreSettings(target, request);
    await new Promise(resolve => setTimeout(resolve, 10));
    expect(data.frame).toBeNull();
    data.deliver(['df', 'other']);
    await expect(restored).resolves.toBeNull();
    expect(data.frame).toBe('df');
    expect([...data.selected]).toEqual(['a']);
    expect(target.estimator.estimator).toBe('miller-madow');
    expect(target.estimator.maxOrder).toBe(2);
  });

  it('should say the frame is not in the kernel when the listing that arrives lacks it, or the bridge fails first', async () => {
    const data = new Frames();
    const restored = restoreSettings(targetOn(data), request);
    data.deliver([], true);
    await expect(restored).resolves.toContain("no dataframe named 'df'");
    expect(data.frame).toBeNull();
    // a listing already there: no wait
    const listed = new Frames();
    listed.deliver(['other']);
    await expect(restoreSettings(targetOn(listed), request)).resolves.toContain("no dataframe named 'df'");
  });
});
