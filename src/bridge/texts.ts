/**
 * What the bridge tells the user: every state message and error text of the connection, the
 * request channel and the bridge's requests, one member per message, taking the names it quotes.
 * Plain text, never HTML (frame, column and package names come from the kernel). The texts come
 * from a translation bundle (src/translation.ts); {@link BRIDGE_TEXTS} holds them as written.
 */
import { translationBundle, type TranslationBundle } from '../translation';
import type { BridgeFailure } from './errors';

/** A request in words, for the messages about it. */
export interface IRequestLabel {
  /** The request as the object of a sentence: "the fetch of 'df'". */
  what: string;
  /** What the user does to retry: "fetch 'df' again". */
  again: string;
}

/** The failures that end a request from outside it: the connection, not the request, went wrong. */
export type Interruption = Extract<
  BridgeFailure,
  'restart' | 'kernel-changed' | 'closed' | 'connection' | 'unanswered' | 'cancelled' | 'protocol' | 'disposed'
>;

/** The command that installs the package, and the one for a source checkout (commands: not translated). */
export const PIP_COMMANDS: readonly string[] = ['pip install polyadic', 'pip install -e .'];

/** The bridge's texts in one translation bundle. */
export class BridgeTexts {
  /** The texts of `trans` (the strings as written without a translator). */
  constructor(private readonly _trans: TranslationBundle = translationBundle()) {
    const trans = _trans;
    this.LISTING_REQUEST = { what: trans.__('the listing of dataframes'), again: trans.__('refresh the list') };
    this.NO_KERNEL = trans.__('This notebook has no kernel: start one to list its dataframes.');
    this.STARTING = trans.__("Connecting to the notebook's kernel…");
    this.RESTARTING = trans.__('The kernel is restarting; Polyadic reconnects when it is back.');
    this.RECONNECTING = trans.__('The connection to the kernel was lost; Polyadic reconnects when it is back.');
    this.DEAD = trans.__('The kernel died: restart it to use Polyadic with this notebook.');
    this.REFUSED = trans.__("The kernel imported polyadic but did not open Polyadic's comm; restart the kernel and try again.");
    this.CLOSED_AGAIN = trans.__("The kernel keeps closing Polyadic's comm; restart the kernel and try again.");
    this.IMPORT_NOT_RUN = trans.__('The kernel could not run the silent import of polyadic; restart the kernel and try again.');
    this.IMPORT_UNREPORTED = trans.__('The kernel did not report whether polyadic could be imported; restart the kernel and try again.');
    this.STILL_CONNECTING = trans.__('Polyadic is still connecting to the kernel; try again in a moment.');
    this.NO_LONGER_CONNECTED = trans.__('Polyadic is no longer connected to this notebook.');
    this.REFUSED_WITHOUT_REASON = trans.__('The kernel refused the request without saying why.');
    this.EMPTY_FRAME_NAME = trans.__("Choose a dataframe to fetch: the frame's name is empty.");
    this.COLUMNS_NOT_NAMES = trans.__('The columns to fetch must be a list of column names.');
    this.BAD_ANALYSIS_ID = trans.__('The analysis id must be a non-empty text of at most 200 characters.');
    this.META_NOT_OBJECT = trans.__('The results metadata must be a JSON object.');
    this.UNTYPED_MESSAGE = trans.__('Polyadic: ignored a comm message without a type from the kernel.');
    this.INTERRUPTED = {
      restart: ({ what, again }) =>
        trans.__(
          'The kernel restarted or stopped during %1, which was cancelled; once it is back, run the cells that build your data, then %2.',
          what,
          again
        ),
      'kernel-changed': ({ what, again }) => trans.__("The notebook's kernel changed during %1, which was cancelled; %2.", what, again),
      closed: ({ what, again }) =>
        trans.__("The kernel closed Polyadic's comm during %1; Polyadic reconnects by itself, so %2 in a moment.", what, again),
      connection: ({ what, again }) => trans.__('The connection to the kernel was lost during %1; %2 once it is back.', what, again),
      unanswered: ({ what, again }) => trans.__('The kernel stopped before answering %1 (was it interrupted?); %2.', what, again),
      cancelled: ({ what, again }) => trans.__('Polyadic reconnected to the kernel during %1, which was cancelled; %2.', what, again),
      disposed: ({ what }) => trans.__('Polyadic stopped following this notebook during %1.', what),
      protocol: ({ what, again }) => trans.__("%1 failed: the kernel's replies did not follow the protocol; %2.", what, again)
    };
  }

