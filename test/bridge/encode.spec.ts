/**
 * Multiplet tables back to the kernel: encoded with apache-arrow here, decoded by the kernel's
 * own `polyadic._results.decode_multiplets` (pyarrow, run at test time), so the two languages
 * are checked against each other, whole and cut into chunks.
 */
import * as fs from 'fs';
import * as path from 'path';

import * as arrow from 'apache-arrow';

import { encodeMultiplets, MULTIPLET_FIELDS, splitBytes } from '../../src/bridge/encode';
import { BridgeError } from '../../src/bridge/errors';
import { analyze } from '../../src/engine/analyze';
import type { ColumnView, IMultipletRow } from '../../src/engine/types';
import { EVIDENCE_FIELDS, evidenceFieldsOf } from '../../src/results-format';
import { runPython, tempFolder } from './helpers';

/** A multiplet row with statistics fields beyond IMultipletRow's. */
type RowWithStatistics = IMultipletRow & Record<string, unknown>;

/** Multiplets of the greenhouse scenario (DESIGN.md §6); the numbers are arbitrary test values. */
const ROWS: RowWithStatistics[] = [
  {
    columns: ['air_temperature'],
    order: 1,
    entropy: 1.5,
    co_information: 1.5,
    total_correlation: 0,
    dual_total_correlation: 0,
    o_information: 0,
    s_information: 0,
    p_value: null
  },
  {
    columns: ['humidity_a', 'humidity_b'],
    order: 2,
    entropy: 2.25,
    co_information: 0.9,
    total_correlation: 0.9,
    dual_total_correlation: 0.9,
    o_information: 0,
    s_information: 1.8,
    p_value: 0.001
  },
  {
    columns: ['valve_command', 'flow_meter', 'leak_alarm'],
    order: 3,
    entropy: 2.75,
    co_information: -0.8125,
    total_correlation: 0.1,
    dual_total_correlation: 1.7,
    o_information: -1.6,
    s_information: 1.8,
    p_value: 0.0004
  },
  {
    columns: ['température °C', 'bed ☘ 3'],
    order: 2,
    entropy: 0.1,
    co_information: 1e-12,
    total_correlation: -0,
    dual_total_correlation: 3.0000000000000004,
    o_information: -3.0000000000000004,
    s_information: 3.0000000000000004
  }
];

/** Decode with the kernel's decoder and print every row as JSON (NaN as null). */
const DECODE = `
import json, math, sys
from polyadic._results import decode_multiplets, ResultStore

def plain(value):
    if hasattr(value, "item"):
        value = value.item()
    if isinstance(value, float) and math.isnan(value):
        return None
    return list(value) if isinstance(value, tuple) else value

files = sys.argv[1:]
if len(files) == 1:
    frame = decode_multiplets(open(files[0], "rb").read())
else:
    store = ResultStore()
    for index, name in enumerate(files):
        outcome = store.add_chunk("analysis-1", index, len(files), open(name, "rb").read(), {"frame": "greenhouse"})
    frame = outcome.table
print(json.dumps({
    "dtypes": {name: str(dtype) for name, dtype in frame.dtypes.items()},
    "rows": [{name: plain(value) for name, value in row.items()} for row in frame.to_dict(orient="records")],
    "attrs": frame.attrs.get("polyadic"),
}))
`;

/** What the kernel decoded. */
interface IDecoded {
  dtypes: Record<string, string>;
  rows: Record<string, unknown>[];
  attrs: Record<string, unknown> | null;
}

/** Write byte strings to files and decode them in Python (one file: whole; several: chunks). */
function decodeInKernel(parts: Uint8Array[]): IDecoded {
  const folder = tempFolder('results');
  const files = parts.map((part, i) => {
    const file = path.join(folder, `chunk-${i}.bin`);
    fs.writeFileSync(file, part);
    return file;
  });
  return JSON.parse(runPython(DECODE, files)) as IDecoded;
}

