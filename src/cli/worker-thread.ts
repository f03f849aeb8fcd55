/**
 * Entry of the CLI's engine worker threads (bundled to bin/polyadic-worker.cjs): only the
 * engine and the worker host, so a thread starts without parsing the file readers.
 */

import { serveIfWorkerThread } from './threads';

if (!serveIfWorkerThread()) {
  process.stderr.write('polyadic: bin/polyadic-worker.cjs is started by polyadic analyze --threads, not by hand.\n');
  process.exitCode = 2;
}
