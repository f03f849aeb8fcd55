/**
 * The Dataframe section's model: which columns start selected when a frame is picked, also when
 * a pick interrupts the load of the same frame (the automatic pick of a lone frame, then the
 * person's own pick before the first load has finished).
 */
import { Signal } from '@lumino/signaling';

import type { KernelBridge } from '../../src/bridge/connector';
import type { IFetchedFrame } from '../../src/bridge/decode';
import type { IFrameInfo } from '../../src/bridge/protocol';
import type { ColumnView } from '../../src/engine/types';
import { DataModel } from '../../src/panel/data/model';

const FRAME: IFrameInfo = {
  name: 'beds',
  kind: 'pandas',
  rows: 4,
  memory_bytes: 128,
  columns: [
    { name: 'soil_a', dtype: 'float64', kind: 'numeric' },
    { name: 'soil_b', dtype: 'float64', kind: 'numeric' },
    { name: 'const', dtype: 'float64', kind: 'numeric' }
  ]
};

function numeric(name: string, values: number[]): ColumnView {
  return { kind: 'numeric', name, dtype: 'float64', values: new Float64Array(values), missing: null };
}

/** A bridge whose fetches wait until the test releases them, in order. */
class FakeBridge {
  readonly statusChanged = new Signal<this, unknown>(this);
  readonly framesChanged = new Signal<this, unknown>(this);
  readonly status = { state: 'ready', message: 'ready' };
  listing = { frames: [FRAME], skipped: [] };
  isDisposed = false;
  pending: Array<() => void> = [];

  fetch(): Promise<IFetchedFrame> {
    return new Promise(resolve => {
      this.pending.push(() =>
        resolve({
          columns: [numeric('soil_a', [1, 2, 3, 4]), numeric('soil_b', [4, 3, 2, 1]), numeric('const', [7, 7, 7, 7])],
          fields: [],
          rows: 4,
          originalRows: 4,
          sampled: false,
          seed: 0,
          bytes: 96
        } as unknown as IFetchedFrame)
      );
    });
  }
}

async function settle(): Promise<void> {
  for (let i = 0; i < 20; i++) {
    await new Promise(resolve => setTimeout(resolve, 0));
  }
}

describe('DataModel', () => {
  describe('#pick', () => {
    it('should select the columns without warnings when a frame is picked', async () => {
      const bridge = new FakeBridge();
      const model = new DataModel({ rowCap: 1000 });
      model.bridge = bridge as unknown as KernelBridge;
      const done = model.pick('beds');
      bridge.pending.shift()!();
      await done;
      await settle();
      expect(model.selected).toEqual(['soil_a', 'soil_b']);
    });

    it('should still select by the defaults when a second pick of the same frame interrupts the first load', async () => {
      const bridge = new FakeBridge();
      const model = new DataModel({ rowCap: 1000 });
      model.bridge = bridge as unknown as KernelBridge;
      const first = model.pick('beds');
      const second = model.pick('beds');
      while (bridge.pending.length > 0) {
        bridge.pending.shift()!();
      }
      await Promise.all([first, second]);
      await settle();
      expect(model.load.state).toBe('loaded');
      expect(model.selected).toEqual(['soil_a', 'soil_b']);
    });

    it('should keep the person’s own selection when a loaded frame is picked again', async () => {
      const bridge = new FakeBridge();
      const model = new DataModel({ rowCap: 1000 });
      model.bridge = bridge as unknown as KernelBridge;
      const first = model.pick('beds');
      bridge.pending.shift()!();
      await first;
      await settle();
      model.setSelected('soil_a', false);
      const again = model.pick('beds');
      bridge.pending.shift()!();
      await again;
      await settle();
      expect(model.selected).toEqual(['soil_b']);
    });
  });
});