/** The rows as the kernel should return them: missing statistics as null. */
function expectedRows(rows: RowWithStatistics[]): Record<string, unknown>[] {
  return rows.map(row => ({ p_value: null, ...row }));
}

/** Expect a call to throw a BridgeError of a reason whose message matches. */
function expectBridgeError(call: () => unknown, reason: string, message: RegExp): BridgeError {
  let caught: unknown;
  try {
    call();
  } catch (error) {
    caught = error;
  }
  expect(caught).toBeInstanceOf(BridgeError);
  expect((caught as BridgeError).reason).toBe(reason);
  expect((caught as BridgeError).message).toMatch(message);
  return caught as BridgeError;
}

describe('encodeMultiplets', () => {
  it("should give a stream the kernel's decoder reads back to the same rows", () => {
    const decoded = decodeInKernel([encodeMultiplets(ROWS)]);
    expect(decoded.rows).toEqual(expectedRows(ROWS));
    expect(decoded.dtypes).toMatchObject({
      order: 'int32',
      entropy: 'float64',
      co_information: 'float64',
      s_information: 'float64',
      p_value: 'float64'
    });
  });

  it('should put the multiplet fields first, then the evidence in the CLI order, then other fields in order of appearance', () => {
    const table = arrow.tableFromIPC(encodeMultiplets(ROWS));
    expect(table.schema.fields.map(field => field.name)).toEqual([...MULTIPLET_FIELDS, 'p_value']);
    expect(String(table.schema.fields[0].type)).toBe('List<Utf8>');
  });

  it('should order evidence fields as the CLI does, whatever row brings them first', () => {
    const rows = [
      { ...ROWS[1], connected_information: null, zone: 3 },
      { ...ROWS[2], q_value: 0.01, adequacy: 2.5 }
    ];
    const table = arrow.tableFromIPC(encodeMultiplets(rows));
    expect(table.schema.fields.map(field => field.name)).toEqual([
      ...MULTIPLET_FIELDS,
      'adequacy',
      'p_value',
      'q_value',
      'connected_information',
      'zone'
    ]);
  });

  it('should carry every evidence column of an analysis with statistics to the kernel, values and nulls', () => {
    // the greenhouse drip line: an exclusive-or triplet, with a redundant pair of sensors
    const n = 240;
    const valve = Array.from({ length: n }, (_, i) => (i * 7919) % 2);
    const forced = Array.from({ length: n }, (_, i) => ((i * 104729) >> 3) % 2);
    const columns: ColumnView[] = [
      { name: 'valve_command', kind: 'numeric', dtype: 'float64', missing: null, values: Float64Array.from(valve) },
      { name: 'flow_meter', kind: 'numeric', dtype: 'float64', missing: null, values: Float64Array.from(valve, (v, i) => v ^ forced[i]) },
      { name: 'leak_alarm', kind: 'numeric', dtype: 'float64', missing: null, values: Float64Array.from(forced) },
      { name: 'humidity_a', kind: 'numeric', dtype: 'float64', missing: null, values: Float64Array.from(valve, (v, i) => (i % 5) + v) }
    ];
    const result = analyze(columns, {
      maxOrder: 3,
      statistics: { surrogates: 19, bootstrap: 8, seed: 3, beyondPairs: 1, fitDraws: 5 }
    });
    const rows = result.multiplets;
    // the analysis computed every kind of evidence, so every evidence column travels
    expect(evidenceFieldsOf(rows)).toEqual([...EVIDENCE_FIELDS]);
    const nulls = EVIDENCE_FIELDS.filter(field => rows.some(row => row[field] === null));
    expect(nulls).toEqual(expect.arrayContaining(['p_value', 'connected_information', 'connected_p_value']));
    const decoded = decodeInKernel([encodeMultiplets(rows)]);
    expect(Object.keys(decoded.dtypes)).toEqual([...MULTIPLET_FIELDS, ...EVIDENCE_FIELDS]);
    for (const field of EVIDENCE_FIELDS) {
      expect([field, decoded.dtypes[field]]).toEqual([field, 'float64']);
    }
    expect(decoded.rows).toEqual(
      rows.map(row => ({ ...row, ...Object.fromEntries(EVIDENCE_FIELDS.map(field => [field, row[field] ?? null])) }))
    );
  });

  it("should list the evidence fields in the kernel's decoder as the CLI does", () => {
    const listed = JSON.parse(runPython('import json; from polyadic._results import EVIDENCE_FIELDS; print(json.dumps(EVIDENCE_FIELDS))'));
    expect(listed).toEqual([...EVIDENCE_FIELDS]);
  });

  it('should encode an empty table the kernel reads as no rows', () => {
    const decoded = decodeInKernel([encodeMultiplets([])]);
    expect(decoded.rows).toEqual([]);
    expect(Object.keys(decoded.dtypes)).toEqual([...MULTIPLET_FIELDS]);
  });

  it('should name the row and field of an order that does not match the columns', () => {
    const rows = [ROWS[0], { ...ROWS[1], order: 3 }];
    const error = expectBridgeError(
      () => encodeMultiplets(rows),
      'usage',
      /Field 'order' of multiplet row 1 must be the number of columns \(2\), got 3/
    );
    expect(error.detail).toMatchObject({ row: 1, field: 'order' });
  });

  it('should name a measure that is not a number', () => {
    const rows = [{ ...ROWS[2], entropy: '2.75' as unknown as number }];
    expectBridgeError(() => encodeMultiplets(rows), 'usage', /Field 'entropy' of multiplet row 0 must be a number, got string/);
  });

  it('should name a statistics field that is not a number', () => {
    const rows = [{ ...ROWS[2], significant: 'yes' }];
    expectBridgeError(() => encodeMultiplets(rows), 'usage', /Field 'significant' of multiplet row 0 must be a number or null/);
  });

  it('should refuse column names that are not text', () => {
    const rows = [{ ...ROWS[1], columns: ['humidity_a', 2] as unknown as string[] }];
    expectBridgeError(() => encodeMultiplets(rows), 'usage', /Field 'columns' of multiplet row 0 must be a list of column names/);
  });
});

