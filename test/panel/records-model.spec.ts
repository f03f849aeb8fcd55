/**
 * The records section's model over a notebook's metadata: a completed run is recorded under
 * the `polyadic` key only and validates; rename, delete and restore; invalid and newer records
 * are left untouched; the data check tells the same data from changed data. Also the lookup
 * of a analysis cell's record id.
 */
import * as fs from 'fs';
import * as path from 'path';

import { lookupAnalysisCell } from '../../src/cells/lookup';
import { readDataFile } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import type { ColumnView, IAnalyzeOptions } from '../../src/engine/types';
import type { IRunCompleted } from '../../src/panel/analysis/types';
import { RecordsModel, type IRestoreRequest, type IRunFrame } from '../../src/panel/records/model';
import { newRecordId } from '../../src/record/ids';
import { optionsFromRecord } from '../../src/record/settings';
import type { IMetadataAccess } from '../../src/record/store';
import { validateRecord } from '../../src/record/validate';
import { clone, greenhouseTable, tempFolder, toCsv } from '../record/helpers';

const OPTIONS: IAnalyzeOptions = { estimator: 'miller-madow', maxOrder: 3 };

/** Notebook metadata held in a plain object, as the notebook model holds it. */
function metadataOf(initial: Record<string, unknown> = {}): IMetadataAccess & { data: Record<string, unknown>; writes: number } {
  const access = {
    data: clone(initial),
    writes: 0,
    get: (key: string) => access.data[key],
    set: (key: string, value: unknown) => {
      access.writes++;
      access.data[key] = value;
    }
  };
  return access;
}

async function columnsOf(rows: number, seed: number, change?: (cells: string[][]) => void): Promise<ColumnView[]> {
  const table = greenhouseTable(rows, seed);
  change?.(table.rows);
  const file = path.join(tempFolder(), 'greenhouse.csv');
  fs.writeFileSync(file, toCsv(table));
  return (await readDataFile(file)).columns;
}

function frameOf(columns: ColumnView[], rows = 300): IRunFrame {
  return { name: 'greenhouse', columns, rows, originalRows: rows, sampled: false, seed: 0 };
}

function runOf(columns: ColumnView[], analysisId = newRecordId(), options: IAnalyzeOptions = OPTIONS): IRunCompleted {
  const result = analyze(columns, options);
  return {
    analysisId,
    result,
    options,
    frame: { ...frameOf(columns), listed: null, fields: [], bytes: 0 },
    finished: '2031-03-02T08:00:00.000Z',
    elapsedMs: 1,
    workers: 1
  };
}

let columns: ColumnView[];

beforeAll(async () => {
  columns = await columnsOf(300, 11);
});

