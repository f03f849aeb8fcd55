/**
 * The analysis model that ties the sections together: choices that belong to one notebook,
 * the highest order lowered to the selected columns (and said so).
 */
import * as fs from 'fs';
import * as path from 'path';

import { Signal } from '@lumino/signaling';

import type { KernelBridge } from '../../src/bridge/connector';
import type { IFetchedFrame } from '../../src/bridge/decode';
import type { IFrameInfo } from '../../src/bridge/protocol';
import { readDataFile } from '../../src/cli/readers';
import { runVerify, VERIFY_EXIT } from '../../src/cli/verify';
import { analyze, analyzeCodes, prepareColumns } from '../../src/engine/analyze';
import type { IPreparedCodes } from '../../src/engine/binning';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import { AnalysisModel, type IEngineRunner } from '../../src/panel/analysis/model';
import { EstimatorModel } from '../../src/panel/estimator/model';
import { recordCompletedRuns } from '../../src/panel/records/connect';
import { RecordsModel } from '../../src/panel/records/model';
import { followRestores } from '../../src/panel/records/restore';
import type { IPolyadicSettings } from '../../src/tokens';
import type { IRunResult } from '../../src/worker/pool';
import { previewColumn } from '../../src/worker/handlers';
import { fingerprintScan, sortedWeightedTable } from '../../src/record/scan-fingerprint';
import { validateRecord } from '../../src/record/validate';
import { greenhouseTable, notebookWith, tempFolder, toCsv } from '../record/helpers';
import { BridgeError } from '../../src/bridge/errors';
import { MemoryScanner } from '../engine/scan-helpers';
import { ContractBridge } from '../bridge/scan-fakes';

/** The first `rows` rows of a column (a stand-in for the kernel's seeded sample). */
function sliceColumn(column: ColumnView, rows: number): ColumnView {
  return column.kind === 'numeric'
    ? { ...column, values: column.values.slice(0, rows), missing: column.missing?.slice(0, rows) ?? null }
    : { ...column, codes: column.codes.slice(0, rows), missing: column.missing?.slice(0, rows) ?? null };
}

/** The settings as the Settings Editor gives them with nothing changed: the schema's defaults. */
function defaultSettings(): IPolyadicSettings {
  const schema = JSON.parse(fs.readFileSync(path.join(__dirname, '..', '..', 'schema', 'settings', 'plugin.json'), 'utf8')) as {
    properties: Record<string, { default: unknown }>;
  };
  return Object.fromEntries(Object.entries(schema.properties).map(([key, property]) => [key, property.default])) as unknown as IPolyadicSettings;
}

/** An engine that is never asked to run here. */
const idleEngine: IEngineRunner = {
  analyze: (_columns, _options: IAnalyzeOptions) => Promise.reject(new Error('not in this test')),
  analyzePrepared: () => Promise.reject(new Error('not in this test')),
  preview: () => Promise.reject(new Error('not in this test')),
  cancel: () => undefined
};

/** The greenhouse helper table as column views, with `change` applied to its cells first. */
async function greenhouseColumns(change?: (rows: string[][]) => void, file = path.join(tempFolder(), 'greenhouse.csv')): Promise<ColumnView[]> {
  const table = greenhouseTable(300, 11);
  change?.(table.rows);
  fs.writeFileSync(file, toCsv(table));
  return (await readDataFile(file)).columns;
}

/** A kernel holding one frame, `greenhouse`, whose data the test changes as a cell would. */
class FakeKernel {
  constructor(public columns: ColumnView[]) {}
  readonly statusChanged = new Signal<this, unknown>(this);
  readonly framesChanged = new Signal<this, unknown>(this);
  readonly status = { state: 'ready', message: 'ready', commands: [] };
  isDisposed = false;
  sent: string[] = [];

  get listing(): { frames: IFrameInfo[]; skipped: [] } {
    const frame: IFrameInfo = {
      name: 'greenhouse',
      kind: 'pandas',
      rows: 300,
      memory_bytes: 1,
      columns: this.columns.map(column => ({ name: column.name, dtype: column.dtype, kind: column.kind }))
    };
    return { frames: [frame], skipped: [] };
  }

