/**
 * The robustness block of the record: built from a completed robustness run, checked against the
 * schema (and the lengths the schema cannot state), and re-derived by `polyadic verify`, which
 * fails naming the value when the block differs from a re-run with its settings.
 */
import * as fs from 'fs';
import * as path from 'path';

import { readDataFile } from '../../src/cli/readers';
import { runVerify, VERIFY_EXIT } from '../../src/cli/verify';
import { analyze } from '../../src/engine/analyze';
import { defaultVariants, parseVariantSpec, robustnessRun } from '../../src/engine/robustness';
import type { IAnalyzeOptions } from '../../src/engine/types';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { recordFromResult } from '../../src/record/recordFromResult';
import { robustnessBlockOf, robustnessRerunOf, withRobustness } from '../../src/record/robustness';
import type { IAnalysisRecord } from '../../src/record/types';
import { markdownSummary } from '../../src/record/markdown';
import { validateAnalysis } from '../../src/record/validate';
import { captureStreams, clone, greenhouseTable, notebookWith, recordOf, tempFolder, toCsv } from './helpers';

const OPTIONS: IAnalyzeOptions = { estimator: 'miller-madow', maxOrder: 3 };

let folder: string;
let csvPath: string;
let plain: IAnalysisRecord;
let checked: IAnalysisRecord;

async function verify(analyses: IAnalysisRecord[], name: string): Promise<{ code: number; stdout: string; stderr: string }> {
  const file = path.join(folder, name);
  fs.writeFileSync(file, JSON.stringify(notebookWith(recordOf(analyses)), null, 1));
  const io = captureStreams();
  const code = await runVerify([file, '--data', `greenhouse=${csvPath}`], io);
  return { code, stdout: io.stdout.text, stderr: io.stderr.text };
}

beforeAll(async () => {
  folder = tempFolder();
  csvPath = path.join(folder, 'greenhouse.csv');
  fs.writeFileSync(csvPath, toCsv(greenhouseTable(400, 7)));
  const source = await readDataFile(csvPath);
  plain = recordFromResult({
    options: OPTIONS,
    result: analyze(source.columns, OPTIONS),
    source: { frame: 'greenhouse', columns: source.columns, fingerprint: await fingerprintColumns(source.columns) },
    label: 'Drip line check',
    created: new Date('2031-03-02T08:00:00Z')
  });
  // As the panel runs it: the analysis' own options as the base, the default variants, N = 5.
  const variants = defaultVariants(source.columns, OPTIONS).map(parseVariantSpec);
  checked = withRobustness({ ...plain, id: 'pd-robust0001' }, robustnessRun(source.columns, OPTIONS, variants, 5));
}, 60_000);

describe('robustnessBlockOf', () => {
  it('should record the variant texts, N, the verdicts and the agreement of the run', () => {
    const block = checked.robustness;
    expect(block?.settings.top).toBe(5);
    expect(block?.settings.variants[0]).toMatch(/quantile:3/);
    expect(block?.settings.variants).toContain('estimator=plugin');
    const variants = block?.settings.variants.length ?? 0;
    expect(block?.results.agreement).toHaveLength(((variants + 1) * variants) / 2);
    expect(block?.results.verdicts.length).toBeGreaterThan(0);
    for (const verdict of block?.results.verdicts ?? []) {
      expect(verdict.values).toHaveLength(variants + 1);
      expect(verdict.in_top).toHaveLength(variants);
      expect(verdict.verdict).toMatch(new RegExp(`^(robust|not robust): holds in \\d+ of ${variants} variants( \\(not in the base's top 5\\))?$`));
      expect(verdict.verdict.endsWith("(not in the base's top 5)")).toBe(!verdict.in_base_top);
    }
  });

  it('should write a τ that is not a number as null', () => {
    const run = robustnessRun(
      [{ kind: 'numeric', name: 'a', dtype: 'float64', values: Float64Array.from([1, 2, 3, 4]), missing: null },
       { kind: 'numeric', name: 'b', dtype: 'float64', values: Float64Array.from([4, 3, 2, 1]), missing: null }],
      { bins: 'quantile:2' },
      [{ label: 'bins=quantile:3', options: { bins: 'quantile:3' } }]
    );
    // one multiplet of order 2: τ of one value is undefined
    expect(robustnessBlockOf(run).results.agreement[0].kendall_tau).toBeNull();
  });
});

