/**
 * Errors of the front-end side of the bridge: values the panel shows as plain text (never as
 * HTML: messages can quote frame and column names, which come from the user's kernel).
 */
import { PolyadicError, PolyadicErrorKind } from '../engine/errors';
import type { IBridgeErrorDetail } from './protocol';

/**
 * Why a bridge request failed.
 *
 * - `kernel`: the kernel refused the request; its message names the frame, column or option.
 * - `state`: the bridge is not ready (no kernel, another language, package missing, …).
 * - `restart`: the kernel restarted or died while the request was under way.
 * - `kernel-changed`: the notebook switched to another kernel during the request.
 * - `closed`: the kernel closed Polyadic's comm during the request.
 * - `connection`: the connection to the kernel was lost during the request.
 * - `unanswered`: the kernel finished handling the request without answering (interrupted).
 * - `cancelled`: the bridge reconnected on request (`reconnect()`) during the request.
 * - `protocol`: a reply did not follow the protocol (src/bridge/protocol.ts).
 * - `usage`: an argument of the call is invalid; `detail.option` names it.
 * - `disposed`: the bridge was disposed.
 */
export type BridgeFailure =
  | 'kernel'
  | 'state'
  | 'restart'
  | 'kernel-changed'
  | 'closed'
  | 'connection'
  | 'unanswered'
  | 'cancelled'
  | 'protocol'
  | 'usage'
  | 'disposed';

/** The kind of error (one union for the whole extension, engine/errors.ts) each failure is. */
const KIND_OF_FAILURE: Readonly<Record<BridgeFailure, PolyadicErrorKind>> = {
  kernel: 'kernel',
  state: 'connection',
  restart: 'connection',
  'kernel-changed': 'connection',
  closed: 'connection',
  connection: 'connection',
  unanswered: 'connection',
  cancelled: 'cancelled',
  protocol: 'internal',
  usage: 'usage',
  disposed: 'connection'
};

/**
 * A failed bridge request: what happened and what to do, as one or two sentences. A
 * {@link PolyadicError} whose `kind` follows from `reason` (a cancelled request is of kind
 * 'cancelled'); `detail` names the frame, column or option at fault.
 */
export class BridgeError extends PolyadicError {
  /** Create an error for a failure, with a full-sentence message and where it lies. */
  constructor(
    readonly reason: BridgeFailure,
    message: string,
    readonly detail: IBridgeErrorDetail = {}
  ) {
    super(KIND_OF_FAILURE[reason], message, detail);
    this.name = 'BridgeError';
  }
}

/** Whether a value is a {@link BridgeError}. */
export function isBridgeError(value: unknown): value is BridgeError {
  return value instanceof BridgeError;
}
