/**
 * What every command of the CLI shares: where it writes, its exit codes, how it prints a
 * message that quotes untrusted text, and how it reports a failure.
 */
import { errorMessage, isPolyadicError, PolyadicError } from '../engine/errors';

/** Where a command writes: process.stdout/stderr, or a capture in tests. */
export interface ICliStreams {
  stdout: { write(text: string): unknown };
  stderr: { write(text: string): unknown };
}

/** Exit codes of every command (each command's help states the ones it uses). */
export const EXIT = {
  /** Done; for verify, every analysis reproduces. */
  done: 0,
  /** An internal error: a bug in Polyadic. */
  internal: 1,
  /** verify: at least one analysis does not reproduce (its line says which value and why). */
  differs: 1,
  /** Bad input or usage: one line on stderr naming what is at fault. */
  usage: 2
} as const;

/**
 * A message on one line with control characters shown as escapes: messages quote column
 * names, cells and labels from untrusted files and notebooks, which must not move the cursor
 * or recolour a terminal.
 */
export function oneLine(message: string): string {
  // eslint-disable-next-line no-control-regex
  return message.replace(/[\u0000-\u001f\u007f-\u009f]/g, c => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/** What {@link reportFailure} needs beyond the error. */
export interface IReportOptions {
  /** Exit code of bad input or usage (default {@link EXIT.usage}). */
  usageExit?: number;
  /** The one-based line of a file's data row, to name the line of a row at fault. */
  lineOfRow?: (row: number) => number;
}

/**
 * Print a failure and return its exit code: a PolyadicError about input, usage or a limit is one
 * line naming what is at fault (exit 2), anything else is a bug (exit 1) with a request to report it.
 */
export function reportFailure(error: unknown, streams: ICliStreams, options: IReportOptions = {}): number {
  if (isPolyadicError(error) && error.kind !== 'internal') {
    let message = error.message;
    const row = error.detail.row;
    if (options.lineOfRow && typeof row === 'number' && error.detail.line === undefined && !/\bline \d/.test(message)) {
      message = `${message.replace(/\.$/, '')} (line ${options.lineOfRow(row)} of the file).`;
    }
    streams.stderr.write(`polyadic: ${oneLine(message)}\n`);
    return options.usageExit ?? EXIT.usage;
  }
  streams.stderr.write(
    `polyadic: internal error: ${oneLine(errorMessage(error))}\n` +
      'polyadic: this is a bug in Polyadic; please report it with the command you ran, ' +
      'the output of `polyadic --version` and, if you can, the data file.\n'
  );
  if (process.env.POLYADIC_DEBUG && error instanceof Error && error.stack) {
    streams.stderr.write(error.stack + '\n');
  }
  return EXIT.internal;
}

/** The first sentence of a message (node's argument parser writes several), without its full stop. */
export function firstSentence(error: unknown): string {
  return errorMessage(error).split(/\.\s/)[0].replace(/\.$/, '');
}

/** A command line the argument parser refused, as a usage error that points at the command's help. */
export function argumentError(error: unknown, command: string): PolyadicError {
  return new PolyadicError('usage', `${firstSentence(error)}; see polyadic ${command} --help.`);
}
