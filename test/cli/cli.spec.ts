/**
 * `polyadic analyze` end to end: each case spawns the built bundle (scripts/build-cli.mjs) on
 * a fixture file and checks the exit code, the output and the one-line error message.
 */
import * as fs from 'fs';
import * as path from 'path';

import * as arrow from 'apache-arrow';
import Papa from 'papaparse';

import type { IAnalysisResult, IMultipletRow } from '../../src/engine/types';
import { ResultsModel } from '../../src/panel/results/model';
import { buildCli, csv, expectOneLineFailure, fixtureFolder, IRun, ROOT, runCli } from './helpers';

let bundle: string;

beforeAll(() => {
  bundle = buildCli();
}, 120000);

function analyze(file: string, ...args: string[]): IRun {
  return runCli(bundle, ['analyze', file, ...args]);
}

function parseResult(run: IRun): IAnalysisResult {
  expect(run.stderr).not.toMatch(/internal error/);
  expect(run.code).toBe(0);
  return JSON.parse(run.stdout) as IAnalysisResult;
}

function multiplet(result: IAnalysisResult, ...columns: string[]): IMultipletRow {
  const key = [...columns].sort().join('\u0000');
  const row = result.multiplets.find(m => [...m.columns].sort().join('\u0000') === key);
  if (!row) {
    throw new Error(`no multiplet ${columns.join(', ')} in the result`);
  }
  return row;
}

/**
 * Cover & Thomas, Elements of Information Theory (2nd ed., 2006), Example 2.2.1: the joint
 * distribution p(x, y) in units of 1/32, rows y = 1..4, columns x = 1..4. The book gives
 * H(X) = 7/4, H(Y) = 2, H(X|Y) = 11/8, H(X,Y) = 27/8 bits; I(X;Y) = H(X) − H(X|Y) = 3/8.
 */
const COVER_THOMAS_2_2_1 = [
  [4, 2, 1, 1],
  [2, 4, 1, 1],
  [2, 2, 2, 2],
  [8, 0, 0, 0]
];

function coverThomasCsv(): string {
  const rows: string[][] = [];
  COVER_THOMAS_2_2_1.forEach((counts, y) =>
    counts.forEach((count, x) => {
      for (let i = 0; i < count; i++) {
        rows.push([`x${x + 1}`, `y${y + 1}`]);
      }
    })
  );
  return csv(['X', 'Y'], rows);
}

/** XOR: C = A xor B over the four (A, B) pairs, each repeated. */
function xorCsv(repeat = 25): string {
  const rows: number[][] = [];
  for (let i = 0; i < repeat; i++) {
    for (const [a, b] of [
      [0, 0],
      [0, 1],
      [1, 0],
      [1, 1]
    ]) {
      rows.push([a, b, a ^ b]);
    }
  }
  return csv(['A', 'B', 'C'], rows);
}

/** A seeded table of a few numeric and text columns (linear congruential, Knuth's MMIX constants). */
function mixedCsv(rows = 80): string {
  let state = 12345n;
  const next = (): number => {
    state = (state * 6364136223846793005n + 1442695040888963407n) & ((1n << 64n) - 1n);
    return Number(state >> 11n) / 2 ** 53;
  };
  const out: string[][] = [];
  for (let i = 0; i < rows; i++) {
    const a = next();
    const b = next();
    out.push([a.toFixed(4), (a + 0.3 * b).toFixed(4), next() < 0.5 ? 'wet' : 'dry', (next() * 10).toFixed(2), b.toFixed(4)]);
  }
  return csv(['air', 'leaf', 'soil', 'light', 'fan'], out);
}

