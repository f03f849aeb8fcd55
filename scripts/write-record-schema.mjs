/**
 * Write schema/record.schema.json from its one source, src/record/schema.ts (the front end and
 * the CLI bundle the module; the file is for people and tools outside the extension). Run after
 * changing the schema: `node scripts/write-record-schema.mjs`; test/record/schema.spec.ts
 * fails while the two differ.
 */
import { writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

import { build } from 'esbuild';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const bundled = await build({
  entryPoints: [`${root}/src/record/schema.ts`],
  bundle: true,
  write: false,
  platform: 'node',
  format: 'esm',
  target: 'node18'
});
const url = `data:text/javascript;base64,${Buffer.from(bundled.outputFiles[0].text).toString('base64')}`;
const { RECORD_SCHEMA } = await import(url);
writeFileSync(`${root}/schema/record.schema.json`, `${JSON.stringify(RECORD_SCHEMA, null, 2)}\n`);
console.log('wrote schema/record.schema.json');
