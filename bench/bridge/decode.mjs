/**
 * Fetch decoding benchmark: time turning the kernel's Arrow IPC pieces of a float64 table
 * (default 1,000,000 rows × 20 columns) into engine column views in Node, next to the time
 * pyarrow alone takes to write that stream and the kernel's whole fetch path in Python, in the
 * same run (bench/bridge/write_stream.py). Timings are medians, printed, never asserted.
 *
 * Usage: node bench/bridge/decode.mjs [--rows N] [--columns N] [--repeats N]
 * Python: POLYADIC_PYTHON, else .venv/bin/python.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { cpus, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';

import { build } from 'esbuild';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const { values: flags } = parseArgs({
  options: {
    rows: { type: 'string', default: '1000000' },
    columns: { type: 'string', default: '20' },
    repeats: { type: 'string', default: '5' }
  },
  strict: true
});
const rows = Number(flags.rows);
const columns = Number(flags.columns);
const repeats = Number(flags.repeats);

const python = process.env.POLYADIC_PYTHON ?? join(root, '.venv', 'bin', 'python');
if (!existsSync(python)) {
  console.error(`bench/bridge: no Python at ${python}; create .venv or set POLYADIC_PYTHON.`);
  process.exit(2);
}

const folder = mkdtempSync(join(tmpdir(), 'polyadic-bench-bridge-'));
try {
  // Python side: the stream and its timings.
  execFileSync(
    python,
    [join(root, 'bench', 'bridge', 'write_stream.py'), folder, String(rows), String(columns), String(repeats)],
    { cwd: root, encoding: 'utf8', maxBuffer: 1 << 20 }
  );
  const timings = JSON.parse(readFileSync(join(folder, 'timings.json'), 'utf8'));

  // Node side: the decoder as the panel bundles it.
  const bundle = join(folder, 'decode.mjs');
  await build({
    entryPoints: [join(root, 'src', 'bridge', 'decode.ts')],
    outfile: bundle,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node18',
    logLevel: 'warning'
  });
  const { FetchAssembler, decodePieces } = await import(pathToFileURL(bundle).href);

  /** Pieces as JupyterLab hands comm buffers over: a DataView of an ArrayBuffer of its own. */
  const pieces = prefix =>
    readdirSync(folder)
      .filter(name => name.startsWith(`${prefix}.piece-`))
      .sort((a, b) => Number(a.split('-')[1].split('.')[0]) - Number(b.split('-')[1].split('.')[0]))
      .map(name => {
        const bytes = readFileSync(join(folder, name));
        const buffer = new ArrayBuffer(bytes.byteLength);
        new Uint8Array(buffer).set(bytes);
        return new DataView(buffer);
      });

  /** Median milliseconds of decoding `views` into column views, and whether they are views. */
  function decodeTimes(views) {
    const bytes = views.reduce((sum, view) => sum + view.byteLength, 0);
    const done = { ...timings.fetch_done, batch_count: views.length, bytes_total: bytes };
    const full = [];
    const ipcOnly = [];
    let zeroCopy = false;
    for (let r = 0; r <= repeats; r++) {
      let start = performance.now();
      decodePieces(views.map(v => new Uint8Array(v.buffer, v.byteOffset, v.byteLength)));
      const ipc = performance.now() - start;
      start = performance.now();
      const assembler = new FetchAssembler('bench');
      let sent = 0;
      views.forEach((view, index) => {
        sent += view.byteLength;
        assembler.add(
          { type: 'fetch_chunk', request_id: 'bench', name: 'bench', batch_index: index, batch_count: views.length, bytes_sent: sent, bytes_total: done.bytes_total },
          view
        );
      });
      const frame = assembler.finish(done);
      const elapsed = performance.now() - start;
      if (frame.rows !== rows || frame.columns.length !== columns) {
        throw new Error(`decoded ${frame.rows} × ${frame.columns.length}, expected ${rows} × ${columns}`);
      }
      zeroCopy = views.some(view => frame.columns[0].values.buffer === view.buffer);
      if (r > 0) {
        // the first run warms the JIT up and is not counted
        full.push(elapsed);
        ipcOnly.push(ipc);
      }
    }
    return { full: median(full), ipc: median(ipcOnly), zeroCopy };
  }

  const sent = decodeTimes(pieces('kernel'));
  const single = decodeTimes(pieces('single'));
  const ms = seconds => `${(seconds * 1000).toFixed(1)} ms`;
  const line = (label, value) => console.log(`  ${label.padEnd(62)} ${value}`);
  console.log(
    `fetch decoding: ${rows.toLocaleString('en')} rows × ${columns} float64 columns, ` +
      `${(timings.bytes / 1e6).toFixed(1)} MB stream; median of ${repeats}; ` +
      `Node ${process.versions.node}, pyarrow ${timings.pyarrow_version}, ${cpus()[0]?.model ?? 'unknown CPU'}`
  );
  line('Python: pyarrow alone writes the IPC stream', ms(timings.pyarrow_write_seconds));
  line(`Python: kernel fetch path, pandas → ${timings.kernel_pieces} pieces`, ms(timings.kernel_pieces_seconds));
  line(`Node: ${timings.kernel_pieces} pieces as the kernel sends them → column views, total`, `${sent.full.toFixed(1)} ms (${sent.zeroCopy ? 'views' : 'one copy per column'})`);
  line('Node:   of which tableFromIPC alone', `${sent.ipc.toFixed(1)} ms`);
  line('Node: 1 piece of 1 record batch → column views, total', `${single.full.toFixed(1)} ms (${single.zeroCopy ? 'views, no copy' : 'copied'})`);
  line('Node:   of which tableFromIPC alone', `${single.ipc.toFixed(1)} ms`);
} finally {
  rmSync(folder, { recursive: true, force: true });
}

function median(values) {
  const sorted = [...values].sort((x, y) => x - y);
  const mid = sorted.length >> 1;
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}
