/**
 * KernelBridge against a fake session, kernel and comm (test/bridge/fakes.ts) that serve the
 * Arrow pieces the kernel's own encoder writes at test time.
 */
import type { ISessionContext } from '@jupyterlab/apputils';
import type { Kernel } from '@jupyterlab/services';

import * as arrow from 'apache-arrow';

import { IBridgeStatus, IListing, KernelBridge } from '../../src/bridge/connector';
import type { IFetchProgress } from '../../src/bridge/decode';
import { encodeMultiplets } from '../../src/bridge/encode';
import type { IBridgeKernel, IBridgeSession } from '../../src/bridge/kernel';
import { BridgeRegistry } from '../../src/bridge/registry';
import type { IMultipletRow } from '../../src/engine/types';
import { failure, FakeKernel, FakeSession, flush, IFakeFrame } from './fakes';
import { fixturePieces, IFixtures, writeFixtures } from './helpers';

// JupyterLab's own types must fit the bridge's narrow ones: if they stop fitting, this file
// no longer compiles and every spec in it fails.
export const fromSessionContext = (context: ISessionContext): IBridgeSession => context;
export const fromKernel = (kernel: Kernel.IKernelConnection): IBridgeKernel => kernel;

let fixtures: IFixtures;

beforeAll(() => {
  fixtures = writeFixtures();
});

/** A fixture as a frame of the fake kernel. */
function frameOf(name: string): IFakeFrame {
  const done = fixtures.byName[name].fetch_done;
  return {
    info: {
      name,
      kind: 'pandas',
      rows: done.original_rows,
      columns: done.columns.map(column => ({ name: column.name, dtype: column.dtype, kind: column.kind })),
      memory_bytes: 0
    },
    pieces: fixturePieces(fixtures, name),
    done
  };
}

/** A Python kernel with the chunked and sampled fixtures as frames. */
function pythonKernel(id = 'k1'): FakeKernel {
  const kernel = new FakeKernel(id);
  kernel.frames = { chunked: frameOf('chunked'), sampled: frameOf('sampled') };
  return kernel;
}

/** A bridge on a fake session, with every status it went through. */
async function connected(kernel: FakeKernel | null = pythonKernel()) {
  const session = new FakeSession(kernel);
  const bridge = new KernelBridge({ sessionContext: session });
  const states: IBridgeStatus[] = [];
  bridge.statusChanged.connect((_, status) => states.push(status));
  await flush();
  return { session, bridge, states };
}

