/**
 * The robustness section's model: the defaults for the run prefilled, an unknown rule or
 * estimator named with its line, the run through an engine (the in-process pool), its table,
 * figure lines and CSV, a run that a new run or another analysis replaces, and the block recorded
 * in the notebook's record, where verify would re-derive it.
 */
import * as fs from 'fs';
import * as path from 'path';

import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import { defaultVariants, IRobustnessResult, robustnessRun, parseVariantList } from '../../src/engine/robustness';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import type { IRunCompleted } from '../../src/panel/analysis/types';
import { RecordsModel } from '../../src/panel/records/model';
import { IRobustnessEngine, RobustnessModel } from '../../src/panel/robustness/model';
import type { IMetadataAccess } from '../../src/record/store';
import { validateRecord } from '../../src/record/validate';
import { EnginePool } from '../../src/worker/pool';
import { InProcessFactory } from '../worker/helpers';
import { clone, greenhouseTable, tempFolder, toCsv } from '../record/helpers';

const OPTIONS: IAnalyzeOptions = { estimator: 'miller-madow', maxOrder: 3 };

let columns: ColumnView[];

beforeAll(async () => {
  const file = path.join(tempFolder(), 'greenhouse.csv');
  fs.writeFileSync(file, toCsv(greenhouseTable(300, 11)));
  columns = (await readDataFile(file)).columns;
});

function runOf(analysisId: string, options: IAnalyzeOptions = OPTIONS, keepColumns = true): IRunCompleted {
  const result = analyze(columns, options);
  return {
    analysisId,
    result,
    options: { ...options, columns: result.columns.map(c => c.name) },
    frame: {
      name: 'greenhouse',
      columns: keepColumns ? columns : undefined,
      rows: 300,
      originalRows: 300,
      sampled: false,
      seed: 0,
      listed: null,
      fields: [],
      bytes: 0
    },
    finished: '2031-03-02T08:00:00.000Z',
    elapsedMs: 1,
    workers: 1
  };
}

/** An engine whose runs wait until released, to see the running state and a replaced run. */
class HeldEngine implements IRobustnessEngine {
  cancelled = 0;
  pending: { resolve: (result: IRobustnessResult) => void; run: () => IRobustnessResult }[] = [];
  robustness(cols: ColumnView[], base: IAnalyzeOptions, variants: Parameters<typeof robustnessRun>[2], top?: number): Promise<IRobustnessResult> {
    return new Promise(resolve => this.pending.push({ resolve, run: () => robustnessRun(cols, base, variants, top) }));
  }
  cancelRobustness(): boolean {
    this.cancelled++;
    return true;
  }
  release(i: number): void {
    this.pending[i].resolve(this.pending[i].run());
  }
}

function metadataOf(): IMetadataAccess & { data: Record<string, unknown> } {
  const access = {
    data: {} as Record<string, unknown>,
    get: (key: string) => access.data[key],
    set: (key: string, value: unknown) => {
      access.data[key] = clone(value);
    }
  };
  return access;
}