describe('RecordsModel', () => {
  describe('#recordRun', () => {
    it('should write a valid record under the polyadic key and leave other keys alone', async () => {
      const metadata = metadataOf({ other_extension: { keep: [1, 2] }, kernelspec: { name: 'python3' } });
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      const run = runOf(columns, 'pd-firstrun0001');
      const analysis = await model.recordRun(run);
      expect(model.error).toBeNull();
      expect(analysis?.id).toBe('pd-firstrun0001');
      expect(Object.keys(metadata.data).sort()).toEqual(['kernelspec', 'other_extension', 'polyadic']);
      expect(metadata.data.other_extension).toEqual({ keep: [1, 2] });
      expect(validateRecord(metadata.data.polyadic).ok).toBe(true);
      expect(model.state?.analyses.map(a => a.id)).toEqual(['pd-firstrun0001']);
      expect(model.selectedId).toBe('pd-firstrun0001');
      // the planted exclusive-or of the helper's table must lead the synergy side
      expect([...analysis!.summary.synergy[0].columns].sort()).toEqual(['flow_l_min', 'leak_alarm', 'valve_command']);
    });

    it('should keep several analyses in run order', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      await model.recordRun(runOf(columns, 'pd-run00000001'));
      await model.recordRun(runOf(columns, 'pd-run00000002', { ...OPTIONS, bins: 'quantile:4' }));
      expect(model.state?.analyses.map(a => a.id)).toEqual(['pd-run00000001', 'pd-run00000002']);
      // and tells them apart by their labels
      const [first, second] = model.state!.analyses.map(a => a.label);
      expect(first).not.toBe(second);
      expect(second).toContain('quantile:4');
    });

    it('should replace the analysis that a re-run with the same settings on the same data repeats', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      const first = await model.recordRun(runOf(columns, 'pd-run00000001'));
      model.rename(first!.id, 'Drip line, first look');
      await model.recordRun(runOf(columns, 'pd-run00000002', { ...OPTIONS, maxOrder: 2 }));
      expect(await model.rerunOf(runOf(columns, 'pd-run00000003'))).toBe('pd-run00000001');
      const again = runOf(columns, 'pd-run00000004');
      again.finished = '2031-03-03T09:00:00.000Z';
      const replaced = await model.recordRun(again);
      // the same place, id and name; the new time
      expect(model.state?.analyses.map(a => a.id)).toEqual(['pd-run00000001', 'pd-run00000002']);
      expect(replaced).toMatchObject({ id: 'pd-run00000001', label: 'Drip line, first look', created: '2031-03-03T09:00:00.000Z' });
      expect(model.selectedId).toBe('pd-run00000001');
      // other data is another analysis
      const changed = await columnsOf(300, 11, cells => (cells[3][5] = '99.00'));
      expect(await model.rerunOf(runOf(changed))).toBeNull();
      await model.recordRun(runOf(changed, 'pd-run00000005'));
      expect(model.state?.analyses).toHaveLength(3);
      expect(validateRecord(metadata.data.polyadic).ok).toBe(true);
    });

    it('should refuse without a notebook and without fetched columns', async () => {
      const model = new RecordsModel();
      expect(await model.recordRun(runOf(columns))).toBeNull();
      expect(model.error?.message).toMatch(/No notebook is open/);
      const metadata = metadataOf();
      model.setNotebook({ path: 'a.ipynb', metadata });
      const run = runOf(columns);
      delete run.frame.columns;
      expect(await model.recordRun(run)).toBeNull();
      expect(model.error?.message).toMatch(/did not pass on the columns/);
      expect(metadata.writes).toBe(0);
    });

    it('should leave an invalid record untouched and name the path at fault', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      await model.recordRun(runOf(columns, 'pd-handedit0001'));
      const edited = clone(metadata.data.polyadic) as { analyses: { estimator: string }[] };
      edited.analyses[0].estimator = 'guesswork';
      const before = metadataOf({ polyadic: edited });
      model.setNotebook({ path: 'b.ipynb', metadata: before });
      expect(model.state?.status).toBe('invalid');
      expect(model.state?.notice).toContain('/analyses/0/estimator');
      expect(await model.recordRun(runOf(columns))).toBeNull();
      expect(model.rename('pd-handedit0001', 'x')).toBe(false);
      expect(before.writes).toBe(0);
      expect(before.data.polyadic).toEqual(edited);
    });

    it('should show a newer record read-only and refuse changes', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      await model.recordRun(runOf(columns, 'pd-fromfuture01'));
      const newer = { ...(clone(metadata.data.polyadic) as object), version: 3 };
      const stored = metadataOf({ polyadic: newer });
      model.setNotebook({ path: 'c.ipynb', metadata: stored });
      expect(model.state?.status).toBe('newer');
      expect(model.state?.readOnly).toBe(true);
      expect(model.state?.analyses.map(a => a.id)).toEqual(['pd-fromfuture01']);
      expect(model.remove('pd-fromfuture01')).toBe(false);
      expect(model.error).not.toBeNull();
      expect(stored.writes).toBe(0);
    });
  });

  describe('#rename and #remove', () => {
    it('should rename, refuse an empty name, and delete', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      await model.recordRun(runOf(columns, 'pd-renameme0001'));
      expect(model.rename('pd-renameme0001', '  Drip line <b>check</b> ')).toBe(true);
      expect(model.state?.analyses[0].label).toBe('Drip line <b>check</b>');
      const writes = metadata.writes;
      expect(model.rename('pd-renameme0001', '   ')).toBe(false);
      expect(model.error?.message).toMatch(/empty/);
      expect(metadata.writes).toBe(writes);
      expect(model.remove('pd-renameme0001')).toBe(true);
      expect(model.state?.analyses).toEqual([]);
      expect(model.selectedId).toBeNull();
      expect(validateRecord(metadata.data.polyadic).ok).toBe(true);
    });
  });

  describe('#restore', () => {
    it('should emit the recorded frame and the options that re-run the analysis', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      const analysis = await model.recordRun(runOf(columns, 'pd-restoreme001'));
      model.select(null);
      const requests: IRestoreRequest[] = [];
      model.restoreRequested.connect((_, request) => requests.push(request));
      expect(model.restore('pd-restoreme001')).toBe(true);
      expect(model.selectedId).toBe('pd-restoreme001');
      expect(requests).toHaveLength(1);
      expect(requests[0].frame).toBe('greenhouse');
      expect(requests[0].options).toEqual(optionsFromRecord(analysis!));
      expect(requests[0].options.estimator).toBe('miller-madow');
      expect(requests[0].options.maxOrder).toBe(3);
      expect(model.restore('pd-notrecorded1')).toBe(false);
      expect(requests).toHaveLength(1);
    });
  });

  describe('#checkData', () => {
    it('should tell the same data, one changed value, another sample and another frame apart', async () => {
      const metadata = metadataOf();
      const model = new RecordsModel();
      model.setNotebook({ path: 'a.ipynb', metadata });
      await model.recordRun(runOf(columns, 'pd-checkdata001'));

      expect((await model.checkData(frameOf(await columnsOf(300, 11))))?.status).toBe('same');

      const changed = await columnsOf(300, 11, rows => {
        rows[17][3] = '99.99';
      });
      const check = await model.checkData(frameOf(changed));
      expect(check?.status).toBe('changed');
      expect(check?.comparison?.changedColumns).toEqual(['humidity_a_pct']);
      expect(check?.message).toContain("'humidity_a_pct'");
      expect(model.dataCheckOf('pd-checkdata001')?.status).toBe('changed');

      const sampled = { ...frameOf(columns), sampled: true, originalRows: 5000, seed: 3 };
      expect((await model.checkData(sampled))?.status).toBe('not-comparable');

      expect(await model.checkData({ ...frameOf(columns), name: 'other_frame' })).toBeNull();
    });
  });
});

