/**
 * A scanner over columns held in memory, for testing the scan driver: every fact and detail
 * comes from the in-memory engine's own summary of the values (summarizeValues, numpy's sums
 * and order), and the group step applies numpy.histogram's edge rule (binIndexByEdges), so a
 * scan of these columns must give what the in-memory analysis gives. It answers as the scan
 * contract asks (bool keys as 0/1 numbers, −0 written as 0, −1 outside the edges).
 */
import type {
  IColumnScanner,
  IScanDetailRequest,
  IScanGroupKey,
  IScannedColumnDetails,
  IScannedColumnFacts,
  IScannedFacts,
  IScannedGroups,
  ScannedKeys
} from '../../src/engine/aggregate/scan';
import { binIndexByEdges } from '../../src/engine/binning';
import { presentValues, summarizeValues } from '../../src/engine/binning/numeric';
import { unknownColumn } from '../../src/engine/table';
import type { ColumnView } from '../../src/engine/types';

/** The columns and calls a {@link MemoryScanner} saw. */
export class MemoryScanner implements IColumnScanner {
  readonly label = "'memory'";
  /** Each step called, in order. */
  readonly calls: string[] = [];

  constructor(private readonly _columns: ColumnView[], private readonly _kinds: Record<string, IScannedColumnFacts['kind']> = {}) {}

  async facts(names: string[]): Promise<IScannedFacts> {
    this.calls.push('facts');
    const rows = this._columns.length ? (this._columns[0].kind === 'numeric' ? this._columns[0].values.length : this._columns[0].codes.length) : 0;
    return { rows, engine: { name: 'memory', version: '0' }, columns: names.map(name => this._facts(this._column(name))) };
  }

  async details(requests: IScanDetailRequest[]): Promise<IScannedColumnDetails[]> {
    this.calls.push('details');
    return requests.map(request => {
      const column = this._column(request.name);
      if (column.kind !== 'numeric') {
        throw new Error(`details of a text column ${request.name}`);
      }
      const summary = summarizeValues(presentValues(column));
      const std = request.std ? summary.std() : null;
      return {
        name: request.name,
        orderStatistics: request.ranks.map(rank => summary.orderStatistic(rank)),
        std,
        skewness: request.skewness && std !== null && std > 0 ? summary.skewness(std) : null,
        distinct: request.distinct ? summary.distinct() : null
      };
    });
  }

  async group(keys: IScanGroupKey[], maxDistinctRows: number): Promise<IScannedGroups | null> {
    this.calls.push('group');
    const columns = keys.map(key => this._column(key.name));
    const rows = columns.length ? (columns[0].kind === 'numeric' ? columns[0].values.length : columns[0].codes.length) : 0;
    const keyOf = (c: number, i: number): number | string | null => {
      const column = columns[c];
      if (column.missing !== null && column.missing[i]) {
        return null;
      }
      if (column.kind === 'categorical') {
        const code = column.codes[i];
        if (code < 0) {
          return null;
        }
        return column.dtype === 'bool' ? code : column.categories[code];
      }
      const x = Number(column.values[i]);
      if (Number.isNaN(x)) {
        return null;
      }
      const edges = keys[c].edges;
      return edges === null ? (x === 0 ? 0 : x) : binIndexByEdges(edges, x);
    };
    const index = new Map<string, number>();
    const table: (number | string | null)[][] = [];
    const weights: number[] = [];
    for (let i = 0; i < rows; i++) {
      const row = keys.map((_key, c) => keyOf(c, i));
      const text = JSON.stringify(row);
      const at = index.get(text);
      if (at === undefined) {
        index.set(text, weights.length);
        table.push(row);
        weights.push(1);
        if (weights.length > maxDistinctRows) {
          return null;
        }
      } else {
        weights[at]++;
      }
    }
    // the contract leaves the row order open: give them backwards
    table.reverse();
    weights.reverse();
    const out: ScannedKeys[] = keys.map((key, c) => {
      const values = table.map(row => row[c]);
      const valid = Uint8Array.from(values, v => (v === null ? 0 : 1));
      if (columns[c].kind === 'categorical' && columns[c].dtype !== 'bool') {
        return { kind: 'texts', values: values as (string | null)[] };
      }
      if (key.edges === null) {
        return { kind: 'numbers', values: Float64Array.from(values, v => (v === null ? 0 : Number(v))), valid };
      }
      return { kind: 'bins', codes: Int32Array.from(values, v => (v === null ? -1 : Number(v))), valid };
    });
    return { keys: out, weights: Int32Array.from(weights) };
  }

  private _column(name: string): ColumnView {
    const column = this._columns.find(c => c.name === name);
    if (column === undefined) {
      throw unknownColumn(name, this._columns.map(c => c.name));
    }
    return column;
  }

  private _facts(column: ColumnView): IScannedColumnFacts {
    if (column.kind === 'categorical') {
      let missingCount = 0;
      let firstMissingRow = -1;
      column.codes.forEach((code, i) => {
        if (code < 0 || (column.missing !== null && column.missing[i])) {
          missingCount++;
          firstMissingRow = firstMissingRow < 0 ? i : firstMissingRow;
        }
      });
      const bool = column.dtype === 'bool';
      return {
        name: column.name,
        dtype: column.dtype,
        kind: this._kinds[column.name] ?? (bool ? 'bool' : 'string'),
        missingCount,
        firstMissingRow,
        count: column.codes.length - missingCount,
        levels: 0,
        integer: bool,
        rounded: false,
        infinite: null,
        min: null,
        max: null
      };
    }
    const present = presentValues(column);
    const base = {
      name: column.name,
      dtype: column.dtype,
      kind: this._kinds[column.name] ?? ('numeric' as const),
      missingCount: present.missingCount,
      firstMissingRow: present.firstMissingRow,
      count: present.values.length,
      integer: present.integer,
      rounded: present.rounded
    };
    if (present.values.length === 0) {
      return { ...base, levels: 0, infinite: null, min: null, max: null };
    }
    const summary = summarizeValues(present);
    return { ...base, levels: summary.levels, infinite: summary.infinite, min: summary.min, max: summary.max };
  }
}
