/**
 * RequestChannel on a fake comm (test/bridge/fakes.ts): typed requests, replies matched by id
 * and read through the protocol's guards, and a reply of the wrong shape refused with a
 * protocol error that names the field, on its own and through KernelBridge.
 */
import type { JSONObject } from '@lumino/coreutils';

import { RequestChannel } from '../../src/bridge/channel';
import { KernelBridge } from '../../src/bridge/connector';
import { BridgeError } from '../../src/bridge/errors';
import type { IListingMessage } from '../../src/bridge/protocol';
import { failure, FakeComm, FakeKernel, FakeSession, flush, ISent } from './fakes';

const LABEL = { what: 'the test request', again: 'try it again' };

/** A channel on a fresh fake comm, with what it was pushed. */
function channelOn(kernel = new FakeKernel('k1')) {
  const comm = kernel.createComm('polyadic');
  const pushed: IListingMessage[] = [];
  const problems: BridgeError[] = [];
  const channel = new RequestChannel({
    comm,
    onListing: listing => pushed.push(listing),
    onProtocolError: error => problems.push(error)
  });
  return { kernel, comm, channel, pushed, problems };
}

/** A kernel side that answers every request with these messages (the request id filled in), then goes idle. */
function answerWith(kernel: FakeKernel, ...replies: JSONObject[]): void {
  kernel.respond = (comm: FakeComm, sent: ISent) => {
    for (const reply of replies) {
      comm.push({ ...reply, request_id: sent.data.request_id });
    }
    sent.future.finish();
  };
}

const CHUNK = { type: 'fetch_chunk', name: 'df', batch_index: 0, batch_count: 1, bytes_sent: 4, bytes_total: 4 };
const DONE = {
  type: 'fetch_done',
  name: 'df',
  rows: 3,
  original_rows: 3,
  sampled: false,
  seed: 0,
  columns: [],
  batch_count: 1,
  bytes_total: 4
};

