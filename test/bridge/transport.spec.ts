/**
 * The fetch transport: the handover route's client (src/bridge/handover.ts) against a fake
 * server, the frame codec in process (src/bridge/transport.ts, src/bridge/frame-host.ts), and
 * KernelBridge fetching through a file, with its fallback to the comm. Streams are written by
 * the kernel's own encoder at test time (test/bridge/helpers.ts).
 */
import * as fc from 'fast-check';

import { IFetchTransport, FrameCodec } from '../../src/bridge/transport';
import { HandoverRoute } from '../../src/bridge/handover';
import { KernelBridge } from '../../src/bridge/connector';
import { encodeMultiplets, MultipletColumnsBuilder } from '../../src/bridge/encode';
import type { IFetchProgress } from '../../src/bridge/decode';
import type { IFetchDone } from '../../src/bridge/protocol';
import { columnStats } from '../../src/panel/data/stats';
import type { ColumnView, IMultipletRow } from '../../src/engine/types';
import { failure, FakeComm, FakeKernel, FakeSession, flush, ISent } from './fakes';
import { bytesOf, encodeInKernel } from './helpers';

/** A token as the kernel issues them (43 URL-safe characters). */
const TOKEN = 'Greenhouse_bed-3_valve_and_flow_log_0123456';

/** A greenhouse frame encoded by the kernel: one stream, as a handover file holds it. */
let stream: { bytes: Uint8Array; done: IFetchDone; pieces: DataView[] };

beforeAll(() => {
  const frame =
    'pd.DataFrame({"air_temperature": np.linspace(14.0, 31.0, 500), ' +
    '"valve": pd.Categorical(["open", "shut"] * 250), "bed": np.arange(500) % 3})';
  const { pieces, done } = encodeInKernel(frame, 'max_batch_bytes=2048');
  const total = pieces.reduce((sum, piece) => sum + piece.byteLength, 0);
  const bytes = new Uint8Array(total);
  let at = 0;
  for (const piece of pieces) {
    bytes.set(bytesOf(piece), at);
    at += piece.byteLength;
  }
  stream = { bytes, done, pieces };
});

/** A fake server: the route's probe answer and the files it holds by token. */
class FakeServer {
  probe: { status: number; body: unknown } = { status: 200, body: { version: 1, available: true } };
  files = new Map<string, Uint8Array>();
  requests: string[] = [];
  /** Bytes per part of a response body. */
  partBytes = 700;

  request = async (path: string): Promise<Response> => {
    this.requests.push(path);
    if (path === 'polyadic/handover') {
      return new Response(JSON.stringify(this.probe.body), { status: this.probe.status });
    }
    const token = path.split('/').pop() ?? '';
    const file = this.files.get(token);
    if (file === undefined) {
      return new Response('{}', { status: 404 });
    }
    this.files.delete(token);
    const parts: Uint8Array[] = [];
    for (let at = 0; at < file.byteLength; at += this.partBytes) {
      parts.push(file.slice(at, at + this.partBytes));
    }
    return new Response(
      new ReadableStream<Uint8Array>({
        start(controller) {
          parts.forEach(part => controller.enqueue(part));
          controller.close();
        }
      }),
      { status: 200 }
    );
  };
}

/** A kernel that writes a file for a 'file' fetch (and puts it on the server), else sends pieces. */
function fileKernel(server: FakeServer): FakeKernel {
  const kernel = new FakeKernel('k-file');
  kernel.frames = {
    greenhouse: {
      info: {
        name: 'greenhouse',
        kind: 'pandas',
        rows: stream.done.original_rows,
        columns: stream.done.columns.map(column => ({ name: column.name, dtype: column.dtype, kind: column.kind })),
        memory_bytes: 0
      },
      pieces: stream.pieces,
      done: { ...stream.done, name: 'greenhouse' }
    }
  };
  kernel.respond = (comm: FakeComm, sent: ISent) => {
    if (sent.data.type === 'fetch' && sent.data.delivery === 'file') {
      const id = sent.data.request_id as string;
      server.files.set(TOKEN, stream.bytes);
      comm.push({ type: 'fetch_file', request_id: id, name: 'greenhouse', token: TOKEN, bytes_total: stream.bytes.byteLength });
      comm.push({
        ...(stream.done as unknown as Record<string, never>),
        name: 'greenhouse',
        request_id: id,
        batch_count: 1,
        bytes_total: stream.bytes.byteLength
      });
    } else {
      kernel.answer(comm, sent);
    }
    sent.future.finish();
  };
  return kernel;
}

