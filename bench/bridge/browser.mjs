/**
 * Handover benchmark in a real JupyterLab: time from picking a frame of float64 columns
 * (default 1,000,000 rows × 20 columns) in the Polyadic panel to its columns decoded in the
 * browser, next to the time pyarrow alone takes to write that frame's IPC stream in the same
 * kernel, in the same run. Timings are medians, printed, never asserted.
 *
 * The server is the browser tests' (test/ui/serve.mjs: a throw-away root on 127.0.0.1, no
 * token); Chromium is Debian's /usr/bin/chromium (override with PD_CHROMIUM), nothing is
 * downloaded. The page is driven through the UI only: pick the frame, wait until the last
 * column's checkbox is enabled (the panel enables it once the fetched columns are decoded and
 * their distinct and missing counts computed), timed with performance.now() in the page; the
 * moment the load bar is full (every byte received) is reported beside it.
 *
 * The page fetches through the server's handover route (polyadic/_server.py) when the server
 * has it; `--comm` starts the server with the extension off, so the same fetch travels over the
 * comm, as before the route existed. Long tasks of the page's main thread are printed per run,
 * and where the time went, from the bridge's performance marks (src/bridge/connector.ts).
 *
 * Usage: node bench/bridge/browser.mjs [--rows N] [--columns N] [--repeats N] [--comm]
 * Needs a built extension (`npm run build`) installed in .venv.
 */