describe('splitBytes', () => {
  /** Many rows, so a small limit cuts the stream into many chunks. */
  const many: IMultipletRow[] = Array.from({ length: 600 }, (_, i) => ({
    columns: [`sensor_${i}`, `sensor_${i + 1}`],
    order: 2,
    entropy: i / 7,
    co_information: -i / 11,
    total_correlation: i / 13,
    dual_total_correlation: i / 17,
    o_information: i / 13 - i / 17,
    s_information: i / 13 + i / 17
  }));

  it('should cut into views no larger than the limit whose concatenation is the input', () => {
    const bytes = encodeMultiplets(many);
    const chunks = splitBytes(bytes, 4096);
    expect(chunks.length).toBe(Math.ceil(bytes.byteLength / 4096));
    expect(chunks.every(chunk => chunk.byteLength <= 4096 && chunk.byteLength > 0)).toBe(true);
    expect(chunks.every(chunk => chunk.buffer === bytes.buffer)).toBe(true);
    expect(Buffer.concat(chunks).equals(Buffer.from(bytes))).toBe(true);
  });

  it("should give chunks the kernel's result store reassembles into the same table", () => {
    const chunks = splitBytes(encodeMultiplets(many), 3000);
    expect(chunks.length).toBeGreaterThan(5);
    const decoded = decodeInKernel(chunks);
    expect(decoded.rows).toEqual(many);
    expect(decoded.attrs).toEqual({ analysis_id: 'analysis-1', frame: 'greenhouse' });
  });

  it('should give one empty chunk for no bytes', () => {
    const chunks = splitBytes(new Uint8Array(0), 10);
    expect(chunks.map(chunk => chunk.byteLength)).toEqual([0]);
  });

  it('should refuse a limit below one byte, naming the option', () => {
    const error = expectBridgeError(() => splitBytes(new Uint8Array(4), 0), 'usage', /chunk size must be a whole number/);
    expect(error.detail.option).toBe('chunkBytes');
  });
});