/** A ready bridge on a kernel with the given transport. */
async function bridgeOn(kernel: FakeKernel, transport: IFetchTransport): Promise<KernelBridge> {
  const bridge = new KernelBridge({ sessionContext: new FakeSession(kernel), transport });
  await flush();
  expect(bridge.status.state).toBe('ready');
  return bridge;
}

/** The values of a column as plain numbers or labels, for comparing two fetches. */
function valuesOf(column: ColumnView): unknown[] {
  return column.kind === 'numeric' ? Array.from(column.values, Number) : Array.from(column.codes, code => column.categories[code]);
}

describe('HandoverRoute', () => {
  describe('#available', () => {
    it("should be true only for the route's own version saying it is available, and ask once", async () => {
      const server = new FakeServer();
      const route = new HandoverRoute(server.request);
      expect(await route.available()).toBe(true);
      expect(await route.available()).toBe(true);
      expect(server.requests).toEqual(['polyadic/handover']);
      for (const probe of [
        { status: 404, body: {} },
        { status: 200, body: { version: 2, available: true } },
        { status: 200, body: { version: 1, available: false } }
      ]) {
        const other = new FakeServer();
        other.probe = probe;
        expect(await new HandoverRoute(other.request).available()).toBe(false);
      }
    });
  });

  describe('#download', () => {
    it('should hand the body over part by part and refuse a token of the wrong shape without asking', async () => {
      const server = new FakeServer();
      server.files.set(TOKEN, stream.bytes);
      const parts: Uint8Array[] = [];
      await new HandoverRoute(server.request).download(TOKEN, part => parts.push(part));
      expect(parts.length).toBe(Math.ceil(stream.bytes.byteLength / server.partBytes));
      expect(Buffer.concat(parts).equals(Buffer.from(stream.bytes))).toBe(true);
      const error = await failure(new HandoverRoute(server.request).download('../../etc/passwd', () => undefined));
      expect(error.reason).toBe('protocol');
      expect(server.requests).toEqual([`polyadic/handover/${TOKEN}`]);
    });
  });
});

describe('FrameCodec', () => {
  it('should decode bytes pushed in arbitrary cuts into the frame the comm pieces give, with the facts counted', async () => {
    const codec = new FrameCodec();
    const cut = codec.open(stream.bytes.byteLength);
    for (let at = 0; at < stream.bytes.byteLength; at += 333) {
      cut.push(stream.bytes.subarray(at, at + 333), false);
    }
    const fromFile = await cut.decode({ ...stream.done, batch_count: 1 }, false);
    const pieces = codec.open(stream.bytes.byteLength);
    stream.pieces.forEach(piece => pieces.push(bytesOf(piece), false));
    const fromPieces = await pieces.decode(stream.done, true);
    expect(fromFile.frame.columns.map(valuesOf)).toEqual(fromPieces.frame.columns.map(valuesOf));
    expect(fromFile.frame.rows).toBe(500);
    expect(fromFile.stats.map(stats => stats.distinct)).toEqual([500, 2, 3]);
  });

  it('should refuse a stream that arrived incomplete, naming the frame', async () => {
    const codec = new FrameCodec();
    const cut = codec.open(stream.bytes.byteLength);
    cut.push(stream.bytes.subarray(0, 100), false);
    const error = await failure(cut.decode(stream.done, false));
    expect(error.reason).toBe('protocol');
    expect(error.message).toMatch(/arrived incomplete \(100 of \d+ bytes\)/);
  });

  it('should encode a table read in slices to the same bytes as all rows at once', async () => {
    const rows: IMultipletRow[] = Array.from({ length: 5000 }, (_, i) => ({
      columns: i % 3 === 0 ? ['valve_command', 'flow_meter', 'leak_alarm'] : ['humidity_a', 'humidity_b'],
      order: i % 3 === 0 ? 3 : 2,
      entropy: i / 7,
      co_information: -i / 11,
      total_correlation: i / 13,
      dual_total_correlation: i / 17,
      o_information: i / 19,
      s_information: i / 23,
      ...(i % 5 === 0 ? { p_value: null } : { p_value: i / 5000 })
    }));
    const builder = new MultipletColumnsBuilder(rows.length);
    for (let end = 777; builder.done < rows.length; end += 777) {
      builder.add(rows, end);
    }
    const viaWorker = await new FrameCodec().encode(builder.finish());
    expect(Buffer.from(viaWorker).equals(Buffer.from(encodeMultiplets(rows)))).toBe(true);
  });
});

