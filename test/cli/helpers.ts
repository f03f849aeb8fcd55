/**
 * Helpers of the CLI specs: build the bundle into a temporary folder (so parallel spec files
 * never write the same file), run it with node, and write fixture files.
 */
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

/** The repository root. */
export const ROOT = path.resolve(__dirname, '..', '..');

/** What one run of the CLI gave. */
export interface IRun {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Build the CLI bundle with scripts/build-cli.mjs into a fresh temporary folder. */
export function buildCli(): string {
  const folder = fs.mkdtempSync(path.join(os.tmpdir(), 'polyadic-cli-'));
  const outfile = path.join(folder, 'polyadic.cjs');
  const build = spawnSync(process.execPath, [path.join(ROOT, 'scripts', 'build-cli.mjs'), '--outfile', outfile], {
    cwd: ROOT,
    encoding: 'utf8'
  });
  if (build.status !== 0) {
    throw new Error(`building the CLI failed:\n${build.stdout}\n${build.stderr}`);
  }
  return outfile;
}

/** Run a built CLI with arguments. */
export function runCli(bundle: string, args: string[], cwd = ROOT): IRun {
  const done = spawnSync(process.execPath, [bundle, ...args], { cwd, encoding: 'utf8' });
  return { code: done.status, stdout: done.stdout, stderr: done.stderr };
}

/** A fresh temporary folder with files written into it. */
export function fixtureFolder(files: Record<string, string | Uint8Array> = {}): string {
  const folder = fs.mkdtempSync(path.join(os.tmpdir(), 'polyadic-data-'));
  for (const [name, content] of Object.entries(files)) {
    fs.writeFileSync(path.join(folder, name), content);
  }
  return folder;
}

/** CSV text from a header and rows of cells (no cell may need quoting). */
export function csv(header: string[], rows: (string | number)[][]): string {
  return [header.join(','), ...rows.map(row => row.join(','))].join('\n') + '\n';
}

/**
 * Expect a usage/input failure: exit code 2, nothing on stdout, exactly one stderr line that
 * starts with `polyadic:` and carries no stack trace.
 */
export function expectOneLineFailure(run: IRun): string {
  expect(run.code).toBe(2);
  expect(run.stdout).toBe('');
  const lines = run.stderr.trimEnd().split('\n');
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(/^polyadic: /);
  expect(run.stderr).not.toMatch(/\n\s+at /);
  return lines[0];
}
