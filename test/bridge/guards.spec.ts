/**
 * The type guards of the kernel's messages: they accept every message the kernel's own bridge
 * (polyadic/bridge.py, driven at test time with a recording comm) writes, and refuse a message
 * of the wrong shape by naming the field at fault, never by casting it.
 */
import * as fs from 'fs';
import * as path from 'path';

import { arrayOf, ICheck, isCount, isString, literal, oneOf, optional, orNull, shape } from '../../src/bridge/check';
import { encodeMultiplets } from '../../src/bridge/encode';
import { BridgeError } from '../../src/bridge/errors';
import {
  isErrorMessage,
  isFetchChunk,
  isFetchDone,
  isFrameInfo,
  isKernelMessageType,
  isListingMessage,
  isResultsAck,
  isResultsStored,
  KERNEL_MESSAGE_CHECKS,
  readKernelMessage
} from '../../src/bridge/guards';
import { IFetchChunk, IFrameInfo, KernelMessage, PROTOCOL_VERSION } from '../../src/bridge/protocol';
import type { IMultipletRow } from '../../src/engine/types';
import { runPython, tempFolder } from './helpers';

/**
 * The kernel side answering one request of each kind through a recording comm: the messages
 * as it sends them, JSON-encoded as the comm would (buffers left out).
 */
const KERNEL_MESSAGES = `
import json, os, sys, tempfile
import numpy as np, pandas as pd
from polyadic.bridge import KernelBridge
from polyadic._results import ResultStore

class Comm:
    comm_id = "c1"
    def __init__(self):
        self.sent = []
    def send(self, data=None, buffers=None):
        self.sent.append(json.loads(json.dumps(data)))
    def on_msg(self, callback):
        pass
    def on_close(self, callback):
        pass

frames = {
    "greenhouse": pd.DataFrame({
        "temperature": np.linspace(14.0, 31.0, 50),
        "valve": pd.Categorical(["open", "shut"] * 25),
        "sensor": ["a", "b"] * 25,
        "leak": [True, False] * 25,
        "logged": pd.date_range("2024-05-01", periods=50, freq="10min", tz="Europe/Berlin"),
        "elapsed": pd.to_timedelta(np.arange(50), unit="s"),
    }),
}
bridge = KernelBridge(lambda: frames, store=ResultStore())
comm = Comm()
bridge.open_comm(comm)
bridge.handle_message(comm, {"content": {"data": {"type": "list", "request_id": "r1"}}})
bridge.handle_message(comm, {"content": {"data": {"type": "fetch", "request_id": "r2", "name": "greenhouse"}}})
bridge.handle_message(comm, {"content": {"data": {"type": "fetch", "request_id": "r3", "name": "gone"}}})
# The handover file goes to a private runtime folder of its own, removed at exit.
os.environ["JUPYTER_RUNTIME_DIR"] = tempfile.mkdtemp()
bridge.handle_message(comm, {"content": {"data": {"type": "fetch", "request_id": "r3f", "name": "greenhouse", "delivery": "file"}}})
chunks = [open(name, "rb").read() for name in sys.argv[1:]]
for index, chunk in enumerate(chunks):
    bridge.handle_message(comm, {
        "content": {"data": {"type": "results_chunk", "request_id": f"r{4 + index}", "analysis_id": "a1",
                             "chunk_index": index, "chunk_count": len(chunks), "meta": {"units": "bits"}}},
        "buffers": [chunk],
    })
print(json.dumps(comm.sent))
`;

const ROWS: IMultipletRow[] = [
  {
    columns: ['valve', 'leak'],
    order: 2,
    entropy: 1.5,
    co_information: -0.25,
    total_correlation: 0.5,
    dual_total_correlation: 0.5,
    o_information: 0,
    s_information: 1
  }
];

let sent: KernelMessage[];

beforeAll(() => {
  const bytes = encodeMultiplets(ROWS);
  const half = Math.ceil(bytes.byteLength / 2);
  const folder = tempFolder('guards');
  const files = [bytes.subarray(0, half), bytes.subarray(half)].map((part, index) => {
    const file = path.join(folder, `chunk-${index}.bin`);
    fs.writeFileSync(file, part);
    return file;
  });
  sent = JSON.parse(runPython(KERNEL_MESSAGES, files));
});

/** The first message the kernel sent of a type. */
function sentOf<T extends KernelMessage['type']>(type: T): Record<string, unknown> {
  const message = sent.find(item => item.type === type);
  if (message === undefined) {
    throw new Error(`the kernel sent no '${type}' message`);
  }
  return JSON.parse(JSON.stringify(message));
}

