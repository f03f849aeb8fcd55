/**
 * Browser check of the engine workers (not a jest spec: it needs Chromium). It builds the worker
 * bundle with scripts/build-worker.mjs, bundles a page that starts the workers the way the
 * extension does (src/worker/browser.ts: a Blob URL of the bundle), serves it on 127.0.0.1 and
 * drives Debian's Chromium headless through playwright-core (no browser download). In the page:
 *
 * 1. a 2-worker run, compared with `analyze` and `computeLattice` in Node (result equal, lattice
 *    equal bit for bit);
 * 2. a long run with progress (default interval), cancelled 1.5 s into the walk: the longest gap
 *    between progress reports, and the time from cancel() to the rejection;
 * 3. a run right after the cancel, on fresh workers.
 *
 * Usage: node test/worker/browser-smoke.mjs      (exit code 0 when every check holds)
 */
import { isDeepStrictEqual } from 'node:util';

import { withEnginePage } from './browser-page.mjs';

const failures = [];
const check = (ok, what) => {
  console.log(`${ok ? 'ok  ' : 'FAIL'} ${what}`);
  if (!ok) {
    failures.push(what);
  }
};

const SMALL = { rows: 3000, columns: 10, options: { missing: 'category', estimator: 'chao-shen', top: 25 } };
const LONG = { rows: 10000, columns: 16, options: { maxOrder: 16 } };

try {
  const pageSource = `
        import { EnginePool } from './src/worker/pool';
        import { createEngineWorker } from './src/worker/browser';
        import { makeColumns } from './test/worker/data';
        import { analyze, latticeInput, prepareColumns } from './src/engine/analyze';
        import { computeLattice } from './src/engine/lattice';
        window.smoke = async (small, long) => {
          const out = {};
          const pool = new EnginePool({ createWorker: createEngineWorker, workers: 2 });
          const columns = makeColumns(small.rows, small.columns);
          const run = await pool.analyze(columns, small.options, { includeLattice: true });
          out.result = run.result;
          out.entropy = Array.from(run.lattice.entropy);
          out.workers = run.workers;
          // The same computation on the page's own thread, for a check within one JavaScript engine.
          const here = computeLattice(latticeInput(prepareColumns(columns, small.options), small.options));
          out.samePage = here.entropy.length === run.lattice.entropy.length &&
            here.entropy.every((value, i) => Object.is(value, run.lattice.entropy[i]));
          out.sameResultPage = JSON.stringify(analyze(columns, small.options)) === JSON.stringify(run.result);
          const reports = [];
          let cancelledAt = 0;
          let timer;
          const running = pool.analyze(makeColumns(long.rows, long.columns), long.options, {
            onProgress: p => {
              reports.push({ at: performance.now(), phase: p.phase, fraction: p.fraction, unitsDone: p.unitsDone });
              if (p.phase === 'walking' && timer === undefined) {
                timer = setTimeout(() => { cancelledAt = performance.now(); pool.cancel(); }, 1500);
              }
            }
          });
          try {
            await running;
            out.cancel = 'resolved';
          } catch (error) {
            out.cancel = { kind: error.kind, afterMs: performance.now() - cancelledAt };
          }
          out.reportsAfterCancel = reports.filter(r => r.at > cancelledAt).length;
          let gap = 0;
          for (let i = 1; i < reports.length; i++) gap = Math.max(gap, reports[i].at - reports[i - 1].at);
          out.longestGapMs = gap;
          out.reports = reports.length;
          out.liveAfterCancel = pool.liveWorkers;
          const again = await pool.analyze(columns, small.options);
          out.againEqual = JSON.stringify(again.result) === JSON.stringify(run.result);
          pool.dispose();
          return out;
        };
      `;
  // The reference in Node, from the same sources.
  const referenceSource = `
        export { analyze, latticeInput, prepareColumns } from './src/engine/analyze';
        export { computeLattice } from './src/engine/lattice';
        export { makeColumns } from './test/worker/data';
      `;

  await withEnginePage(pageSource, referenceSource, async (page, reference, errors) => {
    const out = await page.evaluate(([small, long]) => window.smoke(small, long), [SMALL, LONG]);

    check(out.samePage, 'lattice of the 2 workers equals computeLattice() on the page, bit for bit');
    check(out.sameResultPage, 'result of the 2 workers equals analyze() on the page');
    // Across JavaScript engines (this Chromium against this Node) the math library may differ in
    // the last bit; reported, not failed.
    const columns = reference.makeColumns(SMALL.rows, SMALL.columns);
    const whole = reference.computeLattice(
      reference.latticeInput(reference.prepareColumns(columns, SMALL.options), SMALL.options)
    );
    let differing = 0;
    let largest = 0;
    out.entropy.forEach((value, i) => {
      if (!Object.is(value, whole.entropy[i])) {
        differing++;
        largest = Math.max(largest, Math.abs(value - whole.entropy[i]) / Math.abs(whole.entropy[i]));
      }
    });
    const sameResult = isDeepStrictEqual(out.result, JSON.parse(JSON.stringify(reference.analyze(columns, SMALL.options))));
    console.log(
      `info Chromium against Node ${process.versions.node}: ${differing} of ${whole.entropy.length} entropies differ ` +
        `(largest relative difference ${largest.toExponential(2)}); results ${sameResult ? 'equal' : 'differ'}`
    );
    check(out.workers === 2, `two workers walked (${out.workers})`);
    check(out.cancel !== 'resolved' && out.cancel.kind === 'cancelled', 'the long run was cancelled');
    check(out.cancel.afterMs < 200, `rejected ${out.cancel.afterMs.toFixed(1)} ms after cancel()`);
    check(out.reportsAfterCancel === 0, 'no progress report after cancel()');
    check(out.longestGapMs <= 250, `longest gap between progress reports ${out.longestGapMs.toFixed(0)} ms (${out.reports} reports)`);
    check(out.liveAfterCancel === 0, 'every worker terminated by cancel()');
    check(out.againEqual, 'a run after the cancel, on new workers, gives the same result');
    check(errors.length === 0, `no page error${errors.length ? `: ${errors.join('; ')}` : ''}`);
  });
} catch (error) {
  check(false, `smoke check ran: ${error.stack ?? error}`);
}
process.exit(failures.length ? 1 : 0);
