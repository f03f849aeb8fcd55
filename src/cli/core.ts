/**
 * What every command of the CLI shares: where it writes, its exit codes and how it prints a
 * message that quotes untrusted text.
 */

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