/** The rejection of reading a message, which must be a BridgeError. */
function refusal(type: KernelMessage['type'], data: Record<string, unknown>): BridgeError {
  let caught: unknown;
  try {
    readKernelMessage(type, JSON.parse(JSON.stringify(data)));
  } catch (error) {
    caught = error;
  }
  expect(caught).toBeInstanceOf(BridgeError);
  return caught as BridgeError;
}

describe('KERNEL_MESSAGE_CHECKS', () => {
  it("should accept every message the kernel's bridge sends, of every type", () => {
    const types = new Set(sent.map(message => message.type));
    // Each type the protocol knows appears in the recording (the scan replies in the scan
    // recording below): the guards are checked on all of them.
    expect([...types, ...SCAN_REPLY_TYPES].sort()).toEqual(Object.keys(KERNEL_MESSAGE_CHECKS).sort());
    for (const message of sent) {
      const problem = KERNEL_MESSAGE_CHECKS[message.type].problem(message);
      expect({ type: message.type, problem }).toEqual({ type: message.type, problem: null });
    }
  });

  it('should accept the optional time unit and zone of a fetched datetime column', () => {
    const done = sentOf('fetch_done');
    expect(isFetchDone(done)).toBe(true);
    const columns = (done as { columns: Record<string, unknown>[] }).columns;
    // The unit is the frame's own resolution (pandas' default differs between versions).
    expect(columns.find(column => column.name === 'logged')).toMatchObject({
      kind: 'datetime',
      unit: expect.stringMatching(/^(s|ms|us|ns)$/),
      timezone: 'Europe/Berlin'
    });
    expect(columns.find(column => column.name === 'elapsed')).toMatchObject({ kind: 'timedelta', unit: expect.any(String) });
    expect(columns.find(column => column.name === 'temperature')).not.toHaveProperty('unit');
  });
});

/** The replies of a scan (scan-protocol.md), as the contract writes them. */
const SCAN_REPLY_TYPES = ['scan_facts', 'scan_details', 'scan_done', 'scan_progress', 'cancel_done'] as const;

const SCAN_REPLIES: Record<(typeof SCAN_REPLY_TYPES)[number], Record<string, unknown>> = {
  scan_facts: {
    type: 'scan_facts',
    request_id: 's1',
    name: 'rel',
    rows: 3,
    engine: { name: 'duckdb', version: '1.5.2' },
    columns: [
      {
        name: 'x',
        dtype: 'DOUBLE',
        kind: 'numeric',
        missing_count: 1,
        first_missing_row: 2,
        count: 2,
        levels: 2,
        integer: false,
        rounded: false,
        infinite: { row: 0, value: '-Infinity' },
        min: '-Infinity',
        max: 2.5
      },
      {
        name: 's',
        dtype: 'VARCHAR',
        kind: 'string',
        missing_count: 0,
        first_missing_row: -1,
        count: 3,
        levels: 3,
        integer: false,
        rounded: false,
        infinite: null,
        min: null,
        max: null
      }
    ]
  },
  scan_details: {
    type: 'scan_details',
    request_id: 's2',
    name: 'rel',
    columns: [
      { name: 'x', order_statistics: [0.5, 'Infinity'], std: 0.25, skewness: null, distinct: { values: [0, 2.5], counts: [1, 2] } }
    ]
  },
  scan_done: {
    type: 'scan_done',
    request_id: 's3',
    name: 'rel',
    rows: 3,
    distinct_rows: 2,
    batch_count: 1,
    bytes_total: 640,
    engine: { name: 'spark', version: '3.5.1' }
  },
  scan_progress: { type: 'scan_progress', request_id: 's3', name: 'rel', stage: 'grouping' },
  cancel_done: { type: 'cancel_done', request_id: 'c1', target: 's3', cancelled: true }
};

