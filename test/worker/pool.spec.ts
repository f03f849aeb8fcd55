import { scanWeightedCodes } from '../../src/engine/aggregate/scan';
import { analyze, latticeInput, prepareColumns } from '../../src/engine/analyze';
import { MemoryScanner } from '../engine/scan-helpers';
import { isPolyadicError, PolyadicError } from '../../src/engine/errors';
import { computeLattice } from '../../src/engine/lattice';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import { previewColumn } from '../../src/worker/handlers';
import { defaultWorkerCount, EnginePool, IRunProgress, isRunCancelled, RunCancelled } from '../../src/worker/pool';
import type { EngineRequest, EngineResponse, IEngineWorker } from '../../src/worker/protocol';
import { firstBitDifference, InProcessFactory, makeColumns, settle } from './helpers';

const OPTIONS: IAnalyzeOptions = { missing: 'category', estimator: 'chao-shen' };

/** A worker that takes requests and never answers (a long first step), recording what it got. */
class SilentWorker implements IEngineWorker {
  readonly received: EngineRequest[] = [];
  terminated = false;
  post(request: EngineRequest): void {
    this.received.push(request);
  }
  listen(): void {
    return;
  }
  terminate(): void {
    this.terminated = true;
  }
}

/** A worker whose script fails to start: it reports a failure after the first request. */
class BrokenWorker implements IEngineWorker {
  terminated = false;
  post(): void {
    setTimeout(() => this._onFailure?.('SyntaxError: Unexpected token'), 0);
  }
  listen(_onResponse: (response: EngineResponse) => void, onFailure: (reason: string) => void): void {
    this._onFailure = onFailure;
  }
  terminate(): void {
    this.terminated = true;
  }
  private _onFailure: ((reason: string) => void) | null = null;
}

/** The rejection of a promise (fails when it resolves). */
async function rejection(promise: Promise<unknown>): Promise<Error> {
  try {
    await promise;
  } catch (error) {
    return error as Error;
  }
  throw new Error('expected the promise to reject');
}

// The bit-for-bit runs walk whole lattices several times over: a hang guard for a loaded machine, not a timing.
jest.setTimeout(60_000);