describe('polyadic analyze', () => {
  describe('#worked examples', () => {
    it('should give Cover & Thomas Example 2.2.1 in bits', () => {
      const folder = fixtureFolder({ 'ct.csv': coverThomasCsv() });
      const result = parseResult(analyze(path.join(folder, 'ct.csv')));
      expect(result.rows).toBe(32);
      expect(result.units).toBe('bits');
      expect(multiplet(result, 'X').entropy).toBeCloseTo(1.75, 12);
      expect(multiplet(result, 'Y').entropy).toBeCloseTo(2, 12);
      expect(multiplet(result, 'X', 'Y').entropy).toBeCloseTo(3.375, 12);
      expect(multiplet(result, 'X', 'Y').co_information).toBeCloseTo(0.375, 12);
    });

    it('should give Cover & Thomas Example 2.2.1 in nats', () => {
      const folder = fixtureFolder({ 'ct.csv': coverThomasCsv() });
      const result = parseResult(analyze(path.join(folder, 'ct.csv'), '--units', 'nats'));
      expect(result.units).toBe('nats');
      // 1 bit = ln 2 nats (Cover & Thomas 2006, §2.1)
      expect(multiplet(result, 'X', 'Y').co_information).toBeCloseTo(0.375 * Math.LN2, 12);
    });

    it('should give the XOR triplet a co-information of −1 bit', () => {
      // Worked by hand: H(A) = H(B) = H(C) = 1, every pair 2, the triplet 2 bits, so
      // I(A;B;C) = 3 − 6 + 2 = −1; TC = 3 − 2 = 1 (Watanabe 1960); DTC = 3·2 − 2·2 = 2 (Han 1978);
      // O-information = TC − DTC = −1, synergy-dominated (Rosas et al. 2019).
      const folder = fixtureFolder({ 'xor.csv': xorCsv() });
      const result = parseResult(analyze(path.join(folder, 'xor.csv'), '--bins', 'categorical'));
      const triplet = multiplet(result, 'A', 'B', 'C');
      expect(triplet.order).toBe(3);
      expect(triplet.co_information).toBeCloseTo(-1, 12);
      expect(triplet.total_correlation).toBeCloseTo(1, 12);
      expect(triplet.dual_total_correlation).toBeCloseTo(2, 12);
      expect(triplet.o_information).toBeCloseTo(-1, 12);
      expect(triplet.s_information).toBeCloseTo(3, 12);
      expect(multiplet(result, 'A', 'B').co_information).toBeCloseTo(0, 12);
      expect(multiplet(result, 'A', 'C').co_information).toBeCloseTo(0, 12);
    });
  });

  describe('#default binning', () => {
    it('should keep 0/1 columns as categories without --bins and find an unbalanced XOR', () => {
      // A = 1 in a quarter of the rows, B a fair bit independent of A, C = A xor B. quantile:4
      // would give A one bin (its quartiles are 0, 0, 0, 1, 1). Worked by hand: A, B and C are
      // pairwise independent, and given C, A determines B, so I(A;B;C) = I(A;B) − I(A;B|C) =
      // 0 − H(A) = −h(1/4) = −(1/4·log2 4 + 3/4·log2 4/3) bits (h the binary entropy).
      const rows: number[][] = [];
      for (const [a, b, repeat] of [
        [0, 0, 30],
        [0, 1, 30],
        [1, 0, 10],
        [1, 1, 10]
      ]) {
        for (let i = 0; i < repeat; i++) {
          rows.push([a, b, a ^ b]);
        }
      }
      const folder = fixtureFolder({ 'bits.csv': csv(['A', 'B', 'C'], rows) });
      const run = analyze(path.join(folder, 'bits.csv'));
      expect(run.stderr).toBe('');
      const result = parseResult(run);
      expect(result.columns.map(column => [column.binning.spec, column.binning.method, column.bins])).toEqual([
        ['auto', 'categorical', 2],
        ['auto', 'categorical', 2],
        ['auto', 'categorical', 2]
      ]);
      expect(multiplet(result, 'A', 'B', 'C').co_information).toBeCloseTo(-(0.25 * 2 + 0.75 * Math.log2(4 / 3)), 12);
    });
  });

  describe('#output', () => {
    it('should write JSON with the fields of the analysis result', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const result = parseResult(analyze(path.join(folder, 'm.csv')));
      expect(Object.keys(result).sort()).toEqual(
        ['columns', 'engine', 'estimator', 'inadequate_count', 'max_order', 'multiplet_count', 'multiplets', 'rows', 'rows_used', 'units', 'warnings'].sort()
      );
      expect(Object.keys(result.multiplets[0]).sort()).toEqual(
        ['adequacy', 'co_information', 'columns', 'dual_total_correlation', 'entropy', 'o_information', 'order', 's_information', 'total_correlation'].sort()
      );
      // five columns and every order: 2^5 − 1 multiplets
      expect(result.multiplets).toHaveLength(31);
      expect(result.columns.map(c => c.name)).toEqual(['air', 'leaf', 'soil', 'light', 'fan']);
      expect(result.columns.find(c => c.name === 'soil')!.binning.method).toBe('categorical');
    });

    it('should write CSV with one row per multiplet and the same numbers', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const json = parseResult(analyze(path.join(folder, 'm.csv')));
      const run = analyze(path.join(folder, 'm.csv'), '--format', 'csv');
      expect(run.code).toBe(0);
      const parsed = Papa.parse<Record<string, string>>(run.stdout.trim(), { header: true });
      expect(parsed.errors).toEqual([]);
      expect(parsed.meta.fields).toEqual([
        'columns',
        'order',
        'entropy',
        'co_information',
        'total_correlation',
        'dual_total_correlation',
        'o_information',
        's_information',
        'adequacy'
      ]);
      expect(parsed.data).toHaveLength(json.multiplets.length);
      parsed.data.forEach((row, i) => {
        const expected = json.multiplets[i];
        expect(row.columns.split('|')).toEqual(expected.columns);
        expect(Number(row.order)).toBe(expected.order);
        expect(Number(row.entropy)).toBe(expected.entropy);
        expect(Number(row.co_information)).toBe(expected.co_information);
        expect(Number(row.o_information)).toBe(expected.o_information);
        expect(Number(row.adequacy)).toBe(expected.adequacy);
      });
    });

    it('should quote names and defuse formula-like names in CSV', () => {
      const text = csv(['"a,b"', '=cmd', 'plain'], [[1, 2, 'x'], [2, 1, 'y'], [3, 3, 'x'], [4, 4, 'y']]);
      const folder = fixtureFolder({ 'q.csv': text });
      const run = analyze(path.join(folder, 'q.csv'), '--format', 'csv', '--bins', 'categorical');
      expect(run.code).toBe(0);
      const rows = Papa.parse<string[]>(run.stdout.trim()).data.slice(1);
      const names = rows.map(row => row[0]);
      expect(names).toContain('a,b');
      expect(names).toContain("'=cmd");
      expect(names).toContain('a,b|=cmd');
      expect(names).toContain("'=cmd|plain");
      expect(names.some(n => n.startsWith('='))).toBe(false);
    });

    it('should apply --bins to numeric columns and keep text columns categorical', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const result = parseResult(analyze(path.join(folder, 'm.csv'), '--bins', 'width:3'));
      const methods = Object.fromEntries(result.columns.map(c => [c.name, c.binning.method]));
      expect(methods).toEqual({ air: 'width', leaf: 'width', soil: 'categorical', light: 'width', fan: 'width' });
    });

    it('should write --out files, CSV when the name ends in .csv', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const out = path.join(folder, 'result.csv');
      const run = analyze(path.join(folder, 'm.csv'), '--out', out);
      expect(run.code).toBe(0);
      expect(run.stdout).toBe('');
      expect(fs.readFileSync(out, 'utf8').split('\n')[0]).toMatch(/^columns,order,entropy/);
      const outJson = path.join(folder, 'result.json');
      expect(analyze(path.join(folder, 'm.csv'), '--out', outJson).code).toBe(0);
      expect(JSON.parse(fs.readFileSync(outJson, 'utf8')).rows).toBe(80);
    });

    it('should keep the N most negative and N most positive multiplets with --top', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const all = parseResult(analyze(path.join(folder, 'm.csv')));
      const top = parseResult(analyze(path.join(folder, 'm.csv'), '--top', '3'));
      const higher = (rows: IMultipletRow[]) => rows.filter(row => row.order >= 2);
      const sorted = higher(all.multiplets).sort((a, b) => a.co_information - b.co_information);
      const expected = [...sorted.slice(0, 3), ...sorted.slice(-3)].map(row => row.columns.join('|')).sort();
      expect(higher(top.multiplets).map(row => row.columns.join('|')).sort()).toEqual(expected);
    });

    it('should stop quietly when the reader of its output closes early', () => {
      const header = Array.from({ length: 12 }, (_, j) => `s${j}`);
      const rows = Array.from({ length: 200 }, (_, i) => header.map((_, j) => (i * (j + 3)) % 5));
      const folder = fixtureFolder({ 'wide.csv': csv(header, rows) });
      // 4095 multiplets of CSV are far more than a pipe holds, so `head` closes it mid-write
      const script = `"${process.execPath}" "${bundle}" analyze wide.csv --format csv 2>err.txt | head -n 2; echo "status=\${PIPESTATUS[0]}"`;
      const done = require('child_process').spawnSync('bash', ['-c', script], { cwd: folder, encoding: 'utf8' });
      expect(done.stdout).toMatch(/^columns,order,entropy/);
      expect(done.stdout).toMatch(/status=0\n$/);
      expect(fs.readFileSync(path.join(folder, 'err.txt'), 'utf8')).not.toMatch(/EPIPE|\n\s+at /);
    });

    it('should read an Arrow IPC file like the same CSV', () => {
      const table = arrow.tableFromArrays({
        A: new Int32Array([0, 0, 1, 1, 0, 0, 1, 1]),
        B: new Int32Array([0, 1, 0, 1, 0, 1, 0, 1]),
        C: new Int32Array([0, 1, 1, 0, 0, 1, 1, 0])
      });
      const folder = fixtureFolder({
        'xor.arrow': arrow.tableToIPC(table, 'file'),
        'xor.arrows': arrow.tableToIPC(table, 'stream'),
        'xor.csv': xorCsv(2)
      });
      const fromCsv = parseResult(analyze(path.join(folder, 'xor.csv'), '--bins', 'categorical'));
      for (const name of ['xor.arrow', 'xor.arrows']) {
        const fromArrow = parseResult(analyze(path.join(folder, name), '--bins', 'categorical'));
        expect(fromArrow.multiplets).toEqual(fromCsv.multiplets);
      }
    });
  });

  describe('#data the engine warns about', () => {
    /** Run a table with a constant column and return the warnings about it. */
    function constantColumnWarnings(flat: string | number, ...args: string[]): string[] {
      const rows = Array.from({ length: 64 }, (_, i) => [i % 4, (i * 7) % 5, flat]);
      const folder = fixtureFolder({ 'c.csv': csv(['p', 'q', 'flat'], rows) });
      const run = analyze(path.join(folder, 'c.csv'), ...args);
      const result = parseResult(run);
      expect(multiplet(result, 'flat').entropy).toBe(0);
      expect(multiplet(result, 'flat', 'p').co_information).toBe(0);
      const warningLines = run.stderr.trimEnd().split('\n').filter(line => line.startsWith('polyadic: warning:'));
      expect(warningLines).toHaveLength(result.warnings.length);
      return result.warnings.filter(w => w.includes('flat'));
    }

    it('should analyse a constant text column with entropy 0 and one warning naming it', () => {
      expect(constantColumnWarnings('same')).toHaveLength(1);
    });

    it('should analyse a constant numeric column under width:3 with one warning naming it', () => {
      expect(constantColumnWarnings(5, '--bins', 'width:3')).toHaveLength(1);
    });

    it('should analyse a constant numeric column under quantile:4 with one warning naming it', () => {
      expect(constantColumnWarnings(5)).toHaveLength(1);
    });

    it('should analyse an identifier-like column and warn naming it', () => {
      const rows = Array.from({ length: 50 }, (_, i) => [`plant-${1000 + i}`, i % 3, (i * 3) % 4]);
      const folder = fixtureFolder({ 'id.csv': csv(['plant_id', 'bed', 'tray'], rows) });
      const run = analyze(path.join(folder, 'id.csv'));
      const result = parseResult(run);
      expect(result.warnings.some(w => w.includes('plant_id'))).toBe(true);
      expect(run.stderr).toMatch(/polyadic: warning: .*plant_id/);
    });

    it('should count NaN as missing by default', () => {
      const rows = Array.from({ length: 40 }, (_, i) => [i === 7 ? 'nan' : String(i % 5), i % 2]);
      const folder = fixtureFolder({ 'n.csv': csv(['temp', 'fan'], rows) });
      const result = parseResult(analyze(path.join(folder, 'n.csv')));
      expect(result.rows).toBe(40);
      expect(result.rows_used).toBe(39);
    });
  });

  describe('#chains', () => {
    it('should add the chain of an ordering: the prefixes’ co-information from the run’s multiplets, and the steps', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const file = path.join(folder, 'm.csv');
      const result = parseResult(analyze(file, '--chain', 'soil,air,fan,leaf', '--chain', 'light,leaf'));
      expect(result.chains!.map(chain => chain.columns)).toEqual([
        ['soil', 'air', 'fan', 'leaf'],
        ['light', 'leaf']
      ]);
      const [chain] = result.chains!;
      expect(chain.kind).toBe('ordering');
      expect(chain.values).toHaveLength(3);
      chain.values.forEach((value, i) => {
        expect(value).toBeCloseTo(multiplet(result, ...chain.columns.slice(0, i + 2)).co_information, 12);
      });
      expect(chain.steps).toEqual(chain.values.slice(1).map((value, i) => expect.closeTo(value - chain.values[i], 12)));
      // the same chain as the results view draws from the same result
      const model = new ResultsModel();
      model.setResult({ ...result, chains: undefined });
      const store = model.store!;
      const index = Array.from({ length: store.size }, (_v, i) => i).find(i => [...store.namesOf(i)].sort().join() === 'air,fan,leaf,soil');
      model.selectMultiplet(index!, ['soil', 'air', 'fan', 'leaf']);
      expect(model.chain!.values).toEqual(chain.values.map(v => expect.closeTo(v, 12)));
      expect(model.chain!.steps).toEqual(chain.steps.map(v => expect.closeTo(v, 12)));
      model.dispose();
    });

    it('should grow the greedy chains from the XOR triplet and give the same bits on one and two threads', () => {
      const folder = fixtureFolder({ 'x.csv': xorCsv() });
      const file = path.join(folder, 'x.csv');
      const args = ['--bins', 'categorical', '--chain', 'greedy-synergy', '--chain', 'greedy-redundancy', '--chain', 'C,A,B'];
      const one = parseResult(analyze(file, ...args, '--threads', '1'));
      const two = parseResult(analyze(file, ...args, '--threads', '2'));
      expect(two.chains).toEqual(one.chains);
      const [synergy, redundancy, ordering] = one.chains!;
      expect(synergy.kind).toBe('greedy-synergy');
      expect([...synergy.columns].sort()).toEqual(['A', 'B', 'C']);
      // XOR: every pair independent (0 bits), the triplet −1 bit (a fact of the XOR design)
      expect(synergy.values).toEqual([expect.closeTo(0, 12), expect.closeTo(-1, 12)]);
      expect(redundancy.kind).toBe('greedy-redundancy');
      expect(ordering.steps).toEqual([expect.closeTo(-1, 12)]);
    });

    it('should refuse --chain with CSV output, an unknown column and a chain past the maximum order in one line', () => {
      const folder = fixtureFolder({ 'x.csv': xorCsv() });
      const file = path.join(folder, 'x.csv');
      expect(expectOneLineFailure(analyze(file, '--chain', 'A,B', '--format', 'csv'))).toMatch(/--chain adds a 'chains' array to the JSON output/);
      expect(expectOneLineFailure(analyze(file, '--chain', 'A,Z'))).toMatch(/names column 'Z', which is not among the analysed columns \(A, B, C\)/);
      expect(expectOneLineFailure(analyze(file, '--chain', 'A,B,C', '--max-order', '2'))).toMatch(/more than the maximum order 2/);
      expect(expectOneLineFailure(analyze(file, '--chain', 'A,,B'))).toMatch(/--chain 'A,,B' has an empty column name/);
    });
  });

  describe('#statistics', () => {
    /** A noisy XOR triplet and two noise columns, 0/1 values as text categories. */
    function xorCsv(rows = 400): string {
      let state = 17;
      const bit = (): number => {
        state = (state * 1103515245 + 12345) % 2147483648;
        return state < 1073741824 ? 0 : 1;
      };
      const data: string[][] = [];
      for (let i = 0; i < rows; i++) {
        const a = bit();
        const b = bit();
        const flip = bit() & bit() & bit();
        data.push([`a${a}`, `b${b}`, `c${a ^ b ^ flip}`, `n${bit()}`, `m${bit()}`]);
      }
      return csv(['a', 'b', 'c', 'n', 'm'], data);
    }

    it('should write byte-identical JSON and CSV, streamed from the lattice, with --threads 1 and 2', () => {
      const folder = fixtureFolder({ 'x.csv': xorCsv() });
      for (const format of ['json', 'csv']) {
        const outputs = ['1', '2'].map(threads => analyze(path.join(folder, 'x.csv'), '--format', format, '--threads', threads));
        outputs.forEach(run => expect(run.code).toBe(0));
        expect(outputs[1].stdout).toBe(outputs[0].stdout);
        // every multiplet of the 5 columns is there
        const rows = format === 'json' ? (JSON.parse(outputs[0].stdout) as IAnalysisResult).multiplets.length : outputs[0].stdout.trim().split('\n').length - 1;
        expect(rows).toBe(31);
      }
    });

    it('should give byte-identical JSON with --threads 1, 2 and 3 on the same seed', () => {
      const folder = fixtureFolder({ 'x.csv': xorCsv() });
      const args = ['--surrogates', '60', '--bootstrap', '20', '--seed', '11', '--beyond-pairs', '2', '--fit-draws', '30'];
      const outputs = ['1', '2', '3'].map(threads => analyze(path.join(folder, 'x.csv'), ...args, '--threads', threads));
      outputs.forEach(run => expect(run.code).toBe(0));
      expect(outputs[1].stdout).toBe(outputs[0].stdout);
      expect(outputs[2].stdout).toBe(outputs[0].stdout);
      const result = JSON.parse(outputs[0].stdout) as IAnalysisResult;
      const triplet = multiplet(result, 'a', 'b', 'c');
      expect(triplet.p_value).toBe(2 / 61);
      expect(triplet.q_value).toEqual(expect.any(Number));
      expect(triplet.connected_information).toBeGreaterThan(0.3);
      expect(result.statistics!.families.co_information).toEqual({ orders: [2, 3, 4, 5], count: 26 });
      // Another seed draws other surrogates.
      const other = analyze(path.join(folder, 'x.csv'), '--surrogates', '60', '--seed', '12');
      expect(JSON.parse(other.stdout).multiplets[7].null_mean).not.toBe(result.multiplets[7].null_mean);
    });

    it('should write the statistics columns in CSV, empty where not computed', () => {
      const folder = fixtureFolder({ 'x.csv': xorCsv() });
      const run = analyze(path.join(folder, 'x.csv'), '--surrogates', '20', '--format', 'csv', '--max-order', '3');
      expect(run.code).toBe(0);
      const parsed = Papa.parse<Record<string, string>>(run.stdout.trim(), { header: true });
      expect(parsed.meta.fields).toEqual(expect.arrayContaining(['adequacy', 'p_value', 'q_value', 'null_mean', 'null_sd']));
      expect(parsed.meta.fields).not.toContain('ci_low');
      const single = parsed.data.find(row => row.order === '1')!;
      expect(single.p_value).toBe('');
      const pair = parsed.data.find(row => row.order === '2')!;
      expect(Number(pair.p_value)).toBeGreaterThan(0);
    });

    it.each([
      [['--surrogates', '1.5'], /--surrogates must be a whole number ≥ 0; got '1\.5'/],
      [['--surrogates', '100001'], /surrogates is at most 100,000/],
      [['--bootstrap', 'ten'], /--bootstrap must be a whole number/],
      [['--surrogates', '5', '--seed=-3'], /--seed must be a whole number ≥ 0; got '-3'/],
      [['--surrogates', '5', '--seed', '2.5'], /--seed must be a whole number ≥ 0; got '2\.5'/],
      [['--surrogates', '5', '--seed', '4294967296'], /seed must be a whole number from 0 to 4,294,967,295/],
      [['--surrogates', '5', '--tail', 'left'], /--tail must be one of two, synergy, redundancy; got 'left'/],
      [['--surrogates', '5', '--alpha', '1.5'], /--alpha must be a number between 0 and 1/],
      [['--threads', '0'], /--threads must be a whole number of at least 1/],
      [['--surrogates', '5', '--sharpen', '1.5'], /--sharpen must be a whole number ≥ 0; got '1\.5'/],
      [['--sharpen', '100'], /Sharpening refines surrogate p-values at their floor; ask for surrogates as well/],
      [['--surrogates', '5', '--beyond-pairs', 'x'], /--beyond-pairs must be a whole number/],
      [['--surrogates', '5', '--fit-draws', '-1'], /--fit-draws/]
    ])('should refuse %j with one line naming the flag', (args, message) => {
      const folder = fixtureFolder({ 'x.csv': xorCsv(50) });
      expect(expectOneLineFailure(analyze(path.join(folder, 'x.csv'), ...args))).toMatch(message);
    });
  });

  describe('#bad input', () => {
    it('should refuse an empty file', () => {
      const folder = fixtureFolder({ 'e.csv': '' });
      expect(expectOneLineFailure(analyze(path.join(folder, 'e.csv')))).toMatch(/e\.csv is empty/);
    });

    it('should refuse a header without rows', () => {
      const folder = fixtureFolder({ 'h.csv': 'a,b,c\n' });
      expect(expectOneLineFailure(analyze(path.join(folder, 'h.csv')))).toMatch(/header row but no data rows/);
    });

    it('should name the line of a ragged row', () => {
      const folder = fixtureFolder({ 'r.csv': 'a,b\n1,2\n\n"3\n4",5\n6\n7,8\n' });
      const line = expectOneLineFailure(analyze(path.join(folder, 'r.csv')));
      // line 6 holds "6": line 3 is blank and the quoted field spans lines 4 and 5
      expect(line).toMatch(/line 6: 1 fields where the header has 2/);
    });

    it('should refuse duplicate column names', () => {
      const folder = fixtureFolder({ 'd.csv': csv(['a', 'b', 'a'], [[1, 2, 3]]) });
      expect(expectOneLineFailure(analyze(path.join(folder, 'd.csv')))).toMatch(/'a' appears twice \(columns 1 and 3\)/);
    });

    it('should list the available columns for an unknown --columns name', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const line = expectOneLineFailure(analyze(path.join(folder, 'm.csv'), '--columns', 'air,lef'));
      expect(line).toMatch(/Unknown column 'lef'; available columns: 'air', 'leaf', 'soil', 'light', 'fan'/);
    });

    it.each([
      ['--bins', 'quantile:0'],
      ['--bins', 'quartile:4'],
      ['--bins', 'edges:1'],
      ['--bins', 'fd:3'],
      ['--bin', 'air=width:'],
      ['--bin', 'air']
    ])('should show the valid forms for %s %s', (option, value) => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const line = expectOneLineFailure(analyze(path.join(folder, 'm.csv'), option, value));
      expect(line).toContain(option);
      expect(line).toMatch(/width:K, quantile:K.*categorical/);
    });

    it('should list the columns for an unknown --bin column', () => {
      const folder = fixtureFolder({ 'm.csv': mixedCsv() });
      const line = expectOneLineFailure(analyze(path.join(folder, 'm.csv'), '--bin', 'nope=width:3'));
      expect(line).toMatch(/'nope'.*'air', 'leaf'/);
    });

    it('should name the column and first row of an infinity under a numeric rule', () => {
      const rows = Array.from({ length: 20 }, (_, i) => [i === 5 || i === 9 ? 'inf' : String(i), i % 2]);
      const folder = fixtureFolder({ 'i.csv': csv(['temp', 'fan'], rows) });
      const line = expectOneLineFailure(analyze(path.join(folder, 'i.csv'), '--bins', 'width:4'));
      expect(line).toMatch(/'?temp'?/);
      // data row 5 (zero-based) is line 7 of the file
      expect(line).toMatch(/line 7\b/);
    });

    it('should name the column and row of a NaN under --missing error', () => {
      const rows = Array.from({ length: 20 }, (_, i) => [i === 11 ? 'NaN' : String(i % 4), i % 2]);
      const folder = fixtureFolder({ 'n.csv': csv(['temp', 'fan'], rows) });
      const line = expectOneLineFailure(analyze(path.join(folder, 'n.csv'), '--missing', 'error'));
      expect(line).toMatch(/temp/);
      expect(line).toMatch(/line 13\b/);
    });

    it('should refuse a column with every value missing', () => {
      const rows = Array.from({ length: 10 }, (_, i) => [String(i), '']);
      const folder = fixtureFolder({ 'm.csv': csv(['temp', 'dead_sensor'], rows) });
      expect(expectOneLineFailure(analyze(path.join(folder, 'm.csv')))).toMatch(/dead_sensor/);
    });

    it('should refuse 40 columns at order 40 and give the multiplet count', () => {
      const header = Array.from({ length: 40 }, (_, j) => `c${j}`);
      const rows = Array.from({ length: 6 }, (_, i) => header.map((_, j) => (i * (j + 1)) % 3));
      const folder = fixtureFolder({ 'w.csv': csv(header, rows) });
      const line = expectOneLineFailure(analyze(path.join(folder, 'w.csv'), '--max-order', '40'));
      // 2^40 − 1 non-empty subsets of 40 columns
      expect(line.replace(/[,_ \u202f\u00a0]/g, '')).toContain('1099511627775');
    });

    it('should refuse a file that does not exist', () => {
      const line = expectOneLineFailure(analyze(path.join(ROOT, 'no-such-folder', 'missing.csv')));
      expect(line).toMatch(/missing\.csv' does not exist/);
    });

    it('should refuse a file with an extension it cannot read', () => {
      const folder = fixtureFolder({ 'data.xlsx': 'x' });
      expect(expectOneLineFailure(analyze(path.join(folder, 'data.xlsx')))).toMatch(/\.csv, \.tsv/);
    });

    it.each([
      ['text.parquet', 'a,b\n1,2\n', /text\.parquet is not a Parquet file/],
      ['text.arrow', 'a,b\n1,2\n', /text\.arrow is not an Arrow IPC file or stream/],
      ['noise.feather', new Uint8Array(256).map((_, i) => (i * 37) % 251), /is not an Arrow IPC/]
    ])('should refuse %s, which is not the format its extension says', (name, content, pattern) => {
      const folder = fixtureFolder({ [name]: content });
      expect(expectOneLineFailure(analyze(path.join(folder, name)))).toMatch(pattern);
    });

    it('should refuse an Arrow file named .csv and say what it looks like', () => {
      const table = arrow.tableFromArrays({ a: new Float64Array([1, 2]) });
      const folder = fixtureFolder({ 'bin.csv': arrow.tableToIPC(table, 'file') });
      expect(expectOneLineFailure(analyze(path.join(folder, 'bin.csv')))).toMatch(/not a text file.*Arrow IPC/);
    });

    it('should escape control characters from the data in messages', () => {
      const folder = fixtureFolder({ 'esc.csv': 'a\u001b[31m,b,a\u001b[31m\n1,2,3\n' });
      const line = expectOneLineFailure(analyze(path.join(folder, 'esc.csv')));
      expect(line).toContain('a\\u001b[31m');
      expect(line).not.toContain('\u001b');
    });
  });

  describe('#usage', () => {
    it('should print help and exit 0', () => {
      const run = runCli(bundle, ['--help']);
      expect(run.code).toBe(0);
      expect(run.stdout).toMatch(/^Usage: polyadic analyze DATA/);
      for (const option of ['--columns', '--bins', '--bin', '--missing', '--estimator', '--units', '--max-order', '--top', '--format', '--out']) {
        expect(run.stdout).toContain(option);
      }
    });

    it.each([
      ['verify', /^Usage: polyadic verify NOTEBOOK/],
      ['fingerprint', /^Usage: polyadic fingerprint DATA/]
    ])('should hand %s to its own command', (command, usage) => {
      const run = runCli(bundle, [command, '--help']);
      expect(run.code).toBe(0);
      expect(run.stdout).toMatch(usage);
    });

    it('should print the version of package.json', () => {
      const { version } = JSON.parse(fs.readFileSync(path.join(ROOT, 'package.json'), 'utf8'));
      const run = runCli(bundle, ['--version']);
      expect(run.code).toBe(0);
      expect(run.stdout.trim()).toBe(`polyadic ${version}`);
    });

    it.each([
      [['analyze', 'x.csv', '--estimatr', 'plugin'], /--estimatr/],
      [['analyze', 'x.csv', '--estimator', 'bayes'], /--estimator must be one of plugin, miller-madow, chao-shen, shrinkage, gaussian-copula; got 'bayes'/],
      [['analyze', 'x.csv', '--missing', 'skip'], /--missing must be one of drop, category, error/],
      [['analyze', 'x.csv', '--max-order', '0'], /--max-order must be a whole number/],
      [['analyze', 'x.csv', '--top', 'ten'], /--top must be a whole number/],
      [['analyze', 'x.csv', '--format', 'xml'], /--format must be one of json, csv/],
      [['analyze'], /needs a DATA file/],
      [['summarise', 'x.csv'], /Unknown command 'summarise'/],
      [[], /No command given/]
    ])('should refuse %j in one line', (args, pattern) => {
      expect(expectOneLineFailure(runCli(bundle, args as string[]))).toMatch(pattern);
    });
  });
});
