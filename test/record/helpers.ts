/**
 * Helpers of the record specs: a small seeded table from the invented greenhouse (DESIGN.md
 * §6), notebooks holding records, and a capture of CLI output.
 */
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

import { unsafeUniformIntDistribution, xoroshiro128plus } from 'pure-rand';

import type { IRecordDocument } from '../../src/record/types';

/** One table as columns of cells, in column order. */
export interface ITextTable {
  header: string[];
  rows: string[][];
}

/**
 * A small greenhouse log: a drip line under a commissioning test (valve command, flow meter and
 * leak alarm: an exclusive-or, so a synergistic triplet), two humidity sensors in the same air
 * (a redundant pair), and the air temperature. Seeded, so the same seed gives the same table.
 */
export function greenhouseTable(rows: number, seed: number): ITextTable {
  const rng = xoroshiro128plus(seed);
  const uniform = (): number => unsafeUniformIntDistribution(0, 999999, rng) / 1000000;
  const header = ['valve_command', 'flow_l_min', 'leak_alarm', 'humidity_a_pct', 'humidity_b_pct', 'air_temp_c'];
  const out: string[][] = [];
  for (let i = 0; i < rows; i++) {
    const valve = uniform() < 0.5;
    const forced = uniform() < 0.5;
    const flowing = valve !== forced;
    const flow = flowing ? 11 + 2 * uniform() : 0.4 * uniform();
    const leak = valve !== flowing;
    const humidity = 40 + 40 * uniform();
    const temperature = 15 + 12 * uniform();
    out.push([
      String(valve),
      flow.toFixed(3),
      String(leak),
      (humidity + uniform() - 0.5).toFixed(2),
      (humidity + uniform() - 0.5).toFixed(2),
      temperature.toFixed(2)
    ]);
  }
  return { header, rows: out };
}

/** CSV text of a table (no cell needs quoting). */
export function toCsv(table: ITextTable): string {
  return [table.header.join(','), ...table.rows.map(row => row.join(','))].join('\n') + '\n';
}

/** A fresh temporary folder. */
export function tempFolder(): string {
  return fs.mkdtempSync(path.join(os.tmpdir(), 'polyadic-record-'));
}

/** A notebook (nbformat 4) whose metadata holds a record and another extension's key. */
export function notebookWith(record: unknown, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    cells: [
      {
        cell_type: 'code',
        execution_count: null,
        id: 'c1',
        metadata: {},
        outputs: [],
        source: ['import pandas as pd\n', "greenhouse = pd.read_csv('greenhouse.csv')"]
      }
    ],
    metadata: {
      kernelspec: { display_name: 'Python 3', language: 'python', name: 'python3' },
      language_info: { name: 'python' },
      ...extra,
      ...(record === undefined ? {} : { polyadic: record })
    },
    nbformat: 4,
    nbformat_minor: 5
  };
}

/** A record document of analyses. */
export function recordOf(analyses: unknown[]): IRecordDocument {
  return { version: 2, analyses } as IRecordDocument;
}

/** A stream that keeps what is written. */
export class Capture {
  text = '';
  write(chunk: string): boolean {
    this.text += chunk;
    return true;
  }
}

/** stdout and stderr captures. */
export function captureStreams(): { stdout: Capture; stderr: Capture } {
  return { stdout: new Capture(), stderr: new Capture() };
}

/** Deep copy of JSON data. */
export function clone<T>(value: T): T {
  return JSON.parse(JSON.stringify(value)) as T;
}
