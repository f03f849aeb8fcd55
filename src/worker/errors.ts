/**
 * Errors across the worker boundary: any thrown value as a plain {@link ISerializedError} that
 * survives structured clone (the worker side), and back as a {@link PolyadicError} (the main
 * thread). Beside the protocol, so the pool loads no worker-side code.
 */

import { isPolyadicError, PolyadicError } from '../engine/errors';
import type { IErrorDetail } from '../engine/errors';
import type { ISerializedError } from './protocol';

/** An error of any kind as a plain value that crosses a worker boundary. */
export function serializeError(error: unknown): ISerializedError {
  if (isPolyadicError(error)) {
    return { kind: error.kind, message: error.message, detail: Private.plainDetail(error.detail) };
  }
  if (error instanceof RangeError && /allocat|array length|buffer/i.test(error.message)) {
    // Typed-array allocation failures are the worker running out of memory, not a bug.
    return {
      kind: 'limit',
      message:
        `The analysis needs more memory than the browser gives a worker (${error.message}). ` +
        'Select fewer columns or rows, or lower the maximum order.',
      detail: {}
    };
  }
  const message = error instanceof Error ? `${error.name}: ${error.message}` : String(error);
  const detail: IErrorDetail = {};
  if (error instanceof Error && error.stack) {
    detail.stack = error.stack;
  }
  return { kind: 'internal', message: `The engine failed unexpectedly (${message}).`, detail };
}

/** The {@link PolyadicError} a serialised error stands for. */
export function deserializeError(error: ISerializedError): PolyadicError {
  return new PolyadicError(error.kind, error.message, error.detail);
}

/** Module-private helpers. */
namespace Private {
  /** An error detail with only plain data (primitives, arrays, plain objects): it survives structured clone unchanged. */
  export function plainDetail(detail: IErrorDetail): IErrorDetail {
    return plain(detail, 0) as IErrorDetail;
  }

  function plain(value: unknown, depth: number): unknown {
    if (value === null || ['string', 'number', 'boolean', 'undefined'].includes(typeof value)) {
      return value;
    }
    if (typeof value === 'bigint') {
      return value.toString();
    }
    if (depth < 4 && Array.isArray(value)) {
      return value.map(item => plain(item, depth + 1));
    }
    if (depth < 4 && typeof value === 'object' && Object.getPrototypeOf(value) === Object.prototype) {
      const out: Record<string, unknown> = {};
      for (const [key, item] of Object.entries(value as Record<string, unknown>)) {
        out[key] = plain(item, depth + 1);
      }
      return out;
    }
    return String(value);
  }
}