describe('KernelBridge', () => {
  describe('#constructor', () => {
    it('should import polyadic silently, open the comm and become ready on the first listing', async () => {
      const kernel = pythonKernel();
      const session = new FakeSession(kernel);
      const bridge = new KernelBridge({ sessionContext: session });
      const states: string[] = [];
      bridge.statusChanged.connect((_, status) => states.push(status.state));
      expect(bridge.status.state).toBe('starting');
      await flush();
      expect(states).toEqual(['ready']);
      expect(bridge.status).toMatchObject({ state: 'ready', kernelVersion: '0.1.0', language: 'python' });
      expect(kernel.executed).toHaveLength(1);
      const request = kernel.executed[0];
      // Nothing runs as a cell: no code, no output, no history, no abort of queued cells.
      expect(request).toMatchObject({ code: '', silent: true, store_history: false, stop_on_error: false, allow_stdin: false });
      expect(request.user_expressions?.polyadic).toContain("__import__('polyadic')");
      expect(kernel.comms.map(comm => [comm.targetName, comm.opened])).toEqual([['polyadic', true]]);
      expect(bridge.listing?.frames.map(frame => frame.name)).toEqual(['chunked', 'sampled']);
      bridge.dispose();
    });

    it('should say so when the notebook has no kernel', async () => {
      const { bridge } = await connected(null);
      expect(bridge.status.state).toBe('no-kernel');
      const error = await failure(bridge.fetch('chunked'));
      expect(error.reason).toBe('state');
      expect(error.message).toMatch(/no kernel/);
    });

    it('should stop at a kernel in another language with the Python-only state', async () => {
      const kernel = new FakeKernel('r1', 'R');
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('not-python');
      expect(bridge.status.message).toBe("Python kernels only, for now: this notebook's kernel runs R.");
      expect(kernel.executed).toHaveLength(0);
      expect(kernel.comms).toHaveLength(0);
    });

    it('should give the pip commands when the kernel cannot import polyadic, and connect after a retry', async () => {
      const kernel = pythonKernel();
      kernel.importError = { ename: 'ModuleNotFoundError', evalue: "No module named 'polyadic'" };
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('missing-package');
      expect(bridge.status.message).toContain('pip install polyadic');
      expect(bridge.status.message).toContain('pip install -e .');
      expect(bridge.status.message.split('. ').length).toBe(1);
      expect(bridge.status.commands).toEqual(['pip install polyadic', 'pip install -e .']);
      expect(kernel.comms).toHaveLength(0);

      kernel.importError = null;
      await bridge.reconnect();
      await flush();
      expect(bridge.status.state).toBe('ready');
    });

    it("should name a missing dependency of polyadic in the missing-package message", async () => {
      const kernel = pythonKernel();
      kernel.importError = { ename: 'ModuleNotFoundError', evalue: "No module named 'pyarrow'" };
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('missing-package');
      expect(bridge.status.message).toContain("No module named 'pyarrow'");
    });

    it('should report any other import failure as an error with its text', async () => {
      const kernel = pythonKernel();
      kernel.importError = { ename: 'RuntimeError', evalue: 'numpy ABI mismatch' };
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('error');
      expect(bridge.status.message).toContain('RuntimeError: numpy ABI mismatch');
    });

    it('should report a kernel that closes the comm it was asked to open', async () => {
      const kernel = pythonKernel();
      kernel.onOpen = comm => comm.closeFromKernel();
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('error');
      expect(bridge.status.message).toMatch(/did not open Polyadic's comm/);
    });

    it('should report a kernel that goes idle after the open without a listing', async () => {
      const kernel = pythonKernel();
      kernel.onOpen = (_, future) => future.finish();
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('error');
    });

    it("should refuse a kernel package that speaks another protocol version", async () => {
      const kernel = pythonKernel();
      kernel.protocol = 1;
      const { bridge } = await connected(kernel);
      expect(bridge.status.state).toBe('error');
      expect(bridge.status.message).toMatch(/protocol 1 .* speaks 2/);
      expect(kernel.comm.closedByFrontEnd).toBe(true);
    });
  });

  describe('#framesChanged', () => {
    it('should take the listing the kernel pushes after a cell', async () => {
      const { session, bridge } = await connected();
      const seen: (IListing | null)[] = [];
      bridge.framesChanged.connect((_, listing) => seen.push(listing));
      delete session.kernel.frames.sampled;
      session.kernel.comm.push(session.kernel.listing());
      await flush();
      expect(seen.map(listing => listing?.frames.map(frame => frame.name))).toEqual([['chunked']]);
      expect(bridge.listing?.frames.map(frame => frame.name)).toEqual(['chunked']);
    });
  });

  describe('#refresh', () => {
    it('should ask for a listing and resolve with it', async () => {
      const { session, bridge } = await connected();
      const listing = await bridge.refresh();
      expect(listing.frames.map(frame => frame.name)).toEqual(['chunked', 'sampled']);
      expect(session.kernel.comm.sent.map(sent => sent.data.type)).toEqual(['list']);
    });
  });

  describe('#fetch', () => {
    it('should send the row cap and seed and resolve with the decoded columns and progress', async () => {
      const { session, bridge } = await connected();
      const progress: IFetchProgress[] = [];
      const frame = await bridge.fetch('chunked', ['row', 'zone'], {
        rowCap: 5000,
        seed: 3,
        onProgress: step => progress.push(step)
      });
      const request = session.kernel.comm.sent[0].data;
      expect(request).toMatchObject({ type: 'fetch', name: 'chunked', columns: ['row', 'zone'], row_cap: 5000, sample_seed: 3 });
      expect(frame.rows).toBe(1000);
      expect(frame.columns.map(column => column.name)).toEqual(['row', 'value', 'zone']);
      expect(progress.length).toBe(fixtures.byName.chunked.pieces.length);
      expect(progress[progress.length - 1].bytesReceived).toBe(fixtures.byName.chunked.fetch_done.bytes_total);
    });

    it('should expose a sample: its size, seed and the rows of the frame', async () => {
      const { bridge } = await connected();
      const frame = await bridge.fetch('sampled', undefined, { rowCap: 100, seed: 7 });
      expect(frame).toMatchObject({ sampled: true, rows: 100, originalRows: 1000, seed: 7 });
    });

    it('should reject a frame deleted since the listing with an error naming it, and refresh the list', async () => {
      const { session, bridge } = await connected();
      const error = await failure(bridge.fetch('greenhouse'));
      expect(error.reason).toBe('kernel');
      expect(error.detail.frame).toBe('greenhouse');
      expect(error.message).toContain("'greenhouse'");
      await flush();
      expect(session.kernel.comm.sent.map(sent => sent.data.type)).toEqual(['fetch', 'list']);
    });

    it("should surface the kernel's error for a mixed column with its detail", async () => {
      const { session, bridge } = await connected();
      session.kernel.respond = (comm, sent) => {
        comm.push({
          type: 'error',
          request_id: sent.data.request_id as string,
          message: "Column 'reading' mixes float and str; convert it to one type first.",
          detail: { column: 'reading', types: ['float', 'str'] }
        });
        sent.future.finish();
      };
      const error = await failure(bridge.fetch('chunked'));
      expect(error).toMatchObject({ reason: 'kernel', detail: { column: 'reading', types: ['float', 'str'] } });
      expect(error.message).toMatch(/mixes float and str/);
    });

    it('should reject on a kernel restart mid-transfer, then re-import and re-open the comm', async () => {
      const { session, bridge } = await connected();
      const kernel = session.kernel;
      kernel.respond = (comm, sent) => kernel.answer(comm, sent, { pieces: 2 });
      const fetching = bridge.fetch('chunked');
      await flush();
      expect(kernel.comm.sent).toHaveLength(1);
      session.restart();
      const error = await failure(fetching);
      expect(error.reason).toBe('restart');
      expect(error.message).toMatch(/restarted .* during the fetch of 'chunked'.*fetch 'chunked' again/);
      expect(bridge.status.state).toBe('starting');
      expect(bridge.listing).toBeNull();

      kernel.respond = (comm, sent) => {
        kernel.answer(comm, sent);
        sent.future.finish();
      };
      session.back();
      await flush();
      expect(bridge.status.state).toBe('ready');
      expect(kernel.executed).toHaveLength(2);
      expect(kernel.comms).toHaveLength(2);
      expect(kernel.comms[0].closedByFrontEnd).toBe(false);
      expect((await bridge.fetch('chunked')).rows).toBe(1000);
    });

    it('should reject a request the kernel finished without answering (an interrupt)', async () => {
      const { session, bridge } = await connected();
      const kernel = session.kernel;
      kernel.respond = (comm, sent) => {
        kernel.answer(comm, sent, { pieces: 1 });
        sent.future.finish();
      };
      const error = await failure(bridge.fetch('chunked'));
      expect(error.reason).toBe('unanswered');
      expect(error.message).toMatch(/stopped before answering the fetch of 'chunked' \(was it interrupted\?\)/);
      expect(bridge.status.state).toBe('ready');
    });

    it('should reject when the kernel closes the comm mid-transfer, then open a new comm', async () => {
      const { session, bridge } = await connected();
      const kernel = session.kernel;
      kernel.respond = (comm, sent) => kernel.answer(comm, sent, { pieces: 1 });
      const fetching = bridge.fetch('chunked');
      await flush();
      kernel.comm.closeFromKernel();
      const error = await failure(fetching);
      expect(error.reason).toBe('closed');
      await flush();
      expect(kernel.comms).toHaveLength(2);
      expect(bridge.status.state).toBe('ready');
    });

    it('should give up re-opening a comm the kernel keeps closing', async () => {
      const { session, bridge } = await connected();
      session.kernel.comm.closeFromKernel();
      await flush();
      expect(bridge.status.state).toBe('ready');
      session.kernel.comm.closeFromKernel();
      await flush();
      expect(bridge.status.state).toBe('error');
      expect(bridge.status.message).toMatch(/keeps closing/);
      expect(session.kernel.comms).toHaveLength(2);
    });

    it('should reject when the notebook switches kernels, close the old comm and connect the new kernel', async () => {
      const { session, bridge } = await connected();
      const old = session.kernel;
      old.respond = (comm, sent) => old.answer(comm, sent, { pieces: 1 });
      const fetching = bridge.fetch('chunked');
      await flush();
      const next = pythonKernel('k2');
      session.changeKernel(next);
      const error = await failure(fetching);
      expect(error.reason).toBe('kernel-changed');
      expect(old.comm.closedByFrontEnd).toBe(true);
      await flush();
      expect(bridge.status.state).toBe('ready');
      expect(next.comms).toHaveLength(1);
    });

    it('should reject when the connection is lost and reconnect when it is back', async () => {
      const { session, bridge } = await connected();
      const kernel = session.kernel;
      kernel.respond = () => undefined;
      const fetching = bridge.fetch('chunked');
      await flush();
      session.connectionStatusChanged.emit('connecting');
      const error = await failure(fetching);
      expect(error.reason).toBe('connection');
      expect(bridge.status.state).toBe('starting');
      session.connectionStatusChanged.emit('connected');
      await flush();
      expect(bridge.status.state).toBe('ready');
      expect(kernel.executed).toHaveLength(2);
    });

    it('should go to the error state when the kernel dies, rejecting what was pending', async () => {
      const { session, bridge } = await connected();
      session.kernel.respond = () => undefined;
      const fetching = bridge.fetch('chunked');
      await flush();
      session.statusChanged.emit('dead');
      expect((await failure(fetching)).reason).toBe('restart');
      expect(bridge.status.state).toBe('error');
      expect(bridge.status.message).toMatch(/kernel died/);
    });

    it('should reject a malformed piece with a protocol error', async () => {
      const { session, bridge } = await connected();
      session.kernel.respond = (comm, sent) => {
        comm.push({
          type: 'fetch_chunk',
          request_id: sent.data.request_id as string,
          name: 'chunked',
          batch_index: 0,
          batch_count: 1,
          bytes_sent: 4,
          bytes_total: 4
        });
        sent.future.finish();
      };
      expect((await failure(bridge.fetch('chunked'))).reason).toBe('protocol');
    });

    it.each([
      [['', undefined, {}], 'name'],
      [['chunked', [], {}], 'columns'],
      [['chunked', undefined, { rowCap: 0 }], 'rowCap'],
      [['chunked', undefined, { rowCap: 1.5 }], 'rowCap'],
      [['chunked', undefined, { seed: -1 }], 'seed']
    ] as [Parameters<KernelBridge['fetch']>, string][])('should refuse bad arguments, naming the option %#', async (args, option) => {
      const { session, bridge } = await connected();
      const error = await failure(bridge.fetch(...args));
      expect(error).toMatchObject({ reason: 'usage', detail: { option } });
      expect(session.kernel.comm.sent).toHaveLength(0);
    });
  });

  describe('#sendResults', () => {
    const rows: IMultipletRow[] = Array.from({ length: 300 }, (_, i) => ({
      columns: ['leak_alarm', `soil_moisture_${i}`],
      order: 2,
      entropy: i / 3,
      co_information: -i / 5,
      total_correlation: i / 7,
      dual_total_correlation: i / 9,
      o_information: i / 7 - i / 9,
      s_information: i / 7 + i / 9
    }));

    it('should send chunks of their own buffers below the limit, meta on the first, and resolve when stored', async () => {
      const { session, bridge } = await connected();
      const kernel = session.kernel;
      kernel.storedRows = parts => arrow.tableFromIPC(Buffer.concat(parts)).numRows;
      const progress: number[] = [];
      const receipt = await bridge.sendResults('analysis-7', rows, {
        chunkBytes: 2048,
        meta: { frame: 'greenhouse', units: 'bits' },
        onProgress: step => progress.push(step.chunksSent)
      });
      const sent = kernel.comm.sent;
      const expected = encodeMultiplets(rows);
      expect(receipt).toEqual({ analysisId: 'analysis-7', rows: 300, chunks: sent.length, bytes: expected.byteLength });
      expect(sent.length).toBe(Math.ceil(expected.byteLength / 2048));
      expect(progress).toEqual(sent.map((_, i) => i + 1));
      for (const [index, message] of sent.entries()) {
        expect(message.data).toMatchObject({ type: 'results_chunk', analysis_id: 'analysis-7', chunk_index: index });
        expect('meta' in message.data).toBe(index === 0);
        // JupyterLab serializes a view's whole buffer: every chunk must own its buffer.
        const buffer = message.buffers[0];
        const owned = ArrayBuffer.isView(buffer) ? buffer.buffer : buffer;
        expect(owned.byteLength).toBeLessThanOrEqual(2048);
        expect(ArrayBuffer.isView(buffer) ? buffer.byteLength : buffer.byteLength).toBe(owned.byteLength);
      }
      expect(sent[0].data.meta).toEqual({ frame: 'greenhouse', units: 'bits' });
      expect(Buffer.concat(kernel.results.get('analysis-7')!).equals(Buffer.from(expected))).toBe(true);
    });

    it('should stop at a kernel error and reject with its message', async () => {
      const { session, bridge } = await connected();
      const kernel = session.kernel;
      kernel.respond = (comm, sent) => {
        if (sent.data.chunk_index === 1) {
          comm.push({
            type: 'error',
            request_id: sent.data.request_id as string,
            message: 'Results chunk 1 arrived twice with different bytes.',
            detail: { option: 'chunk_index' }
          });
        } else {
          kernel.answer(comm, sent);
        }
        sent.future.finish();
      };
      const error = await failure(bridge.sendResults('analysis-8', rows, { chunkBytes: 1024 }));
      expect(error).toMatchObject({ reason: 'kernel', detail: { option: 'chunk_index' } });
      expect(kernel.comm.sent).toHaveLength(2);
    });

    it('should refuse a chunk size above the server-safe limit and an empty analysis id', async () => {
      const { bridge } = await connected();
      expect((await failure(bridge.sendResults('a', rows, { chunkBytes: 9 * 1024 * 1024 }))).detail.option).toBe('chunkBytes');
      expect((await failure(bridge.sendResults('', rows))).detail.option).toBe('analysisId');
    });
  });

  describe('#dispose', () => {
    it('should reject pending requests, close the comm and refuse new requests', async () => {
      const { session, bridge } = await connected();
      session.kernel.respond = () => undefined;
      const fetching = bridge.fetch('chunked');
      const listing = bridge.refresh();
      await flush();
      bridge.dispose();
      expect((await failure(fetching)).reason).toBe('disposed');
      expect((await failure(listing)).reason).toBe('disposed');
      expect(session.kernel.comm.closedByFrontEnd).toBe(true);
      expect((await failure(bridge.fetch('chunked'))).reason).toBe('disposed');
      expect(bridge.isDisposed).toBe(true);
    });

    it('should follow the session: disposed with it', async () => {
      const { session, bridge } = await connected();
      session.dispose();
      expect(bridge.isDisposed).toBe(true);
    });
  });
});

describe('BridgeRegistry', () => {
  describe('#bridgeFor', () => {
    it('should keep one bridge per session and drop it when the session is disposed', async () => {
      const registry = new BridgeRegistry();
      const first = new FakeSession(pythonKernel('a'));
      const second = new FakeSession(pythonKernel('b'));
      const bridge = registry.bridgeFor(first);
      expect(registry.bridgeFor(first)).toBe(bridge);
      expect(registry.bridgeFor(second)).not.toBe(bridge);
      expect(registry.size).toBe(2);
      await flush();
      expect(first.kernel.executed).toHaveLength(1);
      first.dispose();
      expect(bridge.isDisposed).toBe(true);
      expect(registry.size).toBe(1);
      registry.dispose();
      expect(second.kernel.comm.closedByFrontEnd).toBe(true);
    });
  });
});
