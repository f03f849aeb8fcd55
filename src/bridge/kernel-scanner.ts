/**
 * A scanned frame in the kernel (a DuckDB relation, a Spark DataFrame) as a scanner of the
 * engine's scan driver (src/engine/aggregate/scan.ts): each step is one `scan` request over
 * the comm (scan-protocol.md), its reply turned into the driver's plain objects (±Infinity
 * read back from their JSON spelling), and {@link KernelScanner.cancel} stops the running one.
 */
import type {
  IColumnScanner,
  IScanDetailRequest,
  IScanGroupKey,
  IScannedColumnDetails,
  IScannedColumnFacts,
  IScannedFacts,
  IScannedGroups
} from '../engine/aggregate/scan';
import { PolyadicError } from '../engine/errors';
import type { IScanCallOptions, KernelBridge } from './connector';
import { isBridgeError } from './errors';
import type { IColumnDetails, IColumnFacts, ScanDouble } from './protocol';

/** What a kernel scanner asks of the bridge. */
export type IScanBridge = Pick<KernelBridge, 'scanFacts' | 'scanDetails' | 'scanGroup' | 'cancelScan'>;

/** The scanner of one scanned frame of the kernel. */
export class KernelScanner implements IColumnScanner {
  /** A scanner of frame `name` through `bridge`; `onStage` hears the kernel's stages. */
  constructor(options: KernelScanner.IOptions) {
    this._bridge = options.bridge;
    this._name = options.name;
    this._onStage = options.onStage;
    this.label = `'${options.name}'`;
  }

  /** The frame in messages: `'rel'`. */
  readonly label: string;

  /** Input rows of the last group scan, or null before one. */
  get scannedRows(): number | null {
    return this._scannedRows;
  }

  async facts(columns: string[]): Promise<IScannedFacts> {
    const reply = await this._run(options => this._bridge.scanFacts(this._name, columns, options));
    return { rows: reply.rows, engine: { ...reply.engine }, columns: reply.columns.map(Private.facts) };
  }

  async details(requests: IScanDetailRequest[]): Promise<IScannedColumnDetails[]> {
    const reply = await this._run(options => this._bridge.scanDetails(this._name, requests, options));
    return reply.columns.map(Private.details);
  }

  async group(keys: IScanGroupKey[], maxDistinctRows: number): Promise<IScannedGroups | null> {
    try {
      const { done, groups } = await this._run(options =>
        this._bridge.scanGroup(
          this._name,
          keys.map(key => (key.edges === null ? { name: key.name, edges: null } : { name: key.name, edges: key.edges })),
          { ...options, maxDistinctRows }
        )
      );
      this._scannedRows = done.rows;
      return groups;
    } catch (error) {
      if (isBridgeError(error) && error.detail.limit === 'distinct_rows') {
        return null;
      }
      throw error;
    }
  }

  /** Stop the running scan, if any; the step it was running then fails as cancelled. */
  async cancel(): Promise<boolean> {
    this._cancelled = true;
    const running = this._running;
    return running === null ? false : this._bridge.cancelScan(this._name, running);
  }

  /** Run one request, remembering its id for a cancel; a cancelled scan fails as cancelled. */
  private async _run<T>(send: (options: IScanCallOptions) => Promise<T>): Promise<T> {
    if (this._cancelled) {
      throw Private.cancelled(this._name);
    }
    try {
      return await send({
        sent: id => {
          this._running = id;
        },
        onStage: this._onStage
      });
    } catch (error) {
      if (isBridgeError(error) && error.detail.cancelled === true) {
        throw Private.cancelled(this._name);
      }
      throw error;
    } finally {
      this._running = null;
    }
  }

  private _bridge: IScanBridge;
  private _name: string;
  private _onStage: ((stage: string) => void) | undefined;
  private _running: string | null = null;
  private _cancelled = false;
  private _scannedRows: number | null = null;
}

/** Types of {@link KernelScanner}. */
export namespace KernelScanner {
  /** Options of a scanner. */
  export interface IOptions {
    bridge: IScanBridge;
    /** The frame's variable name, as listed. */
    name: string;
    onStage?: (stage: string) => void;
  }
}

namespace Private {
  /** A double of the protocol as a number. */
  export function double(value: ScanDouble): number {
    return value === 'Infinity' ? Infinity : value === '-Infinity' ? -Infinity : value;
  }

  /** One column's facts in the driver's words. */
  export function facts(column: IColumnFacts): IScannedColumnFacts {
    return {
      name: column.name,
      dtype: column.dtype,
      kind: column.kind,
      missingCount: column.missing_count,
      firstMissingRow: column.first_missing_row,
      count: column.count,
      levels: column.levels,
      integer: column.integer === true,
      rounded: column.rounded,
      infinite: column.infinite === null ? null : { row: column.infinite.row, value: double(column.infinite.value) },
      min: column.min === null ? null : double(column.min),
      max: column.max === null ? null : double(column.max)
    };
  }

  /** One column's details in the driver's words (numeric distinct values only: text is grouped, never detailed). */
  export function details(column: IColumnDetails): IScannedColumnDetails {
    let distinct: IScannedColumnDetails['distinct'] = null;
    if (column.distinct !== null) {
      const values = new Float64Array(column.distinct.values.length);
      column.distinct.values.forEach((value, i) => {
        if (typeof value === 'string' && value !== 'Infinity' && value !== '-Infinity') {
          throw new PolyadicError('kernel', `The scan gave the text '${value}' among the distinct values of numeric column '${column.name}'.`, {
            column: column.name
          });
        }
        values[i] = double(value as ScanDouble);
      });
      distinct = { values, counts: Float64Array.from(column.distinct.counts) };
    }
    return {
      name: column.name,
      orderStatistics: column.order_statistics.map(double),
      std: column.std,
      skewness: column.skewness,
      distinct
    };
  }

  /** The error a cancelled scan ends with. */
  export function cancelled(name: string): PolyadicError {
    return new PolyadicError('cancelled', `The scan of '${name}' was cancelled.`, { frame: name });
  }
}