import { spawn, execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';

import { chromium } from '@playwright/test';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const { values: flags } = parseArgs({
  options: {
    rows: { type: 'string', default: '1000000' },
    columns: { type: 'string', default: '20' },
    repeats: { type: 'string', default: '3' },
    comm: { type: 'boolean', default: false }
  },
  strict: true
});
const rows = Number(flags.rows);
const columns = Number(flags.columns);
const repeats = Number(flags.repeats);
for (const [name, value] of [
  ['--rows', rows],
  ['--columns', columns],
  ['--repeats', repeats]
]) {
  if (!Number.isSafeInteger(value) || value < 1) {
    console.error(`bench/bridge/browser: ${name} must be a whole number ≥ 1, got ${flags[name.slice(2)]}.`);
    process.exit(2);
  }
}
const executablePath = process.env.PD_CHROMIUM ?? '/usr/bin/chromium';
if (!existsSync(executablePath)) {
  console.error(`bench/bridge/browser: no Chromium at ${executablePath}; install Debian's chromium or set PD_CHROMIUM.`);
  process.exit(2);
}

/** A TCP port that is free on 127.0.0.1 right now, picked by the OS. */
function freePort() {
  const script =
    "const s=require('net').createServer();" +
    "s.listen(0,'127.0.0.1',()=>{process.stdout.write(String(s.address().port));s.close();});";
  return execFileSync(process.execPath, ['-e', script], { encoding: 'utf8' }).trim();
}

/** Resolve once the server answers on /lab, or fail after `seconds`. */
async function waitForServer(url, seconds) {
  const deadline = Date.now() + seconds * 1000;
  while (Date.now() < deadline) {
    try {
      const reply = await fetch(url);
      if (reply.ok) {
        return;
      }
    } catch {
      // not listening yet
    }
    await new Promise(done => setTimeout(done, 500));
  }
  throw new Error(`JupyterLab did not answer on ${url} within ${seconds} s (log: artifacts/ui/jupyter-server.log).`);
}

/** The median of a list of numbers. */
function median(values) {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = sorted.length >> 1;
  return sorted.length % 2 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
}

// The kernel cell: a seeded frame of float64 sensor columns, then pyarrow alone writing its IPC
// stream (uncompressed, as the bridge sends it), timed with perf_counter; one JSON line out.
const cell = [
  'import json, statistics, time',
  'import numpy as np, pandas as pd, pyarrow as pa',
  `rows, columns, repeats = ${rows}, ${columns}, ${repeats}`,
  'rng = np.random.default_rng(2031)',
  'bench_frame = pd.DataFrame({f"sensor_{j:02d}": rng.standard_normal(rows) for j in range(columns)})',
  'table = pa.Table.from_pandas(bench_frame, preserve_index=False)',
  'seconds = []',
  'for _ in range(repeats):',
  '    start = time.perf_counter()',
  '    sink = pa.BufferOutputStream()',
  '    with pa.ipc.new_stream(sink, table.schema) as writer:',
  '        writer.write_table(table)',
  '    stream = sink.getvalue()',
  '    seconds.append(time.perf_counter() - start)',
  'del table',
  'print("BENCH " + json.dumps({"pyarrow_write_ms": 1000 * statistics.median(seconds), "bytes": stream.size}))',
  'del stream, sink'
].join('\n');

const notebook = {
  cells: [{ cell_type: 'code', execution_count: null, id: 'bench', metadata: {}, outputs: [], source: cell }],
  metadata: {
    kernelspec: { display_name: 'Python 3 (ipykernel)', language: 'python', name: 'python3' },
    language_info: { name: 'python' }
  },
  nbformat: 4,
  nbformat_minor: 5
};

const port = freePort();
const server = spawn(process.execPath, [join(root, 'test', 'ui', 'serve.mjs')], {
  env: { ...process.env, PD_UI_PORT: port, PD_UI_NO_ROUTE: flags.comm ? '1' : '0' },
  stdio: ['ignore', 'ignore', 'inherit']
});
const serverExit = new Promise(done => server.on('exit', done));
let browser;
try {
  const base = `http://127.0.0.1:${port}/`;
  await waitForServer(`${base}lab`, 180);
  browser = await chromium.launch({
    executablePath,
    headless: true,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--no-first-run'
    ]
  });
  const page = await browser.newPage({ viewport: { width: 1280, height: 800 } });
  page.setDefaultTimeout(300_000);
  await page.goto(`${base}lab/workspaces/bench-bridge`);
  await page.waitForFunction(() => window.jupyterapp !== undefined);
  await page.evaluate(async content => {
    const app = window.jupyterapp;
    await app.started;
    await app.restored;
    await app.serviceManager.contents.save('bench-bridge.ipynb', { type: 'notebook', format: 'json', content });
  }, notebook);
  const execute = (id, args = {}) => page.evaluate(([command, options]) => window.jupyterapp.commands.execute(command, options), [id, args]);
  await execute('docmanager:open', { path: 'bench-bridge.ipynb' });
  await page.locator('.jp-NotebookPanel .jp-CodeCell').first().waitFor();
  await execute('polyadic:open-panel');
  const panel = page.getByRole('region', { name: 'Polyadic', exact: true });
  await panel.getByText('No dataframe in this notebook’s kernel yet', { exact: false }).waitFor();

  await page.locator('.jp-NotebookPanel .jp-CodeCell').first().click();
  await execute('notebook:run-cell');
  const output = page.locator('.jp-NotebookPanel .jp-OutputArea-output', { hasText: 'BENCH ' });
  await output.waitFor();
  const kernel = JSON.parse(/BENCH (\{.*\})/.exec(await output.innerText())[1]);

  // Long tasks of the main thread (over 50 ms, as Chromium reports them), from here on.
  await page.evaluate(() => {
    window.__pdLongTasks = [];
    new PerformanceObserver(list => {
      for (const entry of list.getEntries()) {
        window.__pdLongTasks.push({ start: entry.startTime, duration: entry.duration });
      }
    }).observe({ type: 'longtask', buffered: false });
  });
  const picker = panel.getByRole('combobox', { name: 'Dataframe', exact: true });
  await picker.locator('option[value="bench_frame"]').waitFor({ state: 'attached' });
  const last = `sensor_${String(columns - 1).padStart(2, '0')}`;
  const handover = [];
  for (let i = 0; i < repeats; i++) {
    await picker.selectOption('');
    handover.push(
      await page.evaluate(last => {
        const select = document.querySelector('select.pd-Data-picker');
        if (select === null) {
          throw new Error('The Dataframe picker is missing.');
        }
        const ready = () => {
          const box = document.querySelector(`input[type="checkbox"][aria-label="Use column ${CSS.escape(last)}"]`);
          return box !== null && !box.disabled;
        };
        const progress = document.querySelector('progress.pd-Data-progress');
        performance.clearMarks();
        return new Promise(resolve => {
          const start = performance.now();
          const tasksBefore = window.__pdLongTasks.length;
          // The last piece's bytes are in when the load bar is full; polled, because a
          // progress element's value is a property that mutation observers do not see.
          let received = null;
          const poll = setInterval(() => {
            if (received === null && progress !== null && !progress.hidden && progress.value >= 1) {
              received = performance.now() - start;
            }
          }, 2);
          const observer = new MutationObserver(() => {
            if (ready()) {
              observer.disconnect();
              clearInterval(poll);
              const end = performance.now();
              // Let a task that is still running end and be reported, then keep those of the run.
              setTimeout(() => {
                const tasks = window.__pdLongTasks.slice(tasksBefore).filter(task => task.start < end);
                // The bridge's marks (src/bridge/connector.ts): the last of each step, from the pick.
                const steps = {};
                for (const mark of performance.getEntriesByType('mark')) {
                  if (mark.name.startsWith('polyadic:fetch:')) {
                    steps[mark.name.slice('polyadic:fetch:'.length)] = mark.startTime - start;
                  }
                }
                resolve({
                  steps,
                  total: end - start,
                  received,
                  longest: tasks.reduce((most, task) => Math.max(most, task.duration), 0),
                  longSum: tasks.reduce((sum, task) => sum + task.duration, 0),
                  longCount: tasks.length
                });
              }, 200);
            }
          });
          observer.observe(document.body, { childList: true, subtree: true, attributes: true, attributeFilter: ['disabled'] });
          select.value = 'bench_frame';
          select.dispatchEvent(new Event('change', { bubbles: true }));
        });
      }, last)
    );
  }
  const mb = kernel.bytes / 1e6;
  console.log(
    `handover of ${rows.toLocaleString('en-US')} rows × ${columns} float64 columns (${mb.toFixed(1)} MB IPC stream), ` +
      `${flags.comm ? 'over the comm (server extension off)' : "through the server's handover route"}, medians of ${repeats}:`
  );
  console.log(`  pyarrow alone, writing the IPC stream in the kernel: ${kernel.pyarrow_write_ms.toFixed(1)} ms`);
  const totals = handover.map(run => run.total);
  const received = handover.map(run => run.received).filter(ms => ms !== null);
  console.log(`  kernel → decoded columns in the browser (panel pick → checklist ready): ${median(totals).toFixed(1)} ms`);
  console.log(`  each run (ms): ${totals.map(ms => ms.toFixed(1)).join(', ')}`);
  console.log(
    `  main-thread long tasks per run (over 50 ms): longest ${handover.map(run => run.longest.toFixed(0)).join(', ')} ms; ` +
      `count ${handover.map(run => run.longCount).join(', ')}; total ${handover.map(run => run.longSum.toFixed(0)).join(', ')} ms`
  );
  for (const step of ['request', 'kernel-done', 'received', 'decoded']) {
    const at = handover.map(run => run.steps[step]).filter(ms => ms !== undefined);
    if (at.length > 0) {
      console.log(`  step '${step}' reached at (ms after the pick): ${at.map(ms => ms.toFixed(0)).join(', ')}`);
    }
  }
  if (received.length > 0) {
    // The rest of each run is decoding plus the panel's distinct and missing counts per column.
    console.log(`  of which until the last byte arrived (load bar full): ${median(received).toFixed(1)} ms (${received.length} of ${repeats} runs seen)`);
  }
} finally {
  await browser?.close();
  server.kill('SIGTERM');
  await serverExit;
}