describe('lookupAnalysisCell', () => {
  it('should find a recorded analysis and explain every case where it cannot', async () => {
    const metadata = metadataOf();
    const model = new RecordsModel();
    model.setNotebook({ path: 'a.ipynb', metadata });
    await model.recordRun(runOf(columns, 'pd-lookup000001'));

    const found = lookupAnalysisCell({ record_id: 'pd-lookup000001' }, metadata);
    expect(found.kind).toBe('analysis');

    const badId = lookupAnalysisCell({ record_id: 'pd-x"); import os' }, metadata);
    expect(badId).toMatchObject({ kind: 'message', level: 'error' });

    const missing = lookupAnalysisCell({ record_id: 'pd-notrecorded1' }, metadata);
    expect(missing).toMatchObject({ kind: 'message', level: 'warning' });
    expect(missing.kind === 'message' && missing.text).toContain('pd-notrecorded1');

    expect(lookupAnalysisCell({ record_id: 'pd-lookup000001' }, null)).toMatchObject({ kind: 'message' });

    const broken = metadataOf({ polyadic: { version: 1, analyses: [{ id: 'pd-lookup000001' }] } });
    const invalid = lookupAnalysisCell({ record_id: 'pd-lookup000001' }, broken);
    expect(invalid).toMatchObject({ kind: 'message', level: 'error' });
    expect(invalid.kind === 'message' && invalid.text).toContain('/analyses/0');
  });
});
