/**
 * The Dataframe section's model: which columns start selected when a frame is picked, also when
 * a pick interrupts the load of the same frame (the automatic pick of a lone frame, then the
 * person's own pick before the first load has finished).
 */
import { Signal } from '@lumino/signaling';

import type { KernelBridge } from '../../src/bridge/connector';
import type { IFetchedFrame, IFetchProgress } from '../../src/bridge/decode';
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

  fetch(_name: string, _columns: string[], options: { onProgress?: (progress: IFetchProgress) => void } = {}): Promise<IFetchedFrame> {
    return new Promise(resolve => {
      this.pending.push(() => {
        // the last byte arrives before the columns are decoded and counted
        options.onProgress?.({ frame: 'beds', piecesReceived: 1, pieceCount: 1, bytesReceived: 96, bytesTotal: 96 });
        resolve({
          columns: [numeric('soil_a', [1, 2, 3, 4]), numeric('soil_b', [4, 3, 2, 1]), numeric('const', [7, 7, 7, 7])],
          fields: [],
          rows: 4,
          originalRows: 4,
          sampled: false,
          seed: 0,
          bytes: 96
        } as unknown as IFetchedFrame);
      });
    });
  }
}

async function settle(): Promise<void> {
  for (let i = 0; i < 20; i++) {
    await new Promise(resolve => setTimeout(resolve, 0));
  }
}

/** A model whose frame `beds` has been picked and loaded. */
async function loadedModel(): Promise<{ bridge: FakeBridge; model: DataModel }> {
  const bridge = new FakeBridge();
  const model = new DataModel({ rowCap: 1000 });
  model.bridge = bridge as unknown as KernelBridge;
  const done = model.pick('beds');
  bridge.pending.shift()!();
  await done;
  return { bridge, model };
}

describe('DataModel', () => {
  describe('#pick', () => {
    it('should select the columns without warnings when a frame is picked', async () => {
      const { model } = await loadedModel();
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

    it('should fill the load bar only once the columns are ready', async () => {
      const bridge = new FakeBridge();
      const model = new DataModel({ rowCap: 1000 });
      model.bridge = bridge as unknown as KernelBridge;
      const seen: { state: string; fraction: number; counted: number }[] = [];
      model.changed.connect(() => {
        seen.push({ ...model.load, counted: model.columns.filter(column => column.stats !== null).length });
      });
      const done = model.pick('beds');
      bridge.pending.shift()!();
      await done;
      const loading = seen.filter(entry => entry.state === 'loading');
      // every byte received, then the three columns counted one by one
      const expected = [0, DataModel.FETCH_SHARE, 0.9 + 0.1 / 3, 0.9 + 0.2 / 3];
      expect(loading).toHaveLength(expected.length);
      loading.forEach((entry, i) => expect(entry.fraction).toBeCloseTo(expected[i], 12));
      expect(loading.every(entry => entry.fraction < 1)).toBe(true);
      expect(loading.map(entry => entry.counted)).toEqual([0, 0, 1, 2]);
      expect(seen[seen.length - 1]).toEqual({ state: 'loaded', fraction: 1, error: null, counted: 3 });
    });

    it('should read the picked frame again when the listing shows it with other rows, keeping the selection', async () => {
      const { bridge, model } = await loadedModel();
      model.setSelected('soil_b', false);
      const before = model.fetched;
      // the same listing again changes nothing
      bridge.framesChanged.emit(bridge.listing);
      expect(bridge.pending).toHaveLength(0);
      bridge.listing = { frames: [{ ...FRAME, rows: 5 }], skipped: [] };
      bridge.framesChanged.emit(bridge.listing);
      expect(model.load.state).toBe('loading');
      bridge.pending.shift()!();
      await settle();
      expect(model.load.state).toBe('loaded');
      expect(model.fetched).not.toBe(before);
      expect(model.selected).toEqual(['soil_a']);
    });

    it('should keep the person’s own selection when a loaded frame is picked again', async () => {
      const { bridge, model } = await loadedModel();
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
