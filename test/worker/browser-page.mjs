/**
 * A page in Debian's Chromium (headless, through playwright-core: no browser download) that runs
 * engine code with real Web Workers, as the extension starts them (src/worker/browser.ts: a Blob
 * URL of the worker bundle). Shared by the browser checks of the worker pool.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:http';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { spawnSync } from 'node:child_process';

import { build } from 'esbuild';
import { chromium } from 'playwright-core';

/** The repository root. */
export const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

/**
 * Bundle `pageSource` (TypeScript, imports relative to the root) for the page and
 * `referenceSource` for Node, serve the page on 127.0.0.1, open it in Chromium and call
 * `use(page, reference, errors)`; everything is cleaned up afterwards.
 */
export async function withEnginePage(pageSource, referenceSource, use) {
  const work = mkdtempSync(join(tmpdir(), 'polyadic-browser-'));
  try {
    const built = spawnSync(process.execPath, [join(root, 'scripts', 'build-worker.mjs'), '--out-dir', work], {
      encoding: 'utf8'
    });
    if (built.status !== 0) {
      throw new Error(`scripts/build-worker.mjs failed: ${built.stderr}`);
    }
    const generated = {
      name: 'generated-bundle',
      setup(b) {
        b.onResolve({ filter: /\/bundle\.generated$/ }, () => ({ path: join(work, 'bundle.generated.js') }));
      }
    };
    await build({
      stdin: { contents: pageSource, resolveDir: root, loader: 'ts' },
      bundle: true,
      format: 'iife',
      platform: 'browser',
      target: 'es2022',
      outfile: join(work, 'page.js'),
      plugins: [generated],
      logLevel: 'warning'
    });
    writeFileSync(join(work, 'index.html'), '<!doctype html><meta charset="utf-8"><script src="page.js"></script>');
    await build({
      stdin: { contents: referenceSource, resolveDir: root, loader: 'ts' },
      bundle: true,
      format: 'cjs',
      platform: 'node',
      outfile: join(work, 'reference.cjs'),
      logLevel: 'warning'
    });
    const reference = createRequire(import.meta.url)(join(work, 'reference.cjs'));
    const server = createServer((request, response) => {
      const file = request.url === '/page.js' ? 'page.js' : 'index.html';
      response.writeHead(200, { 'content-type': file.endsWith('.js') ? 'text/javascript' : 'text/html' });
      response.end(readFileSync(join(work, file)));
    });
    await new Promise(done => server.listen(0, '127.0.0.1', done));
    const browser = await chromium.launch({
      executablePath: '/usr/bin/chromium',
      args: [
        '--no-sandbox',
        '--disable-gpu',
        '--disable-background-networking',
        '--disable-component-update',
        '--disable-sync',
        '--no-first-run'
      ]
    });
    try {
      const page = await browser.newPage();
      const errors = [];
      page.on('pageerror', error => errors.push(error.message));
      await page.goto(`http://127.0.0.1:${server.address().port}/`);
      return await use(page, reference, errors);
    } finally {
      await browser.close();
      server.close();
    }
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}
