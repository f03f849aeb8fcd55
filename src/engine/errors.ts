/**
 * Errors the engine reports: values a user interface can show, naming the column,
 * row, option or value at fault.
 */

/**
 * What kind of problem a {@link PolyadicError} describes: one union for every error of the
 * extension (the engine's, the worker pool's and the kernel bridge's), so a view can branch on
 * `kind` and read `detail` whatever room the error came from.
 */
export type PolyadicErrorKind =
  | 'input' // the data: empty, ragged, duplicate names, bad values
  | 'usage' // an option or a spec: unknown column, bad binning spec
  | 'limit' // a request above a configured cap
  | 'cancelled' // a run or a fetch stopped on request (the pool's RunCancelled, the bridge's)
  | 'kernel' // the kernel refused or failed a request (the bridge's BridgeError)
  | 'connection' // no usable link to the kernel, or it was lost during a request (BridgeError)
  | 'internal'; // a bug or a broken protocol: should never reach a user

/** Details that locate a problem; every field optional. */
export interface IErrorDetail {
  column?: string;
  /** Zero-based data row (not counting a header). */
  row?: number;
  /** One-based line of a text file, counting the header. */
  line?: number;
  option?: string;
  value?: string;
  [key: string]: unknown;
}

/** An error with a message a person understands and the place it concerns. */
export class PolyadicError extends Error {
  /** Create an error of a kind, with a full-sentence message. */
  constructor(
    readonly kind: PolyadicErrorKind,
    message: string,
    readonly detail: IErrorDetail = {}
  ) {
    super(message);
    this.name = 'PolyadicError';
  }
}

/** Whether a value is a {@link PolyadicError}. */
export function isPolyadicError(value: unknown): value is PolyadicError {
  return value instanceof PolyadicError;
}

/** Any thrown value as a {@link PolyadicError}: itself when it is one, else an internal error with its message. */
export function asPolyadicError(error: unknown): PolyadicError {
  return isPolyadicError(error) ? error : new PolyadicError('internal', errorMessage(error));
}

/** The message of anything thrown: an Error's (a PolyadicError's among them) message, else its text. */
export function errorMessage(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

/**
 * Whether a thrown value is a cancellation, a run or a fetch stopped on request (the worker
 * pool's RunCancelled, the bridge's BridgeError of reason 'cancelled': both are PolyadicErrors of
 * kind 'cancelled'). The one test views use to tell a cancellation from a failure.
 */
export function isCancellation(error: unknown): boolean {
  return isPolyadicError(error) && error.kind === 'cancelled';
}