describe('scan replies', () => {
  for (const type of SCAN_REPLY_TYPES) {
    it(`should accept a ${type} message as the scan contract writes it`, () => {
      expect(KERNEL_MESSAGE_CHECKS[type].problem(SCAN_REPLIES[type])).toBeNull();
    });
  }

  it('should refuse NaN written as a string, a first missing row below −1 and an unknown engine, naming the field', () => {
    const facts = JSON.parse(JSON.stringify(SCAN_REPLIES.scan_facts));
    facts.columns[0].min = 'NaN';
    expect(refusal('scan_facts', facts).detail.field).toBe('columns[0].min');
    const early = JSON.parse(JSON.stringify(SCAN_REPLIES.scan_facts));
    early.columns[1].first_missing_row = -2;
    expect(refusal('scan_facts', early).detail.field).toBe('columns[1].first_missing_row');
    const done = { ...SCAN_REPLIES.scan_done, engine: { name: 'sqlite', version: '3' } };
    expect(refusal('scan_done', done).detail.field).toBe('engine.name');
    const details = JSON.parse(JSON.stringify(SCAN_REPLIES.scan_details));
    details.columns[0].std = 'Infinity';
    expect(refusal('scan_details', details).detail.field).toBe('columns[0].std');
  });

  it('should accept a scanned frame in a listing: rows and memory unknown, its engine named', () => {
    const frame: IFrameInfo = {
      name: 'rel',
      kind: 'duckdb',
      rows: null,
      columns: [{ name: 'x', dtype: 'DOUBLE', kind: 'numeric' }],
      memory_bytes: null,
      engine: { name: 'duckdb', version: '1.5.2' }
    };
    expect(isFrameInfo.problem(frame)).toBeNull();
    expect(isFrameInfo.problem({ ...frame, rows: -1 })).toBe('rows');
  });
});

describe('isKernelMessageType', () => {
  it('should know the message types of the protocol and nothing else', () => {
    expect(['listing', 'fetch_chunk', 'fetch_done', 'results_ack', 'results_stored', 'error'].every(isKernelMessageType)).toBe(
      true
    );
    expect(isKernelMessageType('fetch')).toBe(false);
    expect(isKernelMessageType('toString')).toBe(false);
    expect(isKernelMessageType(undefined)).toBe(false);
  });
});

describe('isListingMessage', () => {
  it.each([
    ['frames', (m: Record<string, any>) => delete m.frames],
    ['frames[0].rows', (m: Record<string, any>) => (m.frames[0].rows = '50')],
    ['frames[0].rows', (m: Record<string, any>) => (m.frames[0].rows = -1)],
    ['frames[0].kind', (m: Record<string, any>) => (m.frames[0].kind = 'sqlite')],
    ['frames[0].columns[1].kind', (m: Record<string, any>) => (m.frames[0].columns[1].kind = 'complex')],
    ['frames[0].memory_bytes', (m: Record<string, any>) => delete m.frames[0].memory_bytes],
    ['skipped', (m: Record<string, any>) => (m.skipped = null)],
    ['version', (m: Record<string, any>) => (m.version = 1)],
    ['request_id', (m: Record<string, any>) => (m.request_id = 7)]
  ])('should refuse a listing with a bad %s', (field, spoil) => {
    const listing = sentOf('listing');
    spoil(listing);
    expect(isListingMessage(listing)).toBe(false);
    expect(isListingMessage.problem(listing)).toBe(field);
  });

  it('should accept a push (request_id null) and a reply (a string id)', () => {
    expect(isListingMessage({ ...sentOf('listing'), request_id: null })).toBe(true);
    expect(isListingMessage({ ...sentOf('listing'), request_id: 'r1' })).toBe(true);
  });
});

describe('isFetchChunk', () => {
  it.each([
    ['batch_index', { batch_index: 1.5 }],
    ['bytes_sent', { bytes_sent: '12' }],
    ['name', { name: null }],
    ['type', { type: 'fetch_done' }]
  ])('should refuse a piece with a bad %s', (field, change) => {
    const chunk = { ...sentOf('fetch_chunk'), ...change };
    expect(isFetchChunk(chunk)).toBe(false);
    expect(isFetchChunk.problem(chunk)).toBe(field);
  });
});

describe('isFetchDone', () => {
  it.each([
    ['sampled', (m: Record<string, any>) => (m.sampled = 'no')],
    ['columns', (m: Record<string, any>) => (m.columns = {})],
    ['columns[0].null_count', (m: Record<string, any>) => delete m.columns[0].null_count],
    ['columns[0].kind', (m: Record<string, any>) => (m.columns[0].kind = 'other')],
    ['columns[4].unit', (m: Record<string, any>) => (m.columns[4].unit = 'fortnight')],
    ['columns[4].timezone', (m: Record<string, any>) => (m.columns[4].timezone = 1)],
    ['original_rows', (m: Record<string, any>) => (m.original_rows = 2 ** 53)]
  ])('should refuse a fetch_done with a bad %s', (field, spoil) => {
    const done = sentOf('fetch_done');
    spoil(done);
    expect(isFetchDone.problem(done)).toBe(field);
  });
});

