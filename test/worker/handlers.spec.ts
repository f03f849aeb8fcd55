import { analyze } from '../../src/engine/analyze';
import { binColumn } from '../../src/engine/binning';
import { isPolyadicError, PolyadicError } from '../../src/engine/errors';
import type { ColumnView, IAnalyzeOptions, INumericColumn } from '../../src/engine/types';
import { deserializeError, serializeError } from '../../src/worker/errors';
import { finishRun, prepareRun, previewColumn, WorkerHost } from '../../src/worker/handlers';
import {
  EngineRequest,
  EngineResponse,
  IErrorResponse,
  IPartsResponse,
  IPreparedResponse,
  IProgressResponse,
  IResultResponse,
  IWorkUnit,
  PROTOCOL_VERSION
} from '../../src/worker/protocol';
import { RowsUnpacker } from '../../src/worker/rows';
import { IPlannedUnit, planUnits, walkUnit } from '../../src/worker/units';
import { createIndexing } from '../../src/engine/multiplets';
import { makeColumns, runPython } from './helpers';

/** A host whose responses are collected (as structured clones, like a worker's). */
function recordingHost(): { host: WorkerHost; responses: EngineResponse[] } {
  const responses: EngineResponse[] = [];
  const host = new WorkerHost((response, transfer) => responses.push(structuredClone(response, { transfer })));
  return { host, responses };
}

/** The PolyadicError a call throws; fails the test when it throws nothing or something else. */
function thrown(call: () => unknown): PolyadicError {
  try {
    call();
  } catch (error) {
    if (isPolyadicError(error)) {
      return error;
    }
    throw error;
  }
  throw new Error('expected a PolyadicError, but nothing was thrown');
}

/** Prepare, walk unit by unit and finish through plain handler calls. */
function analyzeByHandlers(columns: ColumnView[], options: IAnalyzeOptions, workers: number) {
  const run = prepareRun(columns, options);
  const n = run.input.codes.length;
  const units = planUnits(createIndexing(n, Math.min(run.input.maxOrder, n)), workers);
  const parts = units.flatMap(unit => walkUnit(run.input, unit));
  return finishRun(run, parts);
}

const OPTION_SETS: IAnalyzeOptions[] = [
  {},
  { missing: 'category', estimator: 'miller-madow', units: 'nats' },
  { bins: 'width:3', binsByColumn: { c01: 'quantile:2', c02: 'categorical' }, maxOrder: 3, top: 5, estimator: 'shrinkage' },
  { columns: ['c04', 'c00', 'c03', 'c01'], estimator: 'chao-shen', missing: 'category' }
];

