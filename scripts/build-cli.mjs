/**
 * Bundle the command line (src/cli/main.ts) into one CommonJS file for Node 18+, with a
 * shebang, executable. Usage: node scripts/build-cli.mjs [--outfile PATH] (default
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
  banner: { js: '#!/usr/bin/env node' },
  define: { POLYADIC_VERSION: JSON.stringify(version) },
  sourcemap: false,
  legalComments: 'none',
  logLevel: 'warning'
});
chmodSync(outfile, 0o755);
console.log(`built ${outfile}`);