describe('isResultsAck', () => {
  it('should refuse an ack without its counts', () => {
    const ack = sentOf('results_ack');
    delete ack.chunks_received;
    expect(isResultsAck.problem(ack)).toBe('chunks_received');
  });
});

describe('isResultsStored', () => {
  it('should refuse a stored reply whose rows are not a count', () => {
    expect(isResultsStored.problem({ ...sentOf('results_stored'), rows: '1' })).toBe('rows');
    expect(isResultsStored({ ...sentOf('results_stored'), rows: 1 })).toBe(true);
  });
});

describe('isErrorMessage', () => {
  it('should keep fields of the detail it does not know, and check those it does', () => {
    const error = sentOf('error');
    expect(isErrorMessage({ ...error, detail: { frame: 'gone', hint: { any: ['json'] } } })).toBe(true);
    expect(isErrorMessage.problem({ ...error, detail: { types: ['float', 3] } })).toBe('detail.types[1]');
    expect(isErrorMessage.problem({ ...error, detail: [] })).toBe('detail');
    expect(isErrorMessage.problem({ ...error, message: undefined })).toBe('message');
  });
});

describe('readKernelMessage', () => {
  it('should return the message it checked', () => {
    const chunk = sentOf('fetch_chunk');
    const read: IFetchChunk = readKernelMessage('fetch_chunk', JSON.parse(JSON.stringify(chunk)));
    expect(read).toEqual(chunk);
  });

  it('should refuse a message of the wrong shape with a protocol error naming the field', () => {
    const done = sentOf('fetch_done');
    done.rows = '50';
    const error = refusal('fetch_done', done);
    expect(error.reason).toBe('protocol');
    expect(error.detail).toEqual({ field: 'rows' });
    expect(error.message).toBe(
      "The kernel's 'fetch_done' message has no valid 'rows'; check that the polyadic package in the kernel " +
        'matches this extension.'
    );
  });

  it('should say a message is not an object when it is not one', () => {
    expect(refusal('results_ack', { type: 'results_ack', request_id: 'r', analysis_id: 'a', chunks_received: 1 }).detail).toEqual({
      field: 'chunk_count'
    });
    const frames: unknown = [];
    const error = refusal('listing', { ...sentOf('listing'), protocol: PROTOCOL_VERSION, frames: [frames, 'x'] });
    expect(error.detail.field).toBe('frames[0]');
  });

  it("should refuse a listing of another protocol version for its version, whatever its shape", () => {
    const error = refusal('listing', { type: 'listing', request_id: null, protocol: 1 });
    expect(error.reason).toBe('protocol');
    expect(PROTOCOL_VERSION).toBe(2);
    expect(error.message).toMatch(/speaks bridge protocol 1 and this extension speaks 2: install/);
  });
});

describe('check', () => {
  interface IReading {
    sensor: string;
    values: number[];
    unit?: 'C' | 'F';
    note: string | null;
  }
  const isReading = shape<IReading>({
    sensor: isString,
    values: arrayOf(isCount),
    unit: optional(oneOf<'C' | 'F'>({ C: true, F: true })),
    note: orNull(isString)
  });

  it('should name the path of the first field at fault', () => {
    expect(isReading.problem({ sensor: 'air', values: [1, 2], note: null })).toBeNull();
    expect(isReading.problem({ sensor: 'air', values: [1, 'x'], note: null })).toBe('values[1]');
    expect(isReading.problem({ sensor: 'air', values: [], unit: 'K', note: null })).toBe('unit');
    expect(isReading.problem({ sensor: 'air', values: [] })).toBe('note');
    expect(isReading.problem('air')).toBe('');
    expect(arrayOf(isReading).problem([{ sensor: 'air', values: [], note: 'ok' }, { values: [] }])).toBe('[1].sensor');
  });

  it('should not compile a shape whose checks do not follow the type', () => {
    const fields = { sensor: isString, values: arrayOf(isCount), unit: optional(oneOf<'C' | 'F'>({ C: true, F: true })) };
    // Each line fails to compile if its check were accepted: ts-jest type-checks this file.
    // @ts-expect-error a field is missing
    shape<IReading>(fields);
    // @ts-expect-error a check of string does not pass for a field that may be null
    shape<IReading>({ ...fields, note: isString });
    // @ts-expect-error a field the type does not declare
    shape<IReading>({ ...fields, note: orNull(isString), extra: isString });
    // @ts-expect-error a union member left out of oneOf
    oneOf<'C' | 'F'>({ C: true });
    // @ts-expect-error a check of another literal
    const wrongType: ICheck<IFrameInfo['kind']> = literal('spark');
    expect(wrongType).toBeDefined();
  });
});