describe('RequestChannel', () => {
  describe('#request', () => {
    it('should send the typed body with an id of its own and resolve with what final makes of the reply', async () => {
      const { comm, channel } = channelOn();
      const listing = await channel.request({ type: 'list' }, { label: LABEL, final: reply => reply.frames.length });
      expect(listing).toBe(0);
      const ids = [channel.request({ type: 'list' }, { label: LABEL, final: () => 0 })];
      ids.push(channel.request({ type: 'list' }, { label: LABEL, final: () => 0 }));
      await Promise.all(ids);
      const sentIds = comm.sent.map(sent => sent.data.request_id);
      expect(comm.sent.map(sent => sent.data)).toEqual(sentIds.map(id => ({ type: 'list', request_id: id })));
      expect(new Set(sentIds).size).toBe(3);
    });

    it('should hand every progress reply with its buffers to progress, in order, then resolve on the final one', async () => {
      const { kernel, channel } = channelOn();
      const piece = new DataView(new ArrayBuffer(4));
      kernel.respond = (comm, sent) => {
        const id = sent.data.request_id;
        comm.push({ ...CHUNK, request_id: id }, [piece]);
        comm.push({ ...CHUNK, batch_index: 1, request_id: id }, [piece]);
        comm.push({ ...DONE, request_id: id });
        sent.future.finish();
      };
      const seen: [number, unknown][] = [];
      const done = await channel.request(
        { type: 'fetch', name: 'df' },
        { label: LABEL, progress: (chunk, buffers) => seen.push([chunk.type === 'fetch_chunk' ? chunk.batch_index : -1, buffers[0]]), final: reply => reply }
      );
      expect(seen).toEqual([
        [0, piece],
        [1, piece]
      ]);
      expect(done.rows).toBe(3);
    });

    it('should refuse a final reply of the wrong shape with a protocol error naming the field', async () => {
      const { kernel, channel } = channelOn();
      answerWith(kernel, { ...DONE, rows: 'three' });
      let finished = false;
      const error = await failure(
        channel.request({ type: 'fetch', name: 'df' }, { label: LABEL, final: () => (finished = true) })
      );
      expect(finished).toBe(false);
      expect(error.reason).toBe('protocol');
      expect(error.detail).toEqual({ field: 'rows' });
      expect(error.message).toMatch(/^The kernel's 'fetch_done' message has no valid 'rows'/);
      expect(channel.pendingCount).toBe(0);
    });

    it('should refuse a progress reply of the wrong shape before progress sees it', async () => {
      const { kernel, channel } = channelOn();
      const { bytes_total: _dropped, ...withoutTotal } = CHUNK;
      answerWith(kernel, withoutTotal, DONE);
      const seen: unknown[] = [];
      const error = await failure(
        channel.request({ type: 'fetch', name: 'df' }, { label: LABEL, progress: chunk => seen.push(chunk), final: () => 0 })
      );
      expect(seen).toEqual([]);
      expect(error.detail.field).toBe('bytes_total');
    });

    it('should refuse a reply of a type that does not answer the request, saying what was expected', async () => {
      const { kernel, channel } = channelOn();
      answerWith(kernel, { type: 'results_ack', analysis_id: 'a', chunks_received: 1, chunk_count: 2 });
      const error = await failure(channel.request({ type: 'fetch', name: 'df' }, { label: LABEL, final: () => 0 }));
      expect(error.reason).toBe('protocol');
      expect(error.message).toMatch(/^The kernel replied 'results_ack' where fetch_chunk or fetch_file or fetch_done was expected/);
    });

    it("should reject an error reply with the kernel's message and detail, and refuse one of the wrong shape", async () => {
      const { kernel, channel } = channelOn();
      answerWith(kernel, { type: 'error', message: "No frame 'df'.", detail: { frame: 'df', hint: 'refresh' } });
      const refused = await failure(channel.request({ type: 'list' }, { label: LABEL, final: () => 0 }));
      expect(refused).toMatchObject({ reason: 'kernel', message: "No frame 'df'.", detail: { frame: 'df', hint: 'refresh' } });

      answerWith(kernel, { type: 'error', message: '', detail: {} });
      const silent = await failure(channel.request({ type: 'list' }, { label: LABEL, final: () => 0 }));
      expect(silent).toMatchObject({ reason: 'kernel', message: 'The kernel refused the request without saying why.' });

      answerWith(kernel, { type: 'error', message: 'Bad.', detail: 'frame df' });
      const malformed = await failure(channel.request({ type: 'list' }, { label: LABEL, final: () => 0 }));
      expect(malformed).toMatchObject({ reason: 'protocol', detail: { field: 'detail' } });
    });

    it('should reject with what progress throws', async () => {
      const { kernel, channel } = channelOn();
      answerWith(kernel, CHUNK, DONE);
      const thrown = new BridgeError('protocol', 'A piece arrived without its bytes.');
      const error = await failure(
        channel.request(
          { type: 'fetch', name: 'df' },
          {
            label: LABEL,
            progress: () => {
              throw thrown;
            },
            final: () => 0
          }
        )
      );
      expect(error).toBe(thrown);
    });

    it('should ignore replies to ids it did not send, and reject a request the kernel finished without answering', async () => {
      const { kernel, channel } = channelOn();
      kernel.respond = (comm, sent) => {
        comm.push({ ...DONE, request_id: 'someone-else' });
        sent.future.finish();
      };
      const error = await failure(channel.request({ type: 'fetch', name: 'df' }, { label: LABEL, final: () => 0 }));
      expect(error.reason).toBe('unanswered');
      expect(error.message).toBe('The kernel stopped before answering the test request (was it interrupted?); try it again.');
    });

    it('should keep a background request (a scan) past the kernel going idle, until its final reply, and tell its id', async () => {
      const { kernel, comm, channel } = channelOn();
      let answer: (() => void) | null = null;
      kernel.respond = (from, sent) => {
        // the kernel takes the scan, starts its thread and goes idle; the reply comes later
        sent.future.finish();
        answer = () => from.push({ type: 'scan_done', request_id: sent.data.request_id, name: 'rel', rows: 4, distinct_rows: 2, batch_count: 1, bytes_total: 8, engine: { name: 'duckdb', version: '1' } });
      };
      let id = '';
      const scan = channel.request(
        { type: 'scan', name: 'rel', step: 'group', columns: [{ name: 'x', edges: null }] },
        { label: LABEL, background: true, sent: requestId => (id = requestId), final: reply => reply.type }
      );
      await new Promise(resolve => setTimeout(resolve, 5));
      expect(channel.pendingCount).toBe(1);
      expect(id).toBe(comm.sent[0].data.request_id);
      (answer as unknown as () => void)();
      expect(await scan).toBe('scan_done');
    });

    it('should reject at once when the comm cannot send', async () => {
      const { comm, channel } = channelOn();
      comm.dispose();
      const error = await failure(channel.request({ type: 'list' }, { label: LABEL, final: () => 0 }));
      expect(error.reason).toBe('closed');
      expect(channel.pendingCount).toBe(0);
    });
  });

  describe('#close', () => {
    it('should reject what is pending with the reason and ignore what arrives afterwards', async () => {
      const { kernel, comm, channel, pushed } = channelOn();
      kernel.respond = () => undefined;
      const listing = channel.request({ type: 'list' }, { label: LABEL, final: () => 0 });
      await flush();
      expect(channel.pendingCount).toBe(1);
      channel.close('kernel-changed');
      const error = await failure(listing);
      expect(error).toMatchObject({
        reason: 'kernel-changed',
        message: "The notebook's kernel changed during the test request, which was cancelled; try it again."
      });
      comm.push(kernel.listing());
      await flush();
      expect(pushed).toEqual([]);
      expect(channel.isClosed).toBe(true);
    });
  });

  describe('pushes', () => {
    it('should hand a pushed listing over checked, and report one of the wrong shape', async () => {
      const { kernel, comm, pushed, problems } = channelOn();
      comm.push(kernel.listing());
      comm.push({ ...kernel.listing(), frames: [{ name: 'df', rows: 'many' }] });
      await flush();
      expect(pushed).toHaveLength(1);
      expect(problems).toHaveLength(1);
      expect(problems[0]).toMatchObject({ reason: 'protocol', detail: { field: 'frames[0].kind' } });
    });
  });
});

describe('KernelBridge', () => {
  describe('#refresh', () => {
    it('should reject a listing of the wrong shape and stay ready for the next request', async () => {
      const kernel = new FakeKernel('k1');
      const bridge = new KernelBridge({ sessionContext: new FakeSession(kernel) });
      await flush();
      expect(bridge.status.state).toBe('ready');
      const answer = kernel.respond;
      kernel.respond = (comm, sent) => {
        comm.push({ ...kernel.listing(sent.data.request_id as string), skipped: 'none' });
        sent.future.finish();
      };
      const error = await failure(bridge.refresh());
      expect(error).toMatchObject({ reason: 'protocol', detail: { field: 'skipped' } });
      expect(bridge.status.state).toBe('ready');
      kernel.respond = answer;
      expect((await bridge.refresh()).frames).toEqual([]);
      bridge.dispose();
    });

    it('should go to the error state, naming the field, when the kernel pushes a listing of the wrong shape', async () => {
      const kernel = new FakeKernel('k1');
      const bridge = new KernelBridge({ sessionContext: new FakeSession(kernel) });
      await flush();
      kernel.comm.push({ ...kernel.listing(), version: null });
      await flush();
      expect(bridge.status.state).toBe('error');
      expect(bridge.status.message).toMatch(/'listing' message has no valid 'version'/);
      expect(bridge.listing).toBeNull();
      bridge.dispose();
    });
  });

  describe('#sendResults', () => {
    it('should reject a stored reply whose row count is not a count', async () => {
      const kernel = new FakeKernel('k1');
      const bridge = new KernelBridge({ sessionContext: new FakeSession(kernel) });
      await flush();
      answerWith(kernel, { type: 'results_stored', analysis_id: 'a1', rows: '1' });
      const row = {
        columns: ['valve', 'flow'],
        order: 2,
        entropy: 1,
        co_information: -0.5,
        total_correlation: 0.5,
        dual_total_correlation: 0.5,
        o_information: 0,
        s_information: 1
      };
      const error = await failure(bridge.sendResults('a1', [row]));
      expect(error).toMatchObject({ reason: 'protocol', detail: { field: 'rows' } });
      bridge.dispose();
    });
  });
});
