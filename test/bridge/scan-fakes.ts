/**
 * A kernel bridge that answers scans as the scan contract (scan-protocol.md) writes them, from
 * the in-memory scanner's numbers (test/engine/scan-helpers.ts): ±Inf spelt 'Infinity', snake
 * case, the group table as key columns and weights; a held group step ends only by a cancel,
 * with the error a cancelled DuckDB scan sends.
 */
import { BridgeError } from '../../src/bridge/errors';
import type { IScanBridge } from '../../src/bridge/kernel-scanner';
import type { IColumnFacts, IScanDone, ScanDouble } from '../../src/bridge/protocol';
import type { MemoryScanner } from '../engine/scan-helpers';

/** A bridge answering scans as the contract writes them, from the in-memory scanner's numbers. */
export class ContractBridge implements IScanBridge {
  constructor(private readonly _memory: MemoryScanner) {}
  /** Set to hold the group step until a cancel. */
  holdGroup = false;
  readonly cancels: string[] = [];

  async scanFacts(name: string, columns: readonly string[]) {
    const facts = await this._memory.facts([...columns]);
    const columnsOut: IColumnFacts[] = facts.columns.map(c => ({
      name: c.name,
      dtype: c.dtype,
      kind: c.kind,
      missing_count: c.missingCount,
      first_missing_row: c.firstMissingRow,
      count: c.count,
      levels: c.levels,
      integer: c.integer,
      rounded: c.rounded,
      infinite: c.infinite === null ? null : { row: c.infinite.row, value: wire(c.infinite.value) },
      min: c.min === null ? null : wire(c.min),
      max: c.max === null ? null : wire(c.max)
    }));
    return { type: 'scan_facts' as const, request_id: 'f', name, rows: facts.rows, engine: { name: 'duckdb' as const, version: '1' }, columns: columnsOut };
  }

  async scanDetails(name: string, columns: readonly { name: string; ranks: number[]; std: boolean; skewness: boolean; distinct: boolean }[]) {
    const found = await this._memory.details(columns.map(c => ({ ...c })));
    return {
      type: 'scan_details' as const,
      request_id: 'd',
      name,
      columns: found.map(d => ({
        name: d.name,
        order_statistics: d.orderStatistics.map(wire),
        std: d.std,
        skewness: d.skewness,
        distinct: d.distinct === null ? null : { values: Array.from(d.distinct.values, wire), counts: Array.from(d.distinct.counts) }
      }))
    };
  }

  async scanGroup(
    name: string,
    keys: readonly ({ name: string; edges: number[] } | { name: string; edges: null })[],
    options: { sent?: (id: string) => void; maxDistinctRows?: number } = {}
  ) {
    options.sent?.('g1');
    if (this.holdGroup) {
      await new Promise(resolve => (this._release = resolve));
      throw new BridgeError('kernel', `DuckDB stopped the scan of '${name}': INTERRUPT Error: Interrupted!`, { cancelled: true, engine: 'duckdb' });
    }
    const groups = await this._memory.group(
      keys.map(k => ({ ...k })),
      options.maxDistinctRows ?? 5_000_000
    );
    if (groups === null) {
      throw new BridgeError('kernel', 'too many', { limit: 'distinct_rows' });
    }
    let rows = 0;
    groups.weights.forEach(w => (rows += w));
    return { done: { ...done(rows, groups.weights.length, 0), name }, groups };
  }

  async cancelScan(_name: string, target: string) {
    this.cancels.push(target);
    this._release?.(undefined);
    return true;
  }

  private _release: ((value: unknown) => void) | undefined;
}

/** A double as the contract writes it. */
function wire(value: number): ScanDouble {
  return value === Infinity ? 'Infinity' : value === -Infinity ? '-Infinity' : value;
}

/** A scan_done message of frame 'rel'. */
export function done(rows: number, distinct: number, bytes: number): IScanDone {
  return {
    type: 'scan_done',
    request_id: 'r1',
    name: 'rel',
    rows,
    distinct_rows: distinct,
    batch_count: 1,
    bytes_total: bytes,
    engine: { name: 'duckdb', version: '1.5.2' }
  };
}
