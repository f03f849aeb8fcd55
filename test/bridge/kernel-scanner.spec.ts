/**
 * The kernel side of a scan, seen from the front end: the grouped table as pyarrow writes it
 * in the contract's layout (scan-protocol.md) decoded by the frame worker's host into key
 * columns and weights; and the KernelScanner driving the engine's scan driver over a bridge
 * whose replies follow the contract, giving the in-memory analysis's JSON, and cancelling.
 */
import * as fs from 'fs';
import * as path from 'path';

import { scanWeightedCodes } from '../../src/engine/aggregate/scan';
import { analyze, analyzeCodes } from '../../src/engine/analyze';
import { isCancellation, PolyadicError } from '../../src/engine/errors';
import { columnFromValues } from '../../src/engine/table';
import type { IAnalyzeOptions } from '../../src/engine/types';
import { BridgeError } from '../../src/bridge/errors';
import { FrameHost } from '../../src/bridge/frame-host';
import type { FrameResponse } from '../../src/bridge/frame-protocol';
import { KernelScanner } from '../../src/bridge/kernel-scanner';
import type { IScanDone } from '../../src/bridge/protocol';
import { MemoryScanner } from '../engine/scan-helpers';
import { runPython, tempFolder } from './helpers';
import { ContractBridge, done } from './scan-fakes';

/** pyarrow writes a group table: an int32 bin key with nulls, a float64 value key, a text key, int64 weights. */
const WRITE_GROUPS = `
import sys, pyarrow as pa
table = pa.table({
    "k0": pa.array([0, 2, None, 1], pa.int32()),
    "k1": pa.array([1.5, None, -2.0, 0.0], pa.float64()),
    "k2": pa.array(["ä", "b", None, "B"], pa.utf8()),
    "weight": pa.array([3, 1, 2, 4], pa.int64()),
})
sink = pa.BufferOutputStream()
with pa.ipc.new_stream(sink, table.schema) as writer:
    writer.write_table(table, max_chunksize=2)
open(sys.argv[1], "wb").write(sink.getvalue().to_pybytes())
`;

/** Decode bytes as a group table through the frame host, as the worker does. */
function decodeGroups(bytes: Uint8Array, scanDone: IScanDone): FrameResponse {
  let answer: FrameResponse | null = null;
  const host = new FrameHost(response => (answer = response));
  host.handle({ type: 'open', id: 1, total: bytes.byteLength });
  host.handle({ type: 'bytes', id: 1, bytes: bytes.slice().buffer as ArrayBuffer });
  host.handle({ type: 'decode-groups', id: 1, done: scanDone, pieces: false });
  return answer as unknown as FrameResponse;
}

describe('FrameHost', () => {
  describe('#handle decode-groups', () => {
    let bytes: Uint8Array;
    beforeAll(() => {
      const file = path.join(tempFolder('groups'), 'groups.arrow');
      runPython(WRITE_GROUPS, [file]);
      bytes = new Uint8Array(fs.readFileSync(file));
    });

    it("should give pyarrow's key columns with their nulls and the weights", () => {
      const response = decodeGroups(bytes, done(10, 4, bytes.byteLength));
      expect(response.type).toBe('groups');
      const { keys, weights } = (response as Extract<FrameResponse, { type: 'groups' }>).groups;
      expect(Array.from(weights)).toEqual([3, 1, 2, 4]);
      expect(keys[0]).toEqual({ kind: 'bins', codes: Int32Array.from([0, 2, -1, 1]), valid: Uint8Array.from([1, 1, 0, 1]) });
      expect(keys[1]).toEqual({ kind: 'numbers', values: Float64Array.from([1.5, 0, -2, 0]), valid: Uint8Array.from([1, 0, 1, 1]) });
      expect(keys[2]).toEqual({ kind: 'texts', values: ['ä', 'b', null, 'B'] });
    });

    it('should refuse a table whose weights do not add up to the rows scanned', () => {
      const response = decodeGroups(bytes, done(11, 4, bytes.byteLength));
      expect(response).toMatchObject({ type: 'failed', reason: 'protocol' });
      expect((response as { message: string }).message).toMatch(/counts 10 rows where the kernel scanned 11/);
    });
  });
});

describe('KernelScanner', () => {
  const columns = [
    columnFromValues('x', Float64Array.from({ length: 300 }, (_v, i) => (i % 37 === 0 ? NaN : Math.sin(i) * 10 + (i % 7))), 'float64'),
    columnFromValues('n', Float64Array.from({ length: 300 }, (_v, i) => i % 4), 'int64'),
    columnFromValues('s', Array.from({ length: 300 }, (_v, i) => (i % 11 === 0 ? null : ['wet', 'dry', 'damp'][i % 3]))),
    columnFromValues('b', Array.from({ length: 300 }, (_v, i) => (i % 13 === 0 ? null : i % 5 < 2)))
  ];

  for (const options of [{ bins: 'quantile:4', missing: 'category' }, { bins: 'doane', missing: 'drop' }] as IAnalyzeOptions[]) {
    it(`should give the in-memory JSON through the contract's replies under ${options.bins}, ${options.missing}`, async () => {
      const scanner = new KernelScanner({ bridge: new ContractBridge(new MemoryScanner(columns)), name: 'rel' });
      const { prepared } = await scanWeightedCodes(scanner, ['x', 'n', 's', 'b'], options);
      expect(scanner.scannedRows).toBe(300);
      expect(JSON.stringify(analyzeCodes(prepared, options))).toBe(JSON.stringify(analyze(columns, options)));
    });
  }

  it('should send a cancel naming the running scan and end the run as cancelled', async () => {
    const bridge = new ContractBridge(new MemoryScanner(columns));
    bridge.holdGroup = true;
    const stages: string[] = [];
    const scanner = new KernelScanner({ bridge, name: 'rel' });
    const run = scanWeightedCodes(scanner, ['n', 's'], {}, { onStage: stage => stages.push(stage) });
    while (!stages.includes('group')) {
      await new Promise(resolve => setTimeout(resolve, 1));
    }
    await new Promise(resolve => setTimeout(resolve, 1));
    expect(await scanner.cancel()).toBe(true);
    let error: unknown;
    await run.catch(e => (error = e));
    expect(isCancellation(error)).toBe(true);
    expect((error as PolyadicError).message).toBe("The scan of 'rel' was cancelled.");
    expect(bridge.cancels).toEqual(['g1']);
    // nothing runs any more: a later step is refused at once, without a request
    await expect(scanner.facts(['n'])).rejects.toThrow(/cancelled/);
  });

  it('should give the kernel error of a failed scan as it is', async () => {
    const bridge = new ContractBridge(new MemoryScanner(columns));
    bridge.scanFacts = async () => {
      throw new BridgeError('kernel', "Spark stopped the scan of 'rel': boom", { engine: 'spark', engine_message: 'boom\n at …' });
    };
    const scanner = new KernelScanner({ bridge, name: 'rel' });
    await expect(scanWeightedCodes(scanner, ['n'], {})).rejects.toMatchObject({ kind: 'kernel', message: "Spark stopped the scan of 'rel': boom" });
  });
});
