/**
 * Speed of the engine pool on worker threads (not a test: nothing here asserts a time).
 *
 * Run from the repository root:
 *   node scripts/build-worker.mjs --out-dir /tmp/polyadic-worker \
 *     && npx esbuild test/worker/pool-speed.ts --bundle --platform=node --outfile=/tmp/pool-speed.js \
 *     && node /tmp/pool-speed.js /tmp/polyadic-worker/engine-worker.bundle.js [rows] [columns] [maxOrder] [workers…]
 *
 * Prints the wall time of one analysis per worker count, the longest gap between progress
 * reports, and the best speed-up the split by first column allows (total multiplets over the
 * largest unit), which bounds any pool whatever its size.
 */

import { readFileSync } from 'fs';
import { cpus, loadavg } from 'os';
import { Worker } from 'worker_threads';

import { createIndexing } from '../../src/engine/multiplets';
import { EnginePool } from '../../src/worker/pool';
import type { EngineRequest, EngineResponse, IEngineWorker } from '../../src/worker/protocol';
import { planUnits } from '../../src/worker/units';
import { makeColumns } from './data';

const SELF_SHIM = `
const { parentPort } = require('worker_threads');
globalThis.self = globalThis;
globalThis.postMessage = (message, transfer) => parentPort.postMessage(message, transfer);
parentPort.on('message', data => globalThis.onmessage && globalThis.onmessage({ data }));
`;

const [bundle, rowsText, columnsText, orderText, ...workerCounts] = process.argv.slice(2);
const source = readFileSync(bundle, 'utf8');
const rows = Number(rowsText ?? 10000);
const count = Number(columnsText ?? 16);
const maxOrder = Number(orderText ?? count);
const sizes = workerCounts.length ? workerCounts.map(Number) : [1, 2];

function threadWorker(): IEngineWorker {
  const thread = new Worker(SELF_SHIM + source, { eval: true });
  return {
    post: (request: EngineRequest, transfer: ArrayBuffer[]) => thread.postMessage(request, transfer),
    listen: (onResponse: (response: EngineResponse) => void, onFailure: (reason: string) => void) => {
      thread.on('message', onResponse);
      thread.on('error', error => onFailure(error.message));
    },
    terminate: () => void thread.terminate()
  };
}

async function main(): Promise<void> {
  const columns = makeColumns(rows, count);
  console.log(`${rows} rows × ${count} columns up to order ${maxOrder}; ${cpus().length} cores, load ${loadavg()[0].toFixed(2)}`);
  for (const workers of sizes) {
    const units = planUnits(createIndexing(count, Math.min(maxOrder, count)), workers);
    const total = units.reduce((sum, unit) => sum + unit.multiplets, 0);
    const pool = new EnginePool({ createWorker: threadWorker, workers });
    let last = NaN;
    let gap = 0;
    const started = performance.now();
    const run = await pool.analyze(columns, { maxOrder }, {
      onProgress: () => {
        const now = performance.now();
        gap = Math.max(gap, Number.isNaN(last) ? 0 : now - last);
        last = now;
      }
    });
    const wall = performance.now() - started;
    pool.dispose();
    console.log(
      `${workers} worker(s): ${wall.toFixed(0)} ms wall, ${run.result.multiplet_count} multiplets, ` +
        `${units.length} units, split bound ×${(total / units[0].multiplets).toFixed(2)}, longest report gap ${gap.toFixed(0)} ms`
    );
  }
}

void main();