describe('withRobustness', () => {
  it('should refuse a block whose lengths do not match its variants, naming the path', () => {
    const broken = clone(checked);
    broken.robustness?.results.verdicts[0].in_top.pop();
    const result = validateAnalysis(broken);
    expect(result.ok).toBe(false);
    expect(result.ok ? [] : result.problems.map(problem => problem.path)).toEqual(['/robustness/results/verdicts/0/in_top']);
    const unknown = clone(checked) as unknown as { robustness: { settings: Record<string, unknown> } };
    unknown.robustness.settings.seed = 1;
    expect(validateAnalysis(unknown).ok).toBe(false);
  });
});

describe('markdownSummary with a robustness block', () => {
  it('should add the verdicts after the tables, names escaped, and nothing without a block', () => {
    const text = markdownSummary(checked);
    const variants = checked.robustness?.settings.variants.length ?? 0;
    expect(text).toContain(`Robustness across ${variants} variants (bin\\.flow\\_l\\_min\\=quantile\\:3\\;`);
    expect(text).toContain(' · estimator\\=plugin · ');
    expect(text).toContain('| multiplet | table | verdict |');
    const first = checked.robustness!.results.verdicts[0];
    expect(text).toContain(`| ${first.columns.map(name => name.replace(/_/g, '\\_')).join(', ')} | ${first.table} | `);
    expect(markdownSummary(plain)).not.toContain('Robustness across');
  });
});

describe('robustnessRerunOf', () => {
  it('should re-run on the recorded binning column by column, with the recorded variants', () => {
    const rerun = robustnessRerunOf(checked);
    expect(rerun?.base.binsByColumn).toEqual(Object.fromEntries(checked.binning.map(b => [b.name, b.spec])));
    expect(rerun?.variants.map(v => v.label)).toEqual(checked.robustness?.settings.variants);
    expect(robustnessRerunOf(plain)).toBeUndefined();
  });
});

describe('runVerify with a robustness block', () => {
  it('should exit 0 when the block re-derives, counting its values', async () => {
    const run = await verify([plain, checked], 'robust.ipynb');
    expect(run.stderr).toBe('');
    expect(run.code).toBe(VERIFY_EXIT.reproduced);
    const count = (id: string): number =>
      Number(/reproduced \(([\d,]+) values/.exec(run.stdout.split('\n').find(line => line.startsWith(id)) ?? '')?.[1].replace(/,/g, ''));
    expect(count(checked.id)).toBeGreaterThan(count(plain.id) + 50);
  });

  it('should name a tampered verdict, τ and overlap', async () => {
    const tampered = clone(checked);
    const block = tampered.robustness!;
    block.results.verdicts[0].robust = !block.results.verdicts[0].robust;
    block.results.agreement[1].kendall_tau = (block.results.agreement[1].kendall_tau ?? 0) + 1e-12;
    block.results.agreement[2].overlap_synergy += 1;
    const run = await verify([tampered], 'tampered.ipynb');
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toMatch(/DIFFERS: robustness\.verdicts\[0\]\.robust (true vs false|false vs true)/);
    expect(run.stdout).toMatch(/robustness\.agreement\[1\]\.kendall_tau/);
    expect(run.stdout).toMatch(/robustness\.agreement\[2\]\.overlap_synergy/);
  });

  it('should fail naming the variant when a recorded variant no longer parses', async () => {
    const tampered = clone(checked);
    tampered.robustness!.settings.variants[0] = 'bins=octile:3';
    const run = await verify([tampered], 'bad-variant.ipynb');
    expect(run.code).toBe(VERIFY_EXIT.differs);
    expect(run.stdout).toMatch(/the re-run with the recorded settings fails: The recorded robustness run of 'pd-robust0001': Variant 'bins=octile:3'/);
  });
});
