/**
 * From a record back to settings: the options re-run the recorded analysis (checked on the data
 * the fixture was made from), and the comparison of fingerprints names the changed columns.
 */
import * as fs from 'fs';
import * as path from 'path';

import { readDelimitedText } from '../../src/cli/readers';
import { analyze } from '../../src/engine/analyze';
import { fingerprintColumns } from '../../src/record/fingerprint';
import { compareFingerprint, optionsFromRecord, statisticsOptionsFromRecord } from '../../src/record/settings';
import { statisticsSettingsOf } from '../../src/record/summary';
import { topMultiplets } from '../../src/record/summary';
import type { IRecordDocument } from '../../src/record/types';
import { clone, greenhouseTable, toCsv } from './helpers';

const valid = JSON.parse(
  fs.readFileSync(path.join(__dirname, 'fixtures', 'valid-record.json'), 'utf8')
) as IRecordDocument;

/** The table valid-record.json was recorded from: greenhouseTable(60, 11) with two blank cells. */
function fixtureColumns() {
  const table = greenhouseTable(60, 11);
  table.rows[5][3] = '';
  table.rows[9][0] = '';
  return readDelimitedText(toCsv(table), 'csv', 'greenhouse.csv').columns;
}

describe('statisticsOptionsFromRecord', () => {
  it('should give nothing for an analysis without statistics', () => {
    expect(valid.analyses[0].statistics).toBeUndefined();
    expect(statisticsOptionsFromRecord(valid.analyses[0])).toBeUndefined();
  });

  it('should give the engine the options that it reports back as the recorded settings', () => {
    const analysis = clone(valid.analyses[1]);
    analysis.statistics = { surrogates: 30, seed: 9, bootstrap: 12, tail: 'redundancy', alpha: 0.2, beyond_pairs: 1, fit_draws: 7, sharpen: 40 };
    const options = statisticsOptionsFromRecord(analysis);
    expect(options).toEqual({ surrogates: 30, seed: 9, bootstrap: 12, tail: 'redundancy', alpha: 0.2, beyondPairs: 1, fitDraws: 7, sharpen: 40 });
    const result = analyze(fixtureColumns(), { ...optionsFromRecord(analysis), statistics: options });
    expect(statisticsSettingsOf(result.statistics!)).toEqual(analysis.statistics);
  });
});

describe('optionsFromRecord', () => {
  it('should give the engine options of the recorded analysis', () => {
    const analysis = valid.analyses[1];
    expect(optionsFromRecord(analysis)).toEqual({
      columns: ['valve_command', 'flow_l_min', 'leak_alarm'],
      binsByColumn: { valve_command: 'categorical', flow_l_min: 'edges:0,6,13', leak_alarm: 'categorical' },
      missing: 'category',
      estimator: 'chao-shen',
      units: 'nats',
      maxOrder: 3,
      maxMultiplets: 2 ** 24
    });
  });

  it.each([0, 1])('should re-run analysis %i of the fixture to the recorded values', async index => {
    const analysis = valid.analyses[index];
    const columns = fixtureColumns();
    const result = analyze(columns, optionsFromRecord(analysis));
    expect(result.columns.map(c => c.binning.edges ?? c.binning.categories)).toEqual(
      analysis.binning.map(b => b.edges ?? b.categories)
    );
    const top = topMultiplets(result.multiplets, analysis.summary.synergy.length);
    expect(top.synergy.map(m => m.columns)).toEqual(analysis.summary.synergy.map(m => m.columns));
    // the fixture was recorded by an earlier build of the engine: equal within verify's
    // cross-version tolerance, not necessarily to the last bit
    top.synergy.forEach((multiplet, i) => {
      const recorded = analysis.summary.synergy[i];
      for (const field of ['entropy', 'co_information', 'total_correlation', 'dual_total_correlation', 'o_information'] as const) {
        expect(Math.abs(multiplet[field] - recorded[field])).toBeLessThanOrEqual(1e-9);
      }
    });
    const selected = columns.filter(c => analysis.columns.includes(c.name));
    expect((await fingerprintColumns(selected)).sha256).toBe(analysis.source.fingerprint.sha256);
  });
});

describe('compareFingerprint', () => {
  it('should find the same data the same, and name a changed and a missing column', async () => {
    const analysis = valid.analyses[1];
    const columns = fixtureColumns().filter(c => analysis.columns.includes(c.name));
    const same = await fingerprintColumns(columns);
    expect(compareFingerprint(analysis, same)).toEqual({ same: true, changedColumns: [], missingColumns: [] });

    const flow = columns[1];
    if (flow.kind !== 'numeric') {
      throw new Error('flow_l_min should read as numeric');
    }
    const values = Float64Array.from(flow.values as Float64Array);
    values[7] += 1;
    const changed = await fingerprintColumns([columns[0], { ...flow, values }]);
    expect(compareFingerprint(analysis, changed)).toEqual({
      same: false,
      changedColumns: ['flow_l_min'],
      missingColumns: ['leak_alarm']
    });
  });

  it('should still tell a change when the record has no per-column digests', async () => {
    const analysis = clone(valid.analyses[1]);
    analysis.source.columns.forEach(column => delete column.sha256);
    const otherDay = readDelimitedText(toCsv(greenhouseTable(60, 12)), 'csv', 'greenhouse.csv').columns.slice(0, 3);
    expect(otherDay.map(c => c.name)).toEqual(analysis.columns);
    const other = await fingerprintColumns(otherDay);
    expect(compareFingerprint(analysis, other)).toEqual({ same: false, changedColumns: [], missingColumns: [] });
  });
});
