/**
 * `polyadic fingerprint DATA [--columns a,b,c]`: print the fingerprint (docs/fingerprint.md) of
 * columns of a data file as JSON, the same value a record holds and `polyadic verify` compares.
 * Useful to see why verify reports a data change, and to check another implementation.
 *
 * Exit codes: 0 done; 2 bad input or usage; 1 internal error.
 */

import { parseArgs } from 'util';

import { PolyadicError } from '../engine/errors';
import { fingerprintColumns } from '../record/fingerprint';
import { argumentError, EXIT, ICliStreams, reportFailure } from './core';
import { readDataFile } from './readers';

/** The text of `polyadic fingerprint --help`. */
export const FINGERPRINT_HELP = `Usage: polyadic fingerprint DATA [--columns a,b,c]

Print the fingerprint of columns of DATA (.csv, .tsv, Arrow IPC or .parquet) as
JSON: the SHA-256 of the canonical encoding (pdfp1) over the columns, and each
column's own digest. Default: every column, in file order.

Options:
  --columns a,b,c       the columns, in this order
  -h, --help            show this help
`;

/** Run `polyadic fingerprint` on its arguments (after the word `fingerprint`). */
export async function runFingerprint(args: string[], io: ICliStreams): Promise<number> {
  try {
    let parsed;
    try {
      parsed = parseArgs({
        args,
        strict: true,
        allowPositionals: true,
        options: { columns: { type: 'string' }, help: { type: 'boolean', short: 'h' } }
      });
    } catch (error) {
      throw argumentError(error, 'fingerprint');
    }
    if (parsed.values.help) {
      io.stdout.write(FINGERPRINT_HELP);
      return EXIT.done;
    }
    const [data, ...extra] = parsed.positionals;
    if (data === undefined || extra.length > 0) {
      throw new PolyadicError('usage', 'fingerprint takes one DATA file: polyadic fingerprint DATA [--columns a,b,c].');
    }
    const columns = parsed.values.columns === undefined ? undefined : parsed.values.columns.split(',');
    if (columns?.some(name => name === '')) {
      throw new PolyadicError('usage', `--columns has an empty name in '${parsed.values.columns}'.`, { option: '--columns' });
    }
    const source = await readDataFile(data, { columns });
    const fingerprint = await fingerprintColumns(source.columns);
    io.stdout.write(JSON.stringify({ ...fingerprint, rows: source.rows }, null, 2) + '\n');
    return EXIT.done;
  } catch (error) {
    return reportFailure(error, io);
  }
}
