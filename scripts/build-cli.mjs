/**
 * Bundle the command line (src/cli/main.ts) into one CommonJS file for Node 18+, with a
 * shebang, executable, and its worker-thread entry (src/cli/worker-thread.ts) beside it. Usage: node scripts/build-cli.mjs [--outfile PATH] (default
 * bin/polyadic.cjs; tests build into a temporary folder so parallel runs do not collide).
 */
import { chmodSync, readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';

import { build } from 'esbuild';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const { values } = parseArgs({ options: { outfile: { type: 'string' } }, strict: true });
const { version } = JSON.parse(readFileSync(`${root}/package.json`, 'utf8'));
const outfile = resolve(values.outfile ?? `${root}/bin/polyadic.cjs`);

await build({
  entryPoints: [`${root}/src/cli/main.ts`],
  outfile,
  bundle: true,
  platform: 'node',
  format: 'cjs',
  target: 'node18',
  // hyparquet's package picks its Node entry under the 'node' condition
  conditions: ['node'],
  // DuckDB's binding holds a native library: loaded from node_modules at run time (--via duckdb)
  external: ['@duckdb/node-api', '@duckdb/node-bindings'],
  banner: { js: '#!/usr/bin/env node' },
  define: { POLYADIC_VERSION: JSON.stringify(version) },
  sourcemap: false,
  legalComments: 'none',
  logLevel: 'warning'
});
chmodSync(outfile, 0o755);
console.log(`built ${outfile}`);

// The worker threads of `--threads N` run a bundle of their own beside it: the engine and the
// worker host only, so a thread starts quickly.
const workerfile = resolve(dirname(outfile), 'polyadic-worker.cjs');
await build({
  entryPoints: [`${root}/src/cli/worker-thread.ts`],
  outfile: workerfile,
  bundle: true,
  platform: 'node',
  format: 'cjs',
  target: 'node18',
  sourcemap: false,
  legalComments: 'none',
  logLevel: 'warning'
});
console.log(`built ${workerfile}`);