  fetch(name: string, names: string[]): Promise<IFetchedFrame> {
    const columns = names.map(wanted => this.columns.find(column => column.name === wanted)!);
    return Promise.resolve({ name, columns, fields: [], rows: 300, originalRows: 300, sampled: false, seed: 0, bytes: 1 });
  }

  sendResults(id: string): Promise<unknown> {
    this.sent.push(id);
    return Promise.resolve({ rows: 0 });
  }
}

/** The real engine in-process; `hold` keeps the next analysis waiting until released. */
function engine(): IEngineRunner & { hold: boolean; release: () => void } {
  let waiting: (() => void) | null = null;
  const runner = {
    hold: false,
    release: () => waiting?.(),
    analyze: (columns: ColumnView[], options: IAnalyzeOptions): Promise<IRunResult> => {
      const result = { result: analyze(columns, options), workers: 1, elapsedMs: 1 };
      if (!runner.hold) {
        return Promise.resolve(result);
      }
      return new Promise<IRunResult>(resolve => (waiting = () => resolve(result)));
    },
    analyzePrepared: (prepared: IPreparedCodes, options: IAnalyzeOptions): Promise<IRunResult> =>
      Promise.resolve({ result: analyzeCodes(prepared, options), workers: 1, elapsedMs: 1 }),
    preview: (column: ColumnView, spec?: string) => Promise.resolve(previewColumn(column, spec)),
    cancel: () => undefined
  };
  return runner;
}

async function settle(): Promise<void> {
  for (let i = 0; i < 30; i++) {
    await new Promise(resolve => setTimeout(resolve, 0));
  }
}

/** An analysis model on a fake kernel, wired to a records model as the panel wires them. */
async function panelOn(kernel: FakeKernel): Promise<{ analysis: AnalysisModel; records: RecordsModel; runner: ReturnType<typeof engine> }> {
  const runner = engine();
  const records = new RecordsModel();
  // as PanelModel wires them
  const analysis = new AnalysisModel({ engine: runner, previewDebounceMs: 0, recordIdFor: run => records.rerunOf(run) });
  analysis.applySettings({ ...defaultSettings(), estimator: 'plugin' });
  const metadata: Record<string, unknown> = {};
  records.setNotebook({ path: 'a.ipynb', metadata: { get: key => metadata[key], set: (key, value) => (metadata[key] = value) } });
  recordCompletedRuns(analysis, records);
  followRestores(analysis, records);
  analysis.data.bridge = kernel as unknown as KernelBridge;
  await analysis.data.pick('greenhouse');
  await settle();
  return { analysis, records, runner };
}

