/**
 * EnginePool#robustness: the robustness run in a worker of its own gives what the engine gives
 * in one call, carries the engine's errors back as values, and a new run cancels the last.
 */
import { isPolyadicError } from '../../src/engine/errors';
import { robustnessRun } from '../../src/engine/robustness';
import { EnginePool, isRunCancelled } from '../../src/worker/pool';
import { InProcessFactory, makeColumns } from './helpers';

describe('EnginePool', () => {
  describe('#robustness', () => {
    const columns = makeColumns(300, 11);
    const base = { maxOrder: 3 };
    const variants = [
      { label: 'bins=quantile:3', options: { bins: 'quantile:3' } },
      { label: 'estimator=shrinkage', options: { estimator: 'shrinkage' as const } }
    ];

    it('should give the result robustnessRun gives, in a worker apart from the analysis workers', async () => {
      const factory = new InProcessFactory();
      const pool = new EnginePool({ createWorker: factory.create, workers: 2 });
      try {
        const result = await pool.robustness(columns, base, variants, 4);
        expect(JSON.parse(JSON.stringify(result))).toEqual(JSON.parse(JSON.stringify(robustnessRun(columns, base, variants, 4))));
        expect(pool.liveWorkers).toBe(1);
      } finally {
        pool.dispose();
      }
      expect(pool.liveWorkers).toBe(0);
    });

    it('should reject with the engine error naming the variant, and cancel a run a new one replaces', async () => {
      const factory = new InProcessFactory();
      const pool = new EnginePool({ createWorker: factory.create, workers: 1 });
      try {
        const failed = await pool.robustness(columns, base, [{ label: 'odd', options: { bins: 'quantile:0' } }]).catch(error => error);
        expect(isPolyadicError(failed)).toBe(true);
        expect((failed as Error).message).toMatch(/^Variant 'odd':/);
        const first = pool.robustness(columns, base, variants).catch(error => error);
        const second = pool.robustness(columns, base, variants.slice(0, 1));
        expect(isRunCancelled(await first)).toBe(true);
        expect((await second).variants.map(v => v.label)).toEqual(['base', 'bins=quantile:3']);
      } finally {
        pool.dispose();
      }
    });
  });
});
