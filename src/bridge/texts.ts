/**
 * What the bridge tells the user: every state message and error text of the connection, the
 * request channel and the bridge's requests, one constant or function per message, taking the
 * names it quotes. Plain text, never HTML (frame, column and package names come from the kernel).
 */
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

// --- requests ------------------------------------------------------------------------------

/** The label of a listing request. */
export const LISTING_REQUEST: IRequestLabel = { what: 'the listing of dataframes', again: 'refresh the list' };

/** The label of a fetch of frame `name`. */
export function fetchRequest(name: string): IRequestLabel {
  return { what: `the fetch of '${name}'`, again: `fetch '${name}' again` };
}

/** The label of the upload of an analysis's results. */
export function resultsRequest(analysisId: string): IRequestLabel {
  return { what: `the upload of the results of analysis '${analysisId}'`, again: 'send them again' };
}

// --- states --------------------------------------------------------------------------------

/** Message of the `no-kernel` state. */
export const NO_KERNEL = 'This notebook has no kernel: start one to list its dataframes.';
/** Message while importing and opening the comm. */
export const STARTING = "Connecting to the notebook's kernel…";
/** Message while the kernel restarts. */
export const RESTARTING = 'The kernel is restarting; Polyadic reconnects when it is back.';
/** Message while the websocket reconnects. */
export const RECONNECTING = 'The connection to the kernel was lost; Polyadic reconnects when it is back.';
/** Message after the kernel died. */
export const DEAD = 'The kernel died: restart it to use Polyadic with this notebook.';
/** Message when the kernel closed or ignored the comm it was asked to open. */
export const REFUSED =
  "The kernel imported polyadic but did not open Polyadic's comm; restart the kernel and try again.";
/** Message when the kernel closes the comm again right after it was re-opened. */
export const CLOSED_AGAIN = "The kernel keeps closing Polyadic's comm; restart the kernel and try again.";
/** The command that installs the package, and the one for a source checkout. */
export const PIP_COMMANDS: readonly string[] = ['pip install polyadic', 'pip install -e .'];

/** The state message of a kernel in another language. */
export function notPython(language: string): string {
  const runs = language ? ` this notebook's kernel runs ${language}` : " this notebook's kernel is not Python";
  return `Python kernels only, for now:${runs}.`;
}

/** The state message once connected. */
export function ready(version: string): string {
  return `Connected to the kernel (polyadic ${version}).`;
}

/** The state message when connecting failed with an exception. */
export function connectFailed(reason: string): string {
  return `Polyadic could not connect to the kernel (${reason}); restart the kernel and try again.`;
}

/** The kernel did not run the silent import at all. */
export const IMPORT_NOT_RUN = 'The kernel could not run the silent import of polyadic; restart the kernel and try again.';
/** The kernel ran the import but reported nothing about it. */
export const IMPORT_UNREPORTED =
  'The kernel did not report whether polyadic could be imported; restart the kernel and try again.';

/** polyadic (or, when `cause` names it, one of its dependencies) is not installed in the kernel. */
export function missingPackage(cause: string): string {
  return (
    `The kernel cannot import polyadic${cause}: run \`pip install polyadic\` in the kernel's environment ` +
    '(from a source checkout, `pip install -e .`), then try again.'
  );
}

/** The import of polyadic raised another exception. */
export function importFailed(ename: string, evalue: string): string {
  return `Importing polyadic in the kernel failed (${ename}: ${evalue}); restart the kernel and try again.`;
}

// --- request failures ----------------------------------------------------------------------

/** A request made before the bridge was ready. */
export const STILL_CONNECTING = 'Polyadic is still connecting to the kernel; try again in a moment.';
/** A request made after the bridge was disposed. */
export const NO_LONGER_CONNECTED = 'Polyadic is no longer connected to this notebook.';
/** An error reply without a message. */
export const REFUSED_WITHOUT_REASON = 'The kernel refused the request without saying why.';

/** What a pending request is told when the connection ends it, by reason. */
export const INTERRUPTED: { readonly [R in Interruption]: (request: IRequestLabel) => string } = {
  restart: ({ what, again }) =>
    `The kernel restarted or stopped during ${what}, which was cancelled; once it is back, ` +
    `run the cells that build your data, then ${again}.`,
  'kernel-changed': ({ what, again }) => `The notebook's kernel changed during ${what}, which was cancelled; ${again}.`,
  closed: ({ what, again }) =>
    `The kernel closed Polyadic's comm during ${what}; Polyadic reconnects by itself, so ${again} in a moment.`,
  connection: ({ what, again }) => `The connection to the kernel was lost during ${what}; ${again} once it is back.`,
  unanswered: ({ what, again }) => `The kernel stopped before answering ${what} (was it interrupted?); ${again}.`,
  cancelled: ({ what, again }) => `Polyadic reconnected to the kernel during ${what}, which was cancelled; ${again}.`,
  disposed: ({ what }) => `Polyadic stopped following this notebook during ${what}.`,
  protocol: ({ what, again }) => `${what} failed: the kernel's replies did not follow the protocol; ${again}.`
};

