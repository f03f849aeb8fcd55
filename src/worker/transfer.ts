/**
 * Moving typed arrays between threads: which buffers a message may transfer, and compact copies
 * of column views so that a message never clones more memory than the column holds.
 *
 * A typed array cloned by postMessage carries its whole underlying buffer. A column read from an
 * Arrow record batch is usually a view into the batch's buffer, so cloning it would copy the
 * whole batch; `packColumn` copies just the view's bytes into a buffer of its own, which can then
 * be transferred.
 */

import type { ISubtreeResult, ILattice } from '../engine/lattice';
import type { ColumnView } from '../engine/types';

/** A list of buffers to transfer; each buffer appears at most once (postMessage refuses repeats). */
export class TransferList {
  /** The buffers, for postMessage's transfer argument. */
  get buffers(): ArrayBuffer[] {
    return Array.from(this._buffers);
  }

  /** Add the buffer of a typed array (shared buffers are never transferred: they are shared). */
  add(view: ArrayBufferView | null | undefined): this {
    if (view && isArrayBuffer(view.buffer) && view.buffer.byteLength > 0) {
      this._buffers.add(view.buffer);
    }
    return this;
  }

  /** Add the buffers of subtree parts. */
  addParts(parts: ISubtreeResult[]): this {
    for (const part of parts) {
      this.add(part.entropy).add(part.occupied);
    }
    return this;
  }

  /** Add the buffers of a lattice (its indexing tables included). */
  addLattice(lattice: ILattice): this {
    return this.add(lattice.entropy)
      .add(lattice.occupied)
      .add(lattice.indexing.binomial)
      .add(lattice.indexing.orderStart);
  }

  private _buffers = new Set<ArrayBuffer>();
}

/**
 * A copy of a column whose typed arrays own their buffers exactly, ready to transfer; the
 * original is untouched. With `inPlace`, arrays that already own their whole buffer are not
 * copied, and transferring them detaches them from the caller.
 */
export function packColumn(column: ColumnView, inPlace = false): ColumnView {
  const own = <T extends ArrayBufferView & { slice(): T }>(view: T): T =>
    inPlace && view.byteOffset === 0 && view.byteLength === view.buffer.byteLength && isArrayBuffer(view.buffer)
      ? view
      : view.slice();
  const missing = column.missing ? own(column.missing) : null;
  if (column.kind === 'numeric') {
    return { ...column, values: own(column.values), missing };
  }
  return { ...column, codes: own(column.codes), categories: column.categories.slice(), missing };
}

/** Add the buffers of a column's typed arrays. */
export function addColumn(list: TransferList, column: ColumnView): TransferList {
  list.add(column.kind === 'numeric' ? column.values : column.codes);
  return list.add(column.missing);
}

/**
 * Whether a buffer is a plain (transferable) ArrayBuffer, not a SharedArrayBuffer. Tested by its
 * tag, not instanceof, because buffers made in another realm (jest's sandbox, an iframe) fail
 * instanceof.
 */
export function isArrayBuffer(buffer: ArrayBufferLike): buffer is ArrayBuffer {
  return Object.prototype.toString.call(buffer) === '[object ArrayBuffer]';
}