  // --- requests ----------------------------------------------------------------------------

  /** The label of a listing request. */
  readonly LISTING_REQUEST: IRequestLabel;

  /** The label of a fetch of frame `name`. */
  fetchRequest(name: string): IRequestLabel {
    return { what: this._trans.__("the fetch of '%1'", name), again: this._trans.__("fetch '%1' again", name) };
  }

  /** The label of a scan of frame `name` (its facts, details or grouped table). */
  scanRequest(name: string): IRequestLabel {
    return { what: this._trans.__("the scan of '%1'", name), again: this._trans.__('run again') };
  }

  /** The label of a cancel of a scan of frame `name`. */
  cancelRequest(name: string): IRequestLabel {
    return { what: this._trans.__("stopping the scan of '%1'", name), again: this._trans.__('interrupt the kernel') };
  }

  /** The label of the upload of an analysis's results. */
  resultsRequest(analysisId: string): IRequestLabel {
    return { what: this._trans.__("the upload of the results of analysis '%1'", analysisId), again: this._trans.__('send them again') };
  }

  // --- states ------------------------------------------------------------------------------

  /** Message of the `no-kernel` state. */
  readonly NO_KERNEL: string;
  /** Message while importing and opening the comm. */
  readonly STARTING: string;
  /** Message while the kernel restarts. */
  readonly RESTARTING: string;
  /** Message while the websocket reconnects. */
  readonly RECONNECTING: string;
  /** Message after the kernel died. */
  readonly DEAD: string;
  /** Message when the kernel closed or ignored the comm it was asked to open. */
  readonly REFUSED: string;
  /** Message when the kernel closes the comm again right after it was re-opened. */
  readonly CLOSED_AGAIN: string;

  /** The state message of a kernel in another language. */
  notPython(language: string): string {
    return language
      ? this._trans.__("Python kernels only, for now: this notebook's kernel runs %1.", language)
      : this._trans.__("Python kernels only, for now: this notebook's kernel is not Python.");
  }

  /** The state message once connected. */
  ready(version: string): string {
    return this._trans.__('Connected to the kernel (polyadic %1).', version);
  }

  /** The state message when connecting failed with an exception. */
  connectFailed(reason: string): string {
    return this._trans.__('Polyadic could not connect to the kernel (%1); restart the kernel and try again.', reason);
  }

  /** The kernel did not run the silent import at all. */
  readonly IMPORT_NOT_RUN: string;
  /** The kernel ran the import but reported nothing about it. */
  readonly IMPORT_UNREPORTED: string;

  /** polyadic (or, when `cause` names it, one of its dependencies) is not installed in the kernel. */
  missingPackage(cause: string): string {
    return this._trans.__(
      "The kernel cannot import polyadic%1: run `pip install polyadic` in the kernel's environment (from a source checkout, `pip install -e .`), then try again.",
      cause
    );
  }

  /** The import of polyadic raised another exception. */
  importFailed(ename: string, evalue: string): string {
    return this._trans.__('Importing polyadic in the kernel failed (%1: %2); restart the kernel and try again.', ename, evalue);
  }

  // --- request failures --------------------------------------------------------------------

  /** A request made before the bridge was ready. */
  readonly STILL_CONNECTING: string;
  /** A request made after the bridge was disposed. */
  readonly NO_LONGER_CONNECTED: string;
  /** An error reply without a message. */
  readonly REFUSED_WITHOUT_REASON: string;
  /** What a pending request is told when the connection ends it, by reason. */
  readonly INTERRUPTED: { readonly [R in Interruption]: (request: IRequestLabel) => string };

  /** A request that could not be sent because the comm is closed. */
  commClosed({ what, again }: IRequestLabel): string {
    return this._trans.__('The comm to the kernel is closed, so %1 could not start; %2.', what, again);
  }