describe('EnginePool', () => {
  let pools: EnginePool[] = [];
  /** A pool of in-process workers, disposed after the test. */
  function poolOf(workers: number, factory = new InProcessFactory(), progressInterval = 200): EnginePool {
    const pool = new EnginePool({ createWorker: factory.create, workers, progressInterval });
    pools.push(pool);
    return pool;
  }

  afterEach(() => {
    pools.forEach(pool => pool.dispose());
    pools = [];
  });

  describe('#analyzePrepared', () => {
    it("should walk a scan's weighted distinct rows to the in-memory result, with 1 and 2 workers", async () => {
      const columns = makeColumns(1200, 6);
      const options: IAnalyzeOptions = { ...OPTIONS, bins: 'quantile:3' };
      const names = columns.map(column => column.name);
      const { prepared } = await scanWeightedCodes(new MemoryScanner(columns), names, options);
      // fewer distinct rows than rows: the weights carry the counts
      expect(prepared.weights.length).toBeLessThan(prepared.rows);
      const direct = JSON.stringify(analyze(columns, options));
      for (const workers of [1, 2]) {
        const run = await poolOf(workers).analyzePrepared(prepared, options);
        expect([workers, JSON.stringify(run.result) === direct]).toEqual([workers, true]);
      }
    });
  });

  describe('#analyze', () => {
    it('should give the same lattice bit for bit, and the result analyze gives, with 1, 2 and 3 workers', async () => {
      const columns = makeColumns(1500, 9);
      const direct = analyze(columns, OPTIONS);
      const whole = computeLattice(latticeInput(prepareColumns(columns, OPTIONS), OPTIONS));
      const used: number[] = [];
      for (const workers of [1, 2, 3]) {
        const run = await poolOf(workers).analyze(columns, OPTIONS, { includeLattice: true });
        expect(run.result).toEqual(direct);
        const lattice = run.lattice;
        if (!lattice) {
          throw new Error('the lattice was asked for');
        }
        expect([workers, firstBitDifference(lattice.entropy, whole.entropy)]).toEqual([workers, -1]);
        expect([workers, firstBitDifference(lattice.occupied, whole.occupied)]).toEqual([workers, -1]);
        used.push(run.workers);
      }
      expect(used).toEqual([1, 2, 3]);
    });

    it('should give the statistics analyze gives, bit for bit, with 1, 2 and 3 workers, and report the replicates', async () => {
      const columns = makeColumns(600, 7);
      const options: IAnalyzeOptions = {
        ...OPTIONS,
        maxOrder: 3,
        statistics: { surrogates: 45, bootstrap: 12, seed: 5, beyondPairs: 2, fitDraws: 20 }
      };
      const direct = JSON.stringify(analyze(columns, options));
      for (const workers of [1, 2, 3]) {
        const reports: IRunProgress[] = [];
        const run = await poolOf(workers).analyze(columns, options, { onProgress: p => reports.push(p) });
        expect([workers, JSON.stringify(run.result) === direct]).toEqual([workers, true]);
        expect(reports.some(report => report.phase === 'testing')).toBe(true);
        const last = reports[reports.length - 1];
        expect([last.replicatesDone, last.replicatesTotal, last.fraction]).toEqual([57, 57, 1]);
      }
      expect(JSON.parse(direct).multiplets[10].p_value).toEqual(expect.any(Number));
    });

    it('should reject bad statistics settings before any worker starts, naming the option', async () => {
      const factory = new InProcessFactory();
      const error = await rejection(
        poolOf(2, factory).analyze(makeColumns(50, 3), { statistics: { surrogates: 2.5 } })
      );
      expect(isPolyadicError(error) && error.detail.option).toBe('surrogates');
      expect(factory.made).toHaveLength(0);
    });

    it('should start workers only when needed, no more than the selected columns, and reuse them', async () => {
      const factory = new InProcessFactory();
      const pool = poolOf(4, factory);
      expect(pool.liveWorkers).toBe(0);
      const columns = makeColumns(200, 6);
      await pool.analyze(columns, { columns: ['c00', 'c01'] });
      expect(factory.made).toHaveLength(2);
      await pool.analyze(columns, {});
      expect(factory.made).toHaveLength(4);
      await pool.analyze(columns, { maxOrder: 2 });
      expect(factory.made).toHaveLength(4);
      expect(pool.liveWorkers).toBe(4);
      // Helpers drop their copy of the codes once the run is over.
      await settle();
      expect(factory.made.map(worker => worker.host.heldRuns)).toEqual([[], [], [], []]);
    });

    it('should report progress that never goes back and ends at 1, once, with the totals', async () => {
      const reports: IRunProgress[] = [];
      const pool = poolOf(3);
      const run = await pool.analyze(makeColumns(800, 10), OPTIONS, { onProgress: p => reports.push(p) });
      await settle(50);
      const fractions = reports.map(r => r.fraction);
      for (let i = 1; i < fractions.length; i++) {
        expect(fractions[i]).toBeGreaterThanOrEqual(fractions[i - 1]);
      }
      const last = reports[reports.length - 1];
      expect(last).toMatchObject({ phase: 'done', fraction: 1, remainingMs: 0, multipletsDone: 1023, multipletsTotal: 1023 });
      expect(last.unitsDone).toBe(last.unitsTotal);
      expect(reports.filter(r => r.fraction === 1)).toHaveLength(1);
      expect(run.result.multiplet_count).toBe(1023);
      // Phases in order, each at least once.
      const phases = reports.map(r => r.phase).filter((phase, i, all) => i === 0 || all[i - 1] !== phase);
      expect(phases).toEqual(['binning', 'walking', 'measuring', 'done']);
      // Every unit is done when the measures start.
      expect(reports.find(r => r.phase === 'measuring')?.unitsDone).toBe(last.unitsTotal);
    });

    it('should resolve a run whose listener cancels on the final report', async () => {
      const pool = poolOf(2);
      const seen: boolean[] = [];
      const run = await pool.analyze(makeColumns(100, 4), {}, {
        onProgress: progress => {
          if (progress.phase === 'done') {
            seen.push(pool.cancel());
          }
        }
      });
      expect(seen).toEqual([false]);
      expect(run.result.multiplet_count).toBe(15);
    });

    it('should keep reporting while the workers are busy, and stop reporting when cancelled', async () => {
      const workers: SilentWorker[] = [];
      const pool = new EnginePool({
        createWorker: () => {
          const worker = new SilentWorker();
          workers.push(worker);
          return worker;
        },
        workers: 2,
        progressInterval: 10
      });
      pools.push(pool);
      const reports: IRunProgress[] = [];
      const running = pool.analyze(makeColumns(50, 3), {}, { onProgress: p => reports.push(p) });
      await settle(120);
      // One report at the start, then one per interval although no worker answered.
      expect(reports.length).toBeGreaterThanOrEqual(4);
      expect(reports.every(r => r.phase === 'binning' && r.fraction === 0 && r.remainingMs === null)).toBe(true);
      expect(reports[reports.length - 1].elapsedMs).toBeGreaterThan(reports[0].elapsedMs);
      expect(workers[0].received.map(r => r.type)).toEqual(['prepare']);
      expect(pool.cancel()).toBe(true);
      const error = await rejection(running);
      expect(isRunCancelled(error)).toBe(true);
      expect((error as RunCancelled).kind).toBe('cancelled');
      const count = reports.length;
      await settle(60);
      expect(reports).toHaveLength(count);
      expect(workers.map(w => w.terminated)).toEqual([true, true]);
      expect(pool.isRunning).toBe(false);
      expect(pool.cancel()).toBe(false);
    });

    it('should cancel mid-walk: reject at once, terminate every worker, then run again with new workers', async () => {
      const factory = new InProcessFactory();
      const pool = poolOf(3, factory);
      const reports: IRunProgress[] = [];
      const columns = makeColumns(2000, 11);
      const running = pool.analyze(columns, OPTIONS, {
        onProgress: progress => {
          reports.push(progress);
          if (progress.phase === 'walking' && progress.unitsDone === 1) {
            pool.cancel();
          }
        }
      });
      const error = await rejection(running);
      expect(error).toBeInstanceOf(RunCancelled);
      const count = reports.length;
      expect(reports[count - 1]).toMatchObject({ phase: 'walking', unitsDone: 1 });
      expect(factory.made.map(worker => worker.isTerminated)).toEqual([true, true, true]);
      expect(pool.liveWorkers).toBe(0);
      await settle(50);
      expect(reports).toHaveLength(count);
      const again = await pool.analyze(columns, { ...OPTIONS, maxOrder: 2 });
      expect(again.result).toEqual(analyze(columns, { ...OPTIONS, maxOrder: 2 }));
      expect(factory.made).toHaveLength(6);
    });

    it('should reject with the engine error as a value: kind, message and detail', async () => {
      const pool = poolOf(2);
      const columns = makeColumns(100, 4);
      const spec = await rejection(pool.analyze(columns, { bins: 'quantile:many' }));
      expect(isPolyadicError(spec)).toBe(true);
      expect((spec as PolyadicError).kind).toBe('usage');
      expect(spec.message).toContain('Binning spec "quantile:many" is not valid');
      expect((spec as PolyadicError).detail).toEqual({ option: 'bins', value: 'quantile:many' });
      const unknown = (await rejection(pool.analyze(columns, { columns: ['c01', 'leaf_wetness'] }))) as PolyadicError;
      expect(unknown.detail).toEqual({ column: 'leaf_wetness', available: ['c00', 'c01', 'c02', 'c03'] });
      const limit = (await rejection(pool.analyze(columns, { maxMultiplets: 10 }))) as PolyadicError;
      expect(limit.kind).toBe('limit');
      expect(limit.message).toContain('4 columns up to order 4 make 15 multiplets, above the limit of 10');
      // The pool is fine afterwards.
      expect((await pool.analyze(columns, {})).result).toEqual(analyze(columns, {}));
    });

    it('should turn a worker that fails to start into an internal error, and start afresh next time', async () => {
      let calls = 0;
      const broken: BrokenWorker[] = [];
      const factory = new InProcessFactory();
      const pool = new EnginePool({
        createWorker: () => {
          if (calls++ < 2) {
            const worker = new BrokenWorker();
            broken.push(worker);
            return worker;
          }
          return factory.create();
        },
        workers: 2
      });
      pools.push(pool);
      const columns = makeColumns(100, 5);
      const error = (await rejection(pool.analyze(columns, {}))) as PolyadicError;
      expect(error.kind).toBe('internal');
      expect(error.message).toBe(
        'An engine worker stopped unexpectedly: SyntaxError: Unexpected token. A new worker starts with the next request.'
      );
      expect(broken.map(w => w.terminated)).toEqual([true, true]);
      expect((await pool.analyze(columns, {})).result).toEqual(analyze(columns, {}));
    });

    it('should refuse a second run while one is in progress', async () => {
      const pool = poolOf(2);
      const columns = makeColumns(300, 6);
      const first = pool.analyze(columns, {});
      const second = (await rejection(pool.analyze(columns, {}))) as PolyadicError;
      expect(second.kind).toBe('usage');
      expect(second.message).toBe('An analysis is already running; wait for it to finish or cancel it.');
      expect((await first).result.multiplet_count).toBe(63);
    });

    it('should copy the columns unless asked to hand them over', async () => {
      const pool = poolOf(2);
      const columns = makeColumns(100, 3);
      const numeric = columns[0] as Extract<ColumnView, { kind: 'numeric' }>;
      // A view into a larger buffer, as Arrow gives: copied even when handed over.
      const backing = new Float64Array(300);
      backing.set(numeric.values as Float64Array, 100);
      const view: ColumnView = { ...numeric, name: 'view', values: backing.subarray(100, 200) };
      await pool.analyze([...columns, view], {});
      expect(numeric.values.length).toBe(100);
      await pool.analyze([...columns, view], {}, { transferColumns: true });
      expect(numeric.values.byteLength).toBe(0);
      expect(backing.length).toBe(300);
      // Unselected columns are not sent at all, not even when handed over.
      const fresh = makeColumns(100, 3);
      const run = await pool.analyze(fresh, { columns: ['c01'], binsByColumn: { c00: 'width:2' } }, { transferColumns: true });
      expect(fresh.map(column => (column.kind === 'numeric' ? column.values : column.codes).byteLength)).toEqual([800, 0, 400]);
      expect(run.result).toEqual(analyze(makeColumns(100, 3), { columns: ['c01'], binsByColumn: { c00: 'width:2' } }));
      expect(run.result.warnings).toContain("A binning is given for column 'c00', which is not selected; it was not used.");
    });

    it('should reject pending work when disposed, and refuse work afterwards', async () => {
      const factory = new InProcessFactory();
      const pool = poolOf(2, factory);
      const running = pool.analyze(makeColumns(500, 8), {});
      const preview = pool.preview(makeColumns(500, 1)[0], 'width:5');
      pool.dispose();
      expect(await rejection(running)).toBeInstanceOf(RunCancelled);
      expect(await rejection(preview)).toBeInstanceOf(RunCancelled);
      expect(factory.made.every(worker => worker.isTerminated)).toBe(true);
      expect(pool.isDisposed).toBe(true);
      expect(await rejection(pool.analyze(makeColumns(5, 2), {}))).toBeInstanceOf(RunCancelled);
    });
  });

  describe('#preview', () => {
    it('should give what previewColumn gives, from a worker of its own, also during a run', async () => {
      const factory = new InProcessFactory();
      const pool = poolOf(2, factory);
      const columns = makeColumns(400, 6);
      const running = pool.analyze(columns, {});
      running.catch(() => undefined);
      const preview = await pool.preview(columns[4], 'fd', { resolution: 40 });
      expect(preview).toEqual(previewColumn(columns[4], 'fd', { resolution: 40 }));
      expect(pool.isRunning).toBe(true);
      await running;
      expect(pool.liveWorkers).toBe(3);
      const bad = (await rejection(pool.preview(columns[2], 'width:3'))) as PolyadicError;
      expect(bad.kind).toBe('usage');
      expect(bad.detail.column).toBe('c02');
      // Cancelling a run leaves the preview worker alone.
      const again = pool.analyze(columns, {});
      pool.cancel();
      await rejection(again);
      expect(pool.liveWorkers).toBe(1);
      expect((await pool.preview(columns[0])).binCounts.length).toBe(4);
    });
  });

  describe('defaultWorkerCount', () => {
    it('should leave one core free, use at most 4 workers and at least 1', () => {
      expect([1, 2, 3, 4, 5, 8, 64].map(defaultWorkerCount)).toEqual([1, 1, 2, 3, 4, 4, 4]);
      expect(defaultWorkerCount(undefined)).toBe(1);
    });

    it('should refuse a pool of no workers, naming the option', () => {
      expect(() => new EnginePool({ createWorker: new InProcessFactory().create, workers: 0 })).toThrow(
        'A pool needs a whole number of workers ≥ 1, not 0.'
      );
    });
  });
});