describe('RobustnessModel', () => {
  describe('#setRun', () => {
    it('should prefill the engine defaults for the run, one per line', () => {
      const model = new RobustnessModel({ engine: new HeldEngine() });
      expect(model.state).toBe('unavailable');
      const run = runOf('pd-robustmodel01');
      model.setRun(run);
      expect(model.state).toBe('idle');
      const expected = defaultVariants(columns, { ...run.options, statistics: undefined });
      expect(model.variantsText.split('\n')).toEqual(expected);
      expect(model.variantsText).toContain('estimator=plugin');
      model.setVariantsText('estimator=shrinkage');
      model.resetVariants();
      expect(model.variantsText).toBe(model.defaultsText);
      model.dispose();
    });

    it('should say why a run without its columns, or no run, cannot be checked', () => {
      const model = new RobustnessModel({ engine: new HeldEngine() });
      model.setRun(runOf('pd-robustmodel02', OPTIONS, false));
      expect(model.state).toBe('unavailable');
      expect(model.unavailableReason).toMatch(/did not keep the columns/);
      model.setRun(null);
      expect(model.unavailableReason).toMatch(/Run the analysis in this session/);
      model.dispose();
    });
  });

  describe('#check', () => {
    it('should name the line of an unknown rule or estimator and not run', async () => {
      const engine = new HeldEngine();
      const model = new RobustnessModel({ engine });
      model.setRun(runOf('pd-robustmodel03'));
      model.setVariantsText('bins=quantile:3\nestimator=guesswork');
      await model.check();
      expect(model.state).toBe('error');
      expect(model.error?.message).toMatch(/^Line 2: Variant 'estimator=guesswork': the estimator 'guesswork' is unknown/);
      expect(model.error?.detail.line).toBe(2);
      expect(engine.pending).toHaveLength(0);
      model.setVariantsText('\n# nothing\n');
      await model.check();
      expect(model.error?.message).toMatch(/variant list is empty/);
      model.setTop(0);
      expect(model.error?.message).toMatch(/N must be a whole number/);
      model.dispose();
    });

    it('should run in the pool and give the table, the figure lines and the CSV of the engine result', async () => {
      const pool = new EnginePool({ createWorker: new InProcessFactory().create, workers: 1 });
      const model = new RobustnessModel({ engine: pool });
      const run = runOf('pd-robustmodel04');
      model.setRun(run);
      model.setVariantsText('bins=quantile:3\nestimator=plugin');
      model.setTop(3);
      await model.check();
      pool.dispose();
      expect(model.error).toBeNull();
      expect(model.state).toBe('done');
      const direct = robustnessRun(columns, { ...run.options, statistics: undefined }, parseVariantList('bins=quantile:3\nestimator=plugin'), 3);
      expect(model.variantLabels).toEqual(['base', 'bins=quantile:3', 'estimator=plugin']);
      expect(model.rows.map(row => [row.multiplet, row.baseValue, row.ranks, row.sameSign, row.inBaseTop, row.verdict])).toEqual(
        direct.verdicts.map(v => [v.columns.join(', '), v.values[0], v.ranks, v.same_sign, v.in_base_top, v.verdict])
      );
      expect(model.lines.map(line => line.inBaseTop)).toEqual(direct.verdicts.map(v => v.in_base_top));
      // the planted exclusive-or of the helper's table leads the synergy side and holds
      const top = model.rows[0];
      expect([...top.columns].sort()).toEqual(['flow_l_min', 'leak_alarm', 'valve_command']);
      expect(top.robust).toBe(true);
      expect(model.lines[0].ranks).toEqual(top.ranks);
      expect(model.summaryText).toMatch(/^\d+ of \d+ followed multiplets robust across 2 variants/);
      const csv = model.csv(new Date('2031-03-02T09:00:00Z')) ?? '';
      const lines = csv.split('\n');
      expect(lines).toContain('# record: pd-robustmodel04');
      expect(lines).toContain('# variant 1: bins=quantile:3');
      const header = lines.find(line => !line.startsWith('#'));
      expect(header).toBe('columns,table,co_information[base],rank[base],rank[bins=quantile:3],rank[estimator=plugin],same_sign,robust,verdict');
      const body = lines.filter(line => line !== '' && !line.startsWith('#'));
      expect(body).toHaveLength(1 + model.rows.length);
      // a negative co-information is written as a number, not escaped as a formula
      expect(body[1].split(',')[2]).toBe(String(model.rows[0].baseValue));
      expect(model.rows[0].baseValue).toBeLessThan(0);
      expect(model.fileName).toBe('polyadic-greenhouse-pd-robustmodel04-robustness');
      model.dispose();
    });

    it('should drop a run that another analysis replaces, and cancel it', async () => {
      const engine = new HeldEngine();
      const model = new RobustnessModel({ engine });
      model.setRun(runOf('pd-robustmodel05'));
      model.setVariantsText('estimator=plugin');
      const checking = model.check();
      expect(model.state).toBe('running');
      model.setRun(runOf('pd-robustmodel06', { ...OPTIONS, maxOrder: 2 }));
      engine.release(0);
      await checking;
      expect(engine.cancelled).toBeGreaterThan(0);
      expect(model.result).toBeNull();
      expect(model.state).toBe('idle');
      model.dispose();
    });
  });

  describe('#setRecorded', () => {
    it('should show the check a restored view\'s record keeps, and not over a live run', async () => {
      const metadata = metadataOf();
      const records = new RecordsModel();
      records.setNotebook({ path: 'a.ipynb', metadata });
      const run = runOf('pd-robustmodel09');
      await records.recordRun(run);
      const result = robustnessRun(columns, { ...run.options, statistics: undefined }, parseVariantList('bins=quantile:3\nestimator=plugin'), 2);
      expect(await records.recordRobustness(run, result)).toBeNull();
      const analysis = records.state!.analyses[0];
      const model = new RobustnessModel({ engine: new HeldEngine() });
      model.setRecorded(analysis);
      expect(model.state).toBe('unavailable');
      expect(model.hasTable).toBe(true);
      expect(model.fromRecord).toBe(true);
      expect(model.variantLabels).toEqual(['base', 'bins=quantile:3', 'estimator=plugin']);
      expect(model.rows.map(row => [row.columns, row.ranks, row.verdict])).toEqual(result.verdicts.map(v => [v.columns, v.ranks, v.verdict]));
      expect(model.agreement.map(pair => pair.overlap_synergy)).toEqual(result.agreement.map(pair => pair.overlap_synergy));
      expect(model.summaryText).toMatch(/^As recorded: \d+ of \d+ followed multiplets robust across 2 variants\.$/);
      expect(model.ruleText).toContain('the top 2 of each table under the base or any variant');
      expect(model.csv(new Date('2031-03-02T09:00:00Z'))).toContain('# table: robustness (as recorded)');
      // a live run wins over the record
      model.setRun(run);
      model.setRecorded(analysis);
      expect(model.hasTable).toBe(false);
      model.dispose();
      records.dispose();
    });
  });

  describe('recording', () => {
    it('should write the block into the analysis of the run, valid, for verify to re-derive', async () => {
      const metadata = metadataOf();
      const records = new RecordsModel();
      records.setNotebook({ path: 'a.ipynb', metadata });
      const run = runOf('pd-robustmodel07');
      await records.recordRun(run);
      const model = new RobustnessModel({ engine: new HeldEngine(), record: (r, result) => records.recordRobustness(r, result) });
      model.setRun(run);
      model.setVariantsText('bins=quantile:3');
      model.setTop(2);
      const checking = model.check();
      (model as unknown as { _engine: HeldEngine })._engine.release(0);
      await checking;
      expect(model.recordNote).toMatch(/^Recorded in the notebook/);
      const stored = metadata.data.polyadic as { analyses: { id: string; robustness?: { settings: unknown } }[] };
      expect(validateRecord(stored).ok).toBe(true);
      expect(stored.analyses[0].robustness?.settings).toEqual({ variants: ['bins=quantile:3'], top: 2 });
      // a run that was never recorded is not: the note says why
      const lost = runOf('pd-robustmodel08');
      expect(await records.recordRobustness(lost, model.result as IRobustnessResult)).toMatch(/'pd-robustmodel08' is not in this notebook's record/);
      model.dispose();
      records.dispose();
    });
  });
});