  /** A request that could not be sent for another reason. */
  sendFailed({ what, again }: IRequestLabel, reason: string): string {
    return this._trans.__('Polyadic could not start %1 (%2); %3.', what, reason, again);
  }

  // --- replies -----------------------------------------------------------------------------

  /** A reply of a type that does not answer the request. */
  unexpectedReply(type: string, expected: readonly string[]): string {
    return this._trans.__(
      "The kernel replied '%1' where %2 was expected; check that the polyadic package in the kernel matches this extension.",
      type,
      expected.join(this._trans.__(' or '))
    );
  }

  /** A kernel message whose field `field` is missing or of the wrong type ('' for the message itself). */
  malformedMessage(type: string, field: string): string {
    return field === ''
      ? this._trans.__("The kernel's '%1' message is not a JSON object; check that the polyadic package in the kernel matches this extension.", type)
      : this._trans.__(
          "The kernel's '%1' message has no valid '%2'; check that the polyadic package in the kernel matches this extension.",
          type,
          field
        );
  }

  /** A listing of another protocol version than ours. */
  protocolMismatch(kernelProtocol: unknown, ours: number): string {
    return this._trans.__(
      "The kernel's polyadic package speaks bridge protocol %1 and this extension speaks %2: install the polyadic package of the same version as the extension, then restart the kernel.",
      String(kernelProtocol),
      String(ours)
    );
  }

  /** The kernel stored an analysis before its last chunk. */
  storedEarly(analysisId: string, chunk: number, chunks: number): string {
    return this._trans.__("The kernel stored analysis '%1' after %2 of %3 chunks; send it again.", analysisId, String(chunk), String(chunks));
  }

  /** The kernel stored another number of multiplets than were sent. */
  storedOtherRows(analysisId: string, stored: number, sent: number): string {
    return this._trans.__("The kernel stored %1 multiplets of analysis '%2' instead of %3; send it again.", String(stored), analysisId, String(sent));
  }

  /** The kernel acknowledged the last chunk without storing the table. */
  notStored(analysisId: string): string {
    return this._trans.__("The kernel did not store analysis '%1' after its last chunk; send it again.", analysisId);
  }

  /** No chunk of an analysis was sent (cannot happen: a table always has at least one chunk). */
  noChunkSent(analysisId: string): string {
    return this._trans.__("No chunk of analysis '%1' was sent.", analysisId);
  }

  // --- arguments ---------------------------------------------------------------------------

  /** fetch: no frame name. */
  readonly EMPTY_FRAME_NAME: string;
  /** fetch: columns that are not a list of names. */
  readonly COLUMNS_NOT_NAMES: string;
  /** sendResults: a bad analysis id. */
  readonly BAD_ANALYSIS_ID: string;
  /** sendResults: metadata that is not a JSON object. */
  readonly META_NOT_OBJECT: string;

  /** fetch: an empty column list. */
  noColumns(frame: string): string {
    return this._trans.__("Choose at least one column of '%1' to fetch.", frame);
  }

  /** fetch: a row cap that is not a whole number ≥ 1. */
  badRowCap(value: unknown): string {
    return this._trans.__('The row cap must be a whole number of at least 1, got %1.', String(value));
  }

  /** fetch: a sample seed that is not a whole number ≥ 0. */
  badSeed(value: unknown): string {
    return this._trans.__('The sample seed must be a whole number of at least 0, got %1.', String(value));
  }

  /** sendResults: a chunk size out of range. */
  badChunkBytes(value: unknown, maximum: number): string {
    return this._trans.__('The chunk size must be a whole number of bytes from 1 to %1, got %2.', String(maximum), String(value));
  }

  // --- console -----------------------------------------------------------------------------

  /** Logged for a comm message without a type. */
  readonly UNTYPED_MESSAGE: string;

  /** Logged for an error the kernel sent outside any request. */
  errorOutsideRequest(message: string): string {
    return this._trans.__('Polyadic: the kernel reported an error outside any request: %1', message);
  }
}

/** The bridge's texts as written (no translator). */
export const BRIDGE_TEXTS = new BridgeTexts();
