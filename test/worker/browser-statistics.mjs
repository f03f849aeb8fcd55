/**
 * Browser check of the statistics: the same seeded analysis with surrogates, bootstrap and the
 * pairwise-preserving null through the pool with 1 and with 2 real Web Workers in Chromium, and
 * `analyze` in Node. The three JSON texts must be identical byte for byte (the engine's
 * logarithm does not depend on the JavaScript engine). Run by test/worker/browser.spec.ts.
 *
 * Usage: node test/worker/browser-statistics.mjs   (prints one JSON line; exit 0 when equal)
 */
import { withEnginePage } from './browser-page.mjs';

const CASE = {
  rows: 800,
  columns: 7,
  options: {
    maxOrder: 3,
    missing: 'category',
    statistics: { surrogates: 40, bootstrap: 15, seed: 21, beyondPairs: 2, fitDraws: 20, sharpen: 200 }
  }
};

const page = `
  import { EnginePool } from './src/worker/pool';
  import { createEngineWorker } from './src/worker/browser';
  import { makeColumns } from './test/worker/data';
  window.statistics = async (c) => {
    const columns = makeColumns(c.rows, c.columns);
    const out = [];
    for (const workers of [1, 2]) {
      const pool = new EnginePool({ createWorker: createEngineWorker, workers });
      const run = await pool.analyze(columns, c.options);
      out.push({ workers: run.workers, json: JSON.stringify(run.result) });
      pool.dispose();
    }
    return out;
  };
`;
const reference = `
  export { analyze } from './src/engine/analyze';
  export { makeColumns } from './test/worker/data';
`;

let report;
try {
  report = await withEnginePage(page, reference, async (browserPage, ref, errors) => {
    const runs = await browserPage.evaluate(c => window.statistics(c), CASE);
    const node = JSON.stringify(ref.analyze(ref.makeColumns(CASE.rows, CASE.columns), CASE.options));
    return {
      workers: runs.map(run => run.workers),
      oneEqualsTwo: runs[0].json === runs[1].json,
      browserEqualsNode: runs[0].json === node,
      hasStatistics: JSON.parse(node).statistics?.surrogates === 40,
      errors
    };
  });
} catch (error) {
  report = { error: String(error?.stack ?? error) };
}
console.log(JSON.stringify(report));
const ok = report.oneEqualsTwo && report.browserEqualsNode && report.hasStatistics && report.errors?.length === 0;
process.exit(ok ? 0 : 1);