describe('KernelBridge', () => {
  describe('#fetch', () => {
    it('should fetch through the handover file when the server has the route, with progress to the last byte', async () => {
      const server = new FakeServer();
      const kernel = fileKernel(server);
      const bridge = await bridgeOn(kernel, { codec: new FrameCodec(), route: new HandoverRoute(server.request) });
      const progress: IFetchProgress[] = [];
      const frame = await bridge.fetch('greenhouse', undefined, { onProgress: step => progress.push(step) });
      expect(kernel.comm.sent.find(sent => sent.data.type === 'fetch')?.data.delivery).toBe('file');
      expect(server.requests).toEqual(['polyadic/handover', `polyadic/handover/${TOKEN}`]);
      expect(frame.rows).toBe(500);
      const viaComm = await bridgeOn(fileKernel(new FakeServer()), { codec: new FrameCodec(), route: null });
      const reference = await viaComm.fetch('greenhouse');
      expect(frame.columns.map(valuesOf)).toEqual(reference.columns.map(valuesOf));
      const received = progress.map(step => step.bytesReceived);
      expect(received).toEqual([...received].sort((a, b) => a - b));
      expect(received[received.length - 1]).toBe(stream.bytes.byteLength);
      // The facts counted in the codec are those of the views handed over.
      expect(columnStats(frame.columns[1]).distinct).toBe(2);
      bridge.dispose();
      viaComm.dispose();
    });

    it('should fetch again over the comm when the server lacks the file, and not try the route again', async () => {
      const server = new FakeServer();
      const kernel = fileKernel(server);
      // A kernel on another machine: its files never reach this server.
      const lost = (comm: FakeComm, sent: ISent) => {
        const respond = fileKernel(new FakeServer()).respond;
        respond(comm, sent);
      };
      kernel.respond = lost;
      const bridge = await bridgeOn(kernel, { codec: new FrameCodec(), route: new HandoverRoute(server.request) });
      const frame = await bridge.fetch('greenhouse');
      expect(frame.rows).toBe(500);
      const deliveries = kernel.comm.sent.filter(sent => sent.data.type === 'fetch').map(sent => sent.data.delivery ?? 'comm');
      expect(deliveries).toEqual(['file', 'comm']);
      await bridge.fetch('greenhouse');
      const after = kernel.comm.sent.filter(sent => sent.data.type === 'fetch').map(sent => sent.data.delivery ?? 'comm');
      expect(after).toEqual(['file', 'comm', 'comm']);
      bridge.dispose();
    });

    it('should use the comm alone when the server has no route', async () => {
      const server = new FakeServer();
      server.probe = { status: 404, body: {} };
      const kernel = fileKernel(server);
      const bridge = await bridgeOn(kernel, { codec: new FrameCodec(), route: new HandoverRoute(server.request) });
      expect((await bridge.fetch('greenhouse')).rows).toBe(500);
      expect(kernel.comm.sent.find(sent => sent.data.type === 'fetch')?.data.delivery).toBeUndefined();
      bridge.dispose();
    });
  });
});

describe('columnStats', () => {
  it('should count distinct values as a Set does, with −0 and +0 as one value and NaN as missing', () => {
    // Reference: JavaScript's Set (SameValueZero equality, ECMA-262 §7.2.11) over the present values.
    fc.assert(
      fc.property(
        fc.array(fc.oneof(fc.double(), fc.constantFrom(0, -0, NaN, 1.5, -2.25, Infinity)), { maxLength: 400 }),
        values => {
          const column: ColumnView = { kind: 'numeric', name: 'leaf_wetness', dtype: 'float64', values: Float64Array.from(values), missing: null };
          const present = values.filter(x => !Number.isNaN(x));
          const stats = columnStats(column);
          expect(stats.distinct).toBe(new Set(present).size);
          expect(stats.missing).toBe(values.length - present.length);
        }
      ),
      { seed: 20311303, numRuns: 300 }
    );
  });
});
