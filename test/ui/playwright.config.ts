/**
 * Browser tests of the Polyadic extension in a real JupyterLab, driven by Playwright with
 * Debian's Chromium. Run with `make test-ui` (or `npx playwright test -c test/ui/playwright.config.ts`
 * after `make install`).
 *
 * - The JupyterLab server is started by serve.mjs on 127.0.0.1 at a free port, in a
 *   temporary root with the fixtures copied in, and stopped when the run ends.
 * - No browser is downloaded: Chromium is /usr/bin/chromium (override with PD_CHROMIUM).
 * - Artifacts go to artifacts/ui/: screenshots (panel-dark.png …), traces and the HTML
 *   report of failed runs.
 */
import { defineConfig } from '@playwright/test';
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import path from 'node:path';

import { ARTIFACTS } from './paths';

const chromium = process.env.PD_CHROMIUM ?? '/usr/bin/chromium';

if (!existsSync(chromium)) {
  throw new Error(
    `Chromium is missing at ${chromium}: run \`make deps\` (apt-get install chromium) or set PD_CHROMIUM.`
  );
}

/** A TCP port that is free on 127.0.0.1 right now, found by letting the OS pick one. */
function freePort(): string {
  const script =
    "const s=require('net').createServer();" +
    "s.listen(0,'127.0.0.1',()=>{process.stdout.write(String(s.address().port));s.close();});";
  return execFileSync(process.execPath, ['-e', script], { encoding: 'utf8' }).trim();
}

// Playwright evaluates this file in the runner and again in every worker; the environment
// variable carries the runner's choice to the workers so they all talk to the same server.
process.env.PD_UI_PORT ??= freePort();
const port = process.env.PD_UI_PORT;

export default defineConfig({
  testDir: __dirname,
  testMatch: '**/*.spec.ts',
  outputDir: path.join(ARTIFACTS, 'test-results'),
  // One JupyterLab, one browser at a time: a 2-core CI machine stays responsive.
  workers: 1,
  fullyParallel: false,
  forbidOnly: !!process.env.CI,
  retries: 0,
  timeout: 120_000,
  expect: { timeout: 20_000 },
  reporter: [
    ['list'],
    ['html', { outputFolder: path.join(ARTIFACTS, 'report'), open: 'never' }]
  ],
  use: {
    baseURL: `http://127.0.0.1:${port}/`,
    viewport: { width: 1280, height: 800 },
    headless: true,
    trace: 'retain-on-failure',
    screenshot: 'only-on-failure',
    launchOptions: {
      executablePath: chromium,
      args: [
        '--no-sandbox',
        '--disable-gpu',
        '--disable-background-networking',
        '--disable-component-update',
        '--disable-sync',
        '--no-first-run'
      ]
    }
  },
  webServer: {
    command: `node ${JSON.stringify(path.join(__dirname, 'serve.mjs'))}`,
    url: `http://127.0.0.1:${port}/lab`,
    env: { PD_UI_PORT: port },
    timeout: 180_000,
    reuseExistingServer: false,
    stdout: 'ignore',
    stderr: 'pipe',
    gracefulShutdown: { signal: 'SIGTERM', timeout: 15_000 }
  }
});