describe('handlers', () => {
  describe('#prepareRun, #finishRun', () => {
    it('should give what analyze gives, for any split of the walk', () => {
      const columns = makeColumns(500, 8);
      for (const options of OPTION_SETS) {
        const direct = analyze(columns, options);
        for (const workers of [1, 3]) {
          expect(analyzeByHandlers(columns, options, workers).result).toEqual(direct);
        }
      }
    });

    it('should count the multiplets and refuse too many before any walk', () => {
      const columns = makeColumns(50, 10);
      // Σ_{k=1..10} C(10, k) = 2^10 − 1 = 1023
      expect(prepareRun(columns, {}).multiplets).toBe(1023);
      const caught = thrown(() => prepareRun(columns, { maxOrder: 10, maxMultiplets: 500 }));
      expect(caught.kind).toBe('limit');
      expect(caught.message).toContain('1,023 multiplets');
    });
  });

  describe('#previewColumn', () => {
    const NUMPY_HISTOGRAMS = `
import json, sys
import numpy as np
cases = json.load(sys.stdin)
out = []
for case in cases:
    x = np.array([v for v in case['values'] if v is not None], dtype=float)
    x = x[np.isfinite(x)]
    fine, fine_edges = np.histogram(x, bins=case['resolution'])
    coarse = np.histogram(x, bins=np.array(case['edges'], dtype=float))[0] if case['edges'] else []
    out.append({'fine': fine.tolist(), 'fine_edges': fine_edges.tolist(), 'coarse': list(map(int, coarse))})
print(json.dumps(out))
`;

    /** A numeric column from values, null = missing. */
    function numeric(name: string, values: Array<number | null>): INumericColumn {
      const missing = Uint8Array.from(values, v => (v === null ? 1 : 0));
      return {
        kind: 'numeric',
        name,
        dtype: 'float64',
        values: Float64Array.from(values, v => (v === null ? NaN : v)),
        missing
      };
    }

    it('should count rows per bin and per fine bin as numpy.histogram does', () => {
      const integers = Array.from({ length: 101 }, (_, i) => i % 17); // many values on fine edges
      const skewed = Array.from({ length: 400 }, (_, i) => Math.exp((i % 37) / 9) - 3.25);
      const columns: Array<[INumericColumn, string, number]> = [
        [numeric('ints', integers), 'width:4', 16],
        [numeric('ints_fine', integers), 'quantile:3', 34],
        [numeric('skewed', skewed), 'fd', 256],
        [numeric('gaps', [0.1, null, 0.3, NaN, 0.7, 0.7, 0.7, 2.5, null, 1e-9]), 'sturges', 7],
        [numeric('constant', [4, 4, 4, 4]), 'width:2', 5]
      ];
      const previews = columns.map(([column, spec, resolution]) => previewColumn(column, spec, { resolution }));
      // Reference: numpy.histogram at test time, on the finite non-missing values.
      const reference = runPython(
        NUMPY_HISTOGRAMS,
        columns.map(([column], i) => ({
          values: Array.from(column.values as Float64Array, (v, row) => (column.missing?.[row] ? null : v)),
          resolution: previews[i].distribution.counts.length,
          edges: previews[i].binning.binning.edges ?? null
        }))
      ) as Array<{ fine: number[]; fine_edges: number[]; coarse: number[] }>;
      previews.forEach((preview, i) => {
        const distribution = preview.distribution;
        if (distribution.kind !== 'numeric') {
          throw new Error('expected a numeric distribution');
        }
        const name = columns[i][0].name;
        expect([name, Array.from(distribution.counts)]).toEqual([name, reference[i].fine]);
        expect([name, Array.from(distribution.edges)]).toEqual([name, reference[i].fine_edges]);
        expect([name, Array.from(preview.binCounts)]).toEqual([name, reference[i].coarse]);
      });
      // The gaps column: two nulls and a NaN are missing.
      expect(previews[3].missing).toBe(3);
      expect(previews[3].rows).toBe(10);
      // A constant column spans value ± 0.5, as numpy does.
      const constant = previews[4].distribution;
      expect(constant.kind === 'numeric' && [constant.low, constant.high]).toEqual([3.5, 4.5]);
    });

    it('should agree with binColumn on the binning and count bigint and integer columns', () => {
      const values = BigInt64Array.from([5n, -2n, 7n, 7n, 0n, 5n]);
      const column: ColumnView = { kind: 'numeric', name: 'ticks', dtype: 'int64', values, missing: null };
      const preview = previewColumn(column, 'width:3', { resolution: 9 });
      const binned = binColumn(column, 'width:3');
      expect(preview.binning).toEqual(binned.binning);
      // Hand count: edges linspace(−2, 7, 4) = −2, 1, 4, 7 → [−2, 0] | [] | [5, 5, 7, 7].
      expect(Array.from(preview.binCounts)).toEqual([2, 0, 4]);
      expect(preview.distribution.counts.reduce((a, b) => a + b, 0)).toBe(6);
    });

    it('should count categories and report infinite values apart', () => {
      const column: ColumnView = {
        kind: 'categorical',
        name: 'bed',
        dtype: 'category',
        codes: Int32Array.from([0, 2, 2, -1, 1, 2, 0]),
        categories: ['north', 'middle', 'south'],
        missing: null
      };
      const preview = previewColumn(column);
      expect(preview.distribution).toEqual({
        kind: 'categorical',
        categories: ['north', 'middle', 'south'],
        counts: Int32Array.from([2, 1, 3])
      });
      expect(preview.missing).toBe(1);
      const infinite = numeric('flow', [1, Infinity, 2, -Infinity, 3]);
      const asCategories = previewColumn(infinite, 'categorical', { resolution: 2 });
      expect(asCategories.distribution.kind === 'numeric' && asCategories.distribution.infinite).toBe(2);
      expect(Array.from(asCategories.distribution.counts)).toEqual([1, 2]);
    });

    it('should name the option and the column of a bad resolution or spec', () => {
      const column = numeric('light', [1, 2, 3]);
      expect(() => previewColumn(column, 'width:2', { resolution: 0 })).toThrow(
        'The preview resolution must be a whole number from 1 to 65536, not 0.'
      );
      expect(thrown(() => previewColumn(column, 'width:2', { resolution: 2.5 })).detail).toMatchObject({
        option: 'resolution',
        column: 'light'
      });
      expect(() => previewColumn(column, 'bands:3')).toThrow('"bands" is not a binning method');
    });
  });

  describe('#serializeError', () => {
    it('should keep kind, message and detail, and rebuild a PolyadicError', () => {
      const error = new PolyadicError('usage', "Unknown column 'x'.", { column: 'x', available: ['a', 'b'], count: 2n });
      const copy = structuredClone(serializeError(error));
      expect(copy).toEqual({
        kind: 'usage',
        message: "Unknown column 'x'.",
        detail: { column: 'x', available: ['a', 'b'], count: '2' }
      });
      const rebuilt = deserializeError(copy);
      expect(rebuilt).toBeInstanceOf(PolyadicError);
      expect([rebuilt.kind, rebuilt.message, rebuilt.detail.available]).toEqual(['usage', "Unknown column 'x'.", ['a', 'b']]);
    });

    it('should call an unexpected error internal and a failed allocation a limit', () => {
      const internal = serializeError(new TypeError('x is undefined'));
      expect(internal.kind).toBe('internal');
      expect(internal.message).toBe('The engine failed unexpectedly (TypeError: x is undefined).');
      expect(typeof internal.detail.stack).toBe('string');
      let allocation: unknown;
      try {
        new Float64Array(2 ** 52);
      } catch (error) {
        allocation = error;
      }
      expect(allocation).toBeInstanceOf(RangeError);
      expect(serializeError(allocation).kind).toBe('limit');
      expect(serializeError('plain text').message).toBe('The engine failed unexpectedly (plain text).');
    });
  });

  describe('WorkerHost', () => {
    const base = { protocol: PROTOCOL_VERSION };

    it('should run prepare, walk and finish to the result analyze gives, with progress per unit', () => {
      const columns = makeColumns(300, 7);
      const options: IAnalyzeOptions = { missing: 'category', estimator: 'miller-madow' };
      const { host, responses } = recordingHost();
      host.handle({ ...base, type: 'prepare', id: 1, run: 9, columns, options, shareCodes: true });
      const prepared = responses.pop() as IPreparedResponse;
      expect(prepared.type).toBe('prepared');
      expect(prepared.input.codes).toHaveLength(7);
      expect(prepared.multiplets).toBe(127);
      // A second host plays a helper worker: it gets the codes with its first walk.
      const helper = recordingHost();
      const units = planUnits(createIndexing(7, 7), 2);
      // The units as the pool sends them: without the planner's multiplet counts.
      const unitOf = ({ multiplets: _multiplets, ...unit }: IPlannedUnit): IWorkUnit => unit;
      const mine = units.filter((_, i) => i % 2 === 0).map(unitOf);
      const theirs = units.filter((_, i) => i % 2 === 1).map(unitOf);
      host.handle({ ...base, type: 'walk', id: 2, run: 9, units: mine });
      helper.host.handle({ ...base, type: 'walk', id: 3, run: 9, units: theirs, input: prepared.input });
      const progress = responses.filter((r): r is IProgressResponse => r.type === 'progress');
      expect(progress.map(p => [p.unitsDone, p.unitsTotal])).toEqual(mine.map((_, i) => [i + 1, mine.length]));
      expect(progress[progress.length - 1].multipletsDone).toBe(
        units.filter((_, i) => i % 2 === 0).reduce((sum, u) => sum + u.multiplets, 0)
      );
      const parts = [
        ...(responses.pop() as IPartsResponse).parts,
        ...(helper.responses.pop() as IPartsResponse).parts
      ];
      expect(helper.host.heldRuns).toEqual([9]);
      host.handle({ ...base, type: 'finish', id: 4, run: 9, parts, includeLattice: true });
      const result = responses.pop() as IResultResponse;
      // the rows travel packed (src/worker/rows.ts), the rest of the result as it is
      expect(result.result.multiplets).toEqual([]);
      const unpacker = new RowsUnpacker(result.packed!);
      unpacker.add(Infinity);
      expect({ ...result.result, multiplets: unpacker.rows }).toEqual(analyze(columns, options));
      expect(result.lattice?.entropy).toHaveLength(128);
      expect(host.heldRuns).toEqual([]);
      helper.host.handle({ ...base, type: 'release', id: 5, run: 9 });
      expect(helper.responses.pop()).toEqual({ type: 'released', id: 5, run: 9 });
      expect(helper.host.heldRuns).toEqual([]);
    });

    it('should answer failures with error values and keep nothing of a failed run', () => {
      const columns = makeColumns(40, 3);
      const { host, responses } = recordingHost();
      const requests: EngineRequest[] = [
        { ...base, type: 'prepare', id: 1, run: 1, columns, options: { bins: 'width:0' }, shareCodes: false },
        { ...base, type: 'prepare', id: 2, run: 2, columns, options: { columns: ['c00', 'nope'] }, shareCodes: false },
        { ...base, type: 'walk', id: 3, run: 3, units: [{ first: 0, last: 0 }] },
        { ...base, type: 'finish', id: 4, run: 3, parts: [], includeLattice: false }
      ];
      requests.forEach(request => host.handle(request));
      const errors = responses as IErrorResponse[];
      expect(errors.map(e => [e.type, e.id, e.run, e.error.kind])).toEqual([
        ['error', 1, 1, 'usage'],
        ['error', 2, 2, 'usage'],
        ['error', 3, 3, 'internal'],
        ['error', 4, 3, 'internal']
      ]);
      expect(errors[0].error.message).toContain('the bin count 0 is outside 1 … 1,000,000');
      expect(errors[0].error.detail).toEqual({ option: 'bins', value: 'width:0' });
      expect(errors[1].error.detail).toEqual({ column: 'nope', available: ['c00', 'c01', 'c02'] });
      expect(errors[2].error.message).toBe('This worker holds no codes for run 3.');
      expect(host.heldRuns).toEqual([]);
    });

    it('should refuse another protocol version and an unknown request type, naming them', () => {
      const { host, responses } = recordingHost();
      host.handle({ type: 'release', id: 1, run: 1, protocol: 0 });
      host.handle({ ...base, type: 'shuffle', id: 2 } as unknown as EngineRequest);
      const [version, unknown] = responses as IErrorResponse[];
      expect(version.error.message).toContain(`speaks protocol ${PROTOCOL_VERSION} but was sent protocol 0`);
      expect(unknown.error.message).toBe("Unknown request type 'shuffle' sent to the engine worker.");
      expect(unknown.id).toBe(2);
    });

    it('should send a preview with its arrays transferred', () => {
      const sent: ArrayBuffer[][] = [];
      const responses: EngineResponse[] = [];
      const host = new WorkerHost((response, transfer) => {
        sent.push(transfer);
        responses.push(response);
      });
      const column = makeColumns(64, 1)[0];
      host.handle({ ...base, type: 'preview', id: 7, column, spec: 'quantile:4', resolution: 32 });
      const response = responses[0];
      expect(response.type === 'preview' && response.preview).toEqual(previewColumn(column, 'quantile:4', { resolution: 32 }));
      // bin counts, fine counts and fine edges
      expect(sent[0]).toHaveLength(3);
    });
  });
});