describe('AnalysisModel', () => {
  describe('#start', () => {
    it('should raise the data-changed banner of the chosen record as soon as a run reads changed data', async () => {
      const kernel = new FakeKernel(await greenhouseColumns());
      const { analysis, records, runner } = await panelOn(kernel);
      await analysis.start();
      await settle();
      const first = records.selected!;
      expect(records.dataCheckOf(first.id)?.status).toBe('same');

      // a cell changes one humidity in the kernel; the shape stays, so no listing says so
      kernel.columns = await greenhouseColumns(rows => (rows[42][4] = '3.25'));
      runner.hold = true;
      const run = analysis.start();
      await settle();
      // the run has read the frame but the engine has not finished: the banner is up already
      expect(analysis.runState).toBe('running');
      expect(records.dataCheckOf(first.id)).toMatchObject({ status: 'changed', comparison: { changedColumns: ['humidity_b_pct'] } });
      // and the loaded frame is the kernel's data now, for the checklist and the previews
      const loaded = analysis.data.fetched!.columns.find(column => column.name === 'humidity_b_pct')!;
      expect(loaded).toBe(kernel.columns.find(column => column.name === 'humidity_b_pct'));
      runner.release();
      await run;
      await settle();
      // the run on the changed data is recorded and chosen, with no banner of its own
      const second = records.selected!;
      expect(second.id).not.toBe(first.id);
      expect(records.dataCheckOf(second.id)?.status ?? 'same').toBe('same');
      expect(records.dataCheckOf(first.id)?.status).toBe('changed');
      // the binning chosen for the frame survived the new data
      expect(analysis.binning.specOf('humidity_b_pct')).toBe('auto');
      analysis.dispose();
    });

    it('should give a re-run with the same settings on the same data the id of the analysis it repeats', async () => {
      const kernel = new FakeKernel(await greenhouseColumns());
      const { analysis, records } = await panelOn(kernel);
      await analysis.start();
      await settle();
      analysis.binning.setSpec('air_temp_c', 'quantile:8');
      await analysis.start();
      await settle();
      analysis.binning.setSpec('air_temp_c', 'auto');
      await analysis.start();
      await settle();
      const analyses = records.state!.analyses;
      // the third run repeats the first: one record for both, under one id in the kernel too
      expect(analyses).toHaveLength(2);
      expect(kernel.sent).toEqual([analyses[0].id, analyses[1].id, analyses[0].id]);
      expect(analysis.latest!.analysisId).toBe(analyses[0].id);
      expect(records.selectedId).toBe(analyses[0].id);
      expect(analyses[0].label).not.toBe(analyses[1].label);
      analysis.dispose();
    });

    it('should run the Gaussian copula on continuous columns, without adequacy, and refuse a boolean column by name', async () => {
      const kernel = new FakeKernel(await greenhouseColumns());
      const { analysis, records } = await panelOn(kernel);
      expect(analysis.binning.unusedBecause).toBeNull();
      analysis.estimator.estimator = 'gaussian-copula';
      expect(analysis.adequacy).toBeNull();
      expect(analysis.binning.unusedBecause).toMatch(/does not bin/);
      await analysis.start();
      await settle();
      // every column selected: the flags are boolean, and the run says which
      expect(analysis.run.state).toBe('error');
      expect(analysis.run.error?.message).toMatch(/'valve_command' is boolean/);
      // the error names its column: the Dataframe section marks that column, not the Binning one
      expect(analysis.data.fault?.detail.column).toBe('valve_command');
      expect(analysis.binning.faultOf('valve_command')).toBeNull();
      analysis.data.setSelected('valve_command', false);
      analysis.data.setSelected('leak_alarm', false);
      await analysis.start();
      await settle();
      expect(analysis.data.fault).toBeNull();
      const result = analysis.latest!.result;
      expect(result.estimator).toBe('gaussian-copula');
      expect(result.columns.map(column => column.binning.method)).toEqual(['copula', 'copula', 'copula', 'copula']);
      analysis.estimator.estimator = 'plugin';
      expect(analysis.binning.unusedBecause).toBeNull();
      // the record the panel writes says so and passes the schema
      const recorded = records.state!.analyses;
      expect(recorded.map(a => [a.estimator, a.binning[0].method, a.binning[0].spec])).toEqual([['gaussian-copula', 'copula', 'copula']]);
      analysis.dispose();
    });

    it('should hold the error of a run refused by a column’s edges, and mark that column’s binning row', async () => {
      const kernel = new FakeKernel(await greenhouseColumns());
      const { analysis } = await panelOn(kernel);
      // well-formed edges that leave the recorded temperatures outside
      analysis.binning.setSpec('air_temp_c', 'edges:-100,-99');
      expect(analysis.blocker).toBeNull();
      await analysis.start();
      await settle();
      expect(analysis.run.state).toBe('error');
      const error = analysis.run.error!;
      expect(error.kind).toBe('input');
      expect(error.detail).toMatchObject({ column: 'air_temp_c', option: 'bins' });
      expect(analysis.binning.faultOf('air_temp_c')?.detail.column).toBe('air_temp_c');
      expect(analysis.binning.faultOf('air_temp_c')?.message).toMatch(/outside the edges -100 … -99/);
      expect(analysis.data.fault).toBeNull();
      analysis.binning.setSpec('air_temp_c', 'auto');
      await analysis.start();
      await settle();
      expect(analysis.run.state).toBe('done');
      expect(analysis.binning.faultOf('air_temp_c')).toBeNull();
      analysis.dispose();
    });

    it('should keep the binning specs when the loaded frame takes a run’s newer columns', async () => {
      const kernel = new FakeKernel(await greenhouseColumns());
      const { analysis } = await panelOn(kernel);
      analysis.binning.setSpec('air_temp_c', 'width:3');
      kernel.columns = await greenhouseColumns(rows => (rows[7][5] = '40.00'));
      await analysis.start();
      await settle();
      expect(analysis.data.fetched!.columns.find(column => column.name === 'air_temp_c')).toBe(
        kernel.columns.find(column => column.name === 'air_temp_c')
      );
      expect(analysis.binning.specOf('air_temp_c')).toBe('width:3');
      analysis.dispose();
    });
  });

  describe('#start on a scanned frame', () => {
    /** A kernel whose frame `rel` is a DuckDB relation: listed without rows, previewed by a sample, run by scans. */
    class ScanKernel extends FakeKernel {
      constructor(columns: ColumnView[]) {
        super(columns);
        this.scans = new ContractBridge(new MemoryScanner(columns));
      }
      readonly scans: ContractBridge;
      readonly fetches: { rowCap?: number; seed?: number }[] = [];

      get listing(): { frames: IFrameInfo[]; skipped: [] } {
        const frame: IFrameInfo = {
          name: 'rel',
          kind: 'duckdb',
          rows: null,
          memory_bytes: null,
          engine: { name: 'duckdb', version: '1.5.2' },
          columns: this.columns.map(column => ({ name: column.name, dtype: column.dtype, kind: column.kind }))
        };
        return { frames: [frame], skipped: [] };
      }

      fetch(name: string, names: string[], options: { rowCap?: number; seed?: number } = {}): Promise<IFetchedFrame> {
        this.fetches.push({ rowCap: options.rowCap, seed: options.seed });
        // the kernel's seeded sample: here the first 200 of 300 rows
        const columns = names.map(wanted => sliceColumn(this.columns.find(column => column.name === wanted)!, 200));
        return Promise.resolve({ name, columns, fields: [], rows: 200, originalRows: 300, sampled: true, seed: options.seed ?? 0, bytes: 1 });
      }

      scanFacts = (...args: Parameters<ContractBridge['scanFacts']>) => this.scans.scanFacts(...args);
      scanDetails = (...args: Parameters<ContractBridge['scanDetails']>) => this.scans.scanDetails(...args);
      scanGroup = (...args: Parameters<ContractBridge['scanGroup']>) => this.scans.scanGroup(...args);
      cancelScan = (...args: Parameters<ContractBridge['cancelScan']>) => this.scans.cancelScan(...args);
    }

    /** The panel on a scanned frame, wired to a records model over `metadata` as PanelModel wires them. */
    async function scannedPanel(
      metadata: Record<string, unknown> = {}
    ): Promise<{ analysis: AnalysisModel; kernel: ScanKernel; records: RecordsModel; csv: string }> {
      const csv = path.join(tempFolder(), 'rel.csv');
      const kernel = new ScanKernel(await greenhouseColumns(undefined, csv));
      const records = new RecordsModel();
      const analysis = new AnalysisModel({ engine: engine(), previewDebounceMs: 0, recordIdFor: run => records.rerunOf(run) });
      analysis.applySettings({ ...defaultSettings(), estimator: 'miller-madow', surrogates: 20 });
      records.setNotebook({ path: 'a.ipynb', metadata: { get: key => metadata[key], set: (key, value) => (metadata[key] = value) } });
      recordCompletedRuns(analysis, records);
      analysis.data.bridge = kernel as unknown as KernelBridge;
      await analysis.data.pick('rel');
      await settle();
      return { analysis, kernel, records, csv };
    }

    /** The selected columns binned in memory and grouped into the weighted table a scan gives (as `polyadic verify` does). */
    function groupedInMemory(columns: ColumnView[], options: IAnalyzeOptions): IPreparedCodes {
      const rows = prepareColumns(columns, options);
      const grouped = sortedWeightedTable({ codes: rows.codes, weights: new Int32Array(rows.rowsUsed).fill(1) });
      return { ...rows, codes: [...grouped.codes], weights: grouped.weights, rowIndex: null };
    }

    it('should preview a seeded sample and run on every row through the scans, as the in-memory engine does', async () => {
      const { analysis, kernel } = await scannedPanel();
      expect(kernel.fetches).toEqual([{ rowCap: 100_000, seed: 0 }]);
      expect(analysis.data.isScanned).toBe(true);
      expect(analysis.blocker).toBeNull();
      const options = analysis.options();
      // the settings' 20 surrogates do not reach a scanned frame's run, and nothing else is asked for
      expect(options.statistics).toBeUndefined();
      const stages: string[] = [];
      analysis.runChanged.connect((_sender, status) => status.stage && stages.push(status.stage));
      await analysis.start();
      expect(analysis.run.error).toBeNull();
      expect(analysis.runState).toBe('done');
      const latest = analysis.latest!;
      expect(latest.frame.rows).toBe(300);
      expect(latest.frame.scan).toMatchObject({ engine: 'duckdb', version: '1', distinctRows: expect.any(Number) });
      expect(JSON.stringify(latest.result)).toBe(JSON.stringify(analyze(kernel.columns, options)));
      expect(stages[0]).toBe('DuckDB counts the rows, missing values and extremes of each column…');
      expect(stages).toContain('DuckDB bins and groups every row…');
    });

    it('should send a cancel for the running scan and end as cancelled, the panel usable after', async () => {
      const { analysis, kernel } = await scannedPanel();
      kernel.scans.holdGroup = true;
      const run = analysis.start();
      while (analysis.run.stage !== 'DuckDB bins and groups every row…') {
        await new Promise(resolve => setTimeout(resolve, 1));
      }
      analysis.cancel();
      await run;
      expect(analysis.runState).toBe('cancelled');
      await settle();
      expect(kernel.scans.cancels).toEqual(['g1']);
      kernel.scans.holdGroup = false;
      await analysis.start();
      expect(analysis.runState).toBe('done');
    });

    it("should show the engine's message of a failed scan and mark the column it names", async () => {
      const { analysis, kernel } = await scannedPanel();
      const column = analysis.data.selected[0];
      kernel.scans.scanFacts = async () => {
        throw new BridgeError('kernel', `Column '${column}' holds datetime values, cast it in DuckDB first.`, { column });
      };
      await analysis.start();
      expect(analysis.runState).toBe('error');
      expect(analysis.run.error?.message).toBe(`Column '${column}' holds datetime values, cast it in DuckDB first.`);
      expect(analysis.data.fault?.detail.column).toBe(column);
    });

    it('should give the bootstrap intervals of analyzeCodes on the same weighted rows with the same seed, without surrogates', async () => {
      const { analysis, kernel } = await scannedPanel();
      expect(analysis.statisticsScope).toBe('weighted');
      analysis.statistics.set('bootstrap', '40');
      analysis.statistics.set('seed', '7');
      analysis.statistics.set('beyondPairs', '1');
      // order 3 keeps the fits of the pairwise-preserving null quick
      analysis.estimator.setChoices({ estimator: 'miller-madow', units: 'bits', maxOrder: 3 });
      // typed, but not for this frame: the section disables the field and the run leaves it out
      analysis.statistics.set('sharpen', '5');
      expect(analysis.blocker).toBeNull();
      const options = analysis.options();
      expect(options.statistics).toMatchObject({ surrogates: 0, sharpen: 0, bootstrap: 40, seed: 7, beyondPairs: 1 });
      await analysis.start();
      expect(analysis.run.error).toBeNull();
      const result = analysis.latest!.result;
      // outside the scan path: the kernel's columns binned in memory, grouped, then the engine itself
      const reference = analyzeCodes(groupedInMemory(kernel.columns, options), options);
      expect(result.statistics).toMatchObject({ surrogates: 0, bootstrap: 40, seed: 7 });
      const intervals = (rows: typeof result.multiplets) => rows.map(row => [row.columns, row.ci_low, row.ci_high, row.o_information_ci_low]);
      expect(intervals(result.multiplets)).toEqual(intervals(reference.multiplets));
      expect(result.multiplets.filter(row => typeof row.ci_low === 'number' && row.ci_low < row.ci_high!).length).toBeGreaterThan(0);
      expect(result.multiplets.some(row => row.connected_information !== undefined && row.connected_information !== null)).toBe(true);
      expect(result.multiplets.map(row => row.connected_information ?? null)).toEqual(reference.multiplets.map(row => row.connected_information ?? null));
      expect(result.multiplets.every(row => row.p_value === undefined || row.p_value === null)).toBe(true);
    }, 60_000);

    it('should record a scanned run with its pdsc1 fingerprint and origin, which polyadic verify reproduces', async () => {
      const metadata: Record<string, unknown> = {};
      const { analysis, records, kernel, csv } = await scannedPanel(metadata);
      analysis.statistics.set('bootstrap', '20');
      await analysis.start();
      await settle();
      expect(records.error).toBeNull();
      const run = analysis.latest!;
      const recorded = records.selected!;
      expect(recorded.id).toBe(run.analysisId);
      expect(validateRecord(metadata.polyadic).ok).toBe(true);
      const prepared = groupedInMemory(kernel.columns, run.options);
      const expected = await fingerprintScan({ codes: prepared.codes, weights: prepared.weights! }, prepared.rows, prepared.binnings);
      expect(recorded.source.fingerprint).toEqual({ encoding: 'pdsc1', sha256: expected.sha256 });
      expect(recorded.source.origin).toEqual({
        kind: 'scan',
        engine: { name: 'duckdb', version: '1' },
        input_rows: 300,
        distinct_rows: expected.distinctRows
      });
      expect(recorded.statistics).toMatchObject({ surrogates: 0, bootstrap: 20 });
      // the same run again replaces the analysis instead of adding one
      await analysis.start();
      await settle();
      expect((metadata.polyadic as { analyses: unknown[] }).analyses).toHaveLength(1);
      // the CLI checks the record against the rows (binned in memory, grouped, fingerprinted, re-run)
      const notebook = path.join(path.dirname(csv), 'scan.ipynb');
      fs.writeFileSync(notebook, JSON.stringify(notebookWith(metadata.polyadic)));
      let out = '';
      const io = { stdout: { write: (t: string) => (out += t) }, stderr: { write: (t: string) => (out += t) } };
      expect(await runVerify([notebook, '--data', `rel=${csv}`], io)).toBe(VERIFY_EXIT.reproduced);
      expect(out).toMatch(new RegExp(`${recorded.id} .* reproduced in memory`));
    }, 60_000);

    it('should refuse the Gaussian copula on a scanned frame, saying why', async () => {
      const { analysis } = await scannedPanel();
      analysis.estimator.estimator = 'gaussian-copula';
      expect(analysis.blocker).toMatch(/needs the ranks of every row/);
    });
  });

  describe('#setNotebook', () => {
    it('should keep each notebook’s estimator, units and maximum order with that notebook', () => {
      const model = new AnalysisModel({ engine: idleEngine });
      const settings = defaultSettings();
      model.applySettings(settings);
      model.setNotebook('notebook-a');
      model.estimator.maxOrder = 18;
      model.estimator.estimator = 'plugin';
      model.estimator.units = 'nats';

      // another notebook starts from the settings, not from the first notebook's choices
      model.setNotebook('notebook-b');
      expect(model.estimator.choices).toEqual({ estimator: settings.estimator, units: settings.units, maxOrder: null });
      model.estimator.maxOrder = 4;

      model.setNotebook('notebook-a');
      expect(model.estimator.choices).toEqual({ estimator: 'plugin', units: 'nats', maxOrder: 18 });
      model.setNotebook('notebook-b');
      expect(model.estimator.maxOrder).toBe(4);
      model.dispose();
    });

    it('should let a notebook whose choices were never touched follow new settings', () => {
      const model = new AnalysisModel({ engine: idleEngine });
      model.applySettings(defaultSettings());
      model.setNotebook('notebook-a');
      model.setNotebook('notebook-b');
      model.applySettings({ ...defaultSettings(), estimator: 'shrinkage' });
      expect(model.estimator.estimator).toBe('shrinkage');
      model.setNotebook('notebook-a');
      expect(model.estimator.estimator).toBe('shrinkage');
      model.dispose();
    });
  });
});

describe('EstimatorModel', () => {
  describe('#orderClamp', () => {
    it('should say when the order asked for is above the selected columns', () => {
      const model = new EstimatorModel();
      expect(model.orderClamp(16)).toBeNull();
      model.maxOrder = 17;
      expect(model.effectiveMaxOrder(16)).toBe(16);
      expect(model.orderClamp(16)).toEqual({ asked: 17, used: 16, source: 'choice' });
      expect(model.orderClamp(17)).toBeNull();
      model.maxOrder = null;
      model.setRule('fixed', 5);
      expect(model.orderClamp(3)).toEqual({ asked: 5, used: 3, source: 'settings' });
      // the automatic rule never asks for more than there is
      model.setRule('auto', 3);
      expect(model.orderClamp(2)).toBeNull();
    });
  });
});