/** A request that could not be sent because the comm is closed. */
export function commClosed({ what, again }: IRequestLabel): string {
  return `The comm to the kernel is closed, so ${what} could not start; ${again}.`;
}

/** A request that could not be sent for another reason. */
export function sendFailed({ what, again }: IRequestLabel, reason: string): string {
  return `Polyadic could not start ${what} (${reason}); ${again}.`;
}

// --- replies -------------------------------------------------------------------------------

/** A reply of a type that does not answer the request. */
export function unexpectedReply(type: string, expected: readonly string[]): string {
  return (
    `The kernel replied '${type}' where ${expected.join(' or ')} was expected; check that the polyadic package ` +
    'in the kernel matches this extension.'
  );
}

/** A kernel message whose field `field` is missing or of the wrong type ('' for the message itself). */
export function malformedMessage(type: string, field: string): string {
  const problem = field === '' ? 'is not a JSON object' : `has no valid '${field}'`;
  return (
    `The kernel's '${type}' message ${problem}; check that the polyadic package in the kernel ` +
    'matches this extension.'
  );
}

/** A listing of another protocol version than ours. */
export function protocolMismatch(kernelProtocol: unknown, ours: number): string {
  return (
    `The kernel's polyadic package speaks bridge protocol ${String(kernelProtocol)} and this extension ` +
    `speaks ${ours}: install the polyadic package of the same version as the extension, then restart the kernel.`
  );
}

/** The kernel stored an analysis before its last chunk. */
export function storedEarly(analysisId: string, chunk: number, chunks: number): string {
  return `The kernel stored analysis '${analysisId}' after ${chunk} of ${chunks} chunks; send it again.`;
}

/** The kernel stored another number of multiplets than were sent. */
export function storedOtherRows(analysisId: string, stored: number, sent: number): string {
  return `The kernel stored ${stored} multiplets of analysis '${analysisId}' instead of ${sent}; send it again.`;
}

/** The kernel acknowledged the last chunk without storing the table. */
export function notStored(analysisId: string): string {
  return `The kernel did not store analysis '${analysisId}' after its last chunk; send it again.`;
}

/** No chunk of an analysis was sent (cannot happen: a table always has at least one chunk). */
export function noChunkSent(analysisId: string): string {
  return `No chunk of analysis '${analysisId}' was sent.`;
}

// --- arguments -----------------------------------------------------------------------------

/** fetch: no frame name. */
export const EMPTY_FRAME_NAME = "Choose a dataframe to fetch: the frame's name is empty.";
/** fetch: columns that are not a list of names. */
export const COLUMNS_NOT_NAMES = 'The columns to fetch must be a list of column names.';
/** sendResults: a bad analysis id. */
export const BAD_ANALYSIS_ID = 'The analysis id must be a non-empty text of at most 200 characters.';
/** sendResults: metadata that is not a JSON object. */
export const META_NOT_OBJECT = 'The results metadata must be a JSON object.';

/** fetch: an empty column list. */
export function noColumns(frame: string): string {
  return `Choose at least one column of '${frame}' to fetch.`;
}

/** fetch: a row cap that is not a whole number ≥ 1. */
export function badRowCap(value: unknown): string {
  return `The row cap must be a whole number of at least 1, got ${String(value)}.`;
}

/** fetch: a sample seed that is not a whole number ≥ 0. */
export function badSeed(value: unknown): string {
  return `The sample seed must be a whole number of at least 0, got ${String(value)}.`;
}

/** sendResults: a chunk size out of range. */
export function badChunkBytes(value: unknown, maximum: number): string {
  return `The chunk size must be a whole number of bytes from 1 to ${maximum}, got ${String(value)}.`;
}

// --- console -------------------------------------------------------------------------------

/** Logged for a comm message without a type. */
export const UNTYPED_MESSAGE = 'Polyadic: ignored a comm message without a type from the kernel.';

/** Logged for an error the kernel sent outside any request. */
export function errorOutsideRequest(message: string): string {
  return `Polyadic: the kernel reported an error outside any request: ${message}`;
}
