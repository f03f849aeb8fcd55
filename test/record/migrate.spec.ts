/**
 * Record versions: the pre-release layout (version 0) migrates through version 1 to the
 * current layout as written out by hand in fixtures/v0-migrated.json, a version 1 record
 * (fixtures/v1-record.json) migrates to version 2 field by field, problems in an old layout name their path in the stored
 * document, newer layouts are recognised, and the stored value is never changed.
 */
import * as fs from 'fs';
import * as path from 'path';

import { MIGRATIONS, migrateRecord, type IMigration } from '../../src/record/migrate';
import { validateRecord } from '../../src/record/validate';
import { clone } from './helpers';

const FIXTURES = path.join(__dirname, 'fixtures');
const v0 = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'v0-record.json'), 'utf8'));
const v0Migrated = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'v0-migrated.json'), 'utf8'));
const v1 = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'v1-record.json'), 'utf8'));
const v2 = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'valid-record.json'), 'utf8'));

describe('migrateRecord', () => {
  it('should migrate version 0 to the current version written out by hand', () => {
    const outcome = migrateRecord(v0);
    expect(outcome.status).toBe('current');
    if (outcome.status === 'current') {
      expect(outcome.fromVersion).toBe(0);
      expect(outcome.document).toEqual(v0Migrated);
      expect(validateRecord(outcome.document).ok).toBe(true);
    }
  });

  it('should leave the stored version 0 record as it was', () => {
    const stored = clone(v0);
    migrateRecord(stored);
    expect(stored).toEqual(v0);
  });

  it('should return a current record as it is, for the caller to check', () => {
    const outcome = migrateRecord(v2);
    expect(outcome).toEqual({ status: 'current', document: v2, fromVersion: 2 });
  });

  it('should migrate version 1: co_information renamed, the placeholder statistics dropped, nothing else changed', () => {
    const outcome = migrateRecord(v1);
    expect(outcome.status).toBe('current');
    if (outcome.status !== 'current') {
      return;
    }
    expect(outcome.fromVersion).toBe(1);
    const migrated = outcome.document as { version: number; analyses: Record<string, unknown>[] };
    expect(migrated.version).toBe(2);
    expect(validateRecord(migrated).ok).toBe(true);
    v1.analyses.forEach((old: Record<string, any>, i: number) => {
      const now = migrated.analyses[i] as Record<string, any>;
      expect(now.statistics).toBeUndefined();
      const { statistics: _dropped, summary: oldSummary, ...rest } = old;
      void _dropped;
      const { summary: newSummary, ...restNow } = now;
      expect(restNow).toEqual(rest);
      for (const side of ['synergy', 'redundancy']) {
        expect(newSummary[side]).toHaveLength(oldSummary[side].length);
        oldSummary[side].forEach((m: Record<string, unknown>, j: number) => {
          const { coinformation, ...others } = m;
          expect(newSummary[side][j]).toEqual({ ...others, co_information: coinformation });
          expect(Object.keys(newSummary[side][j])).toEqual(Object.keys(m).map(k => (k === 'coinformation' ? 'co_information' : k)));
        });
      }
      expect(newSummary.multiplet_count).toBe(oldSummary.multiplet_count);
      expect(newSummary.histograms).toEqual(oldSummary.histograms);
    });
  });

  it('should name the path of a problem in a version 1 record, checked against the frozen version 1 layout', () => {
    const broken = clone(v1);
    broken.analyses[0].summary.synergy[0].co_information = broken.analyses[0].summary.synergy[0].coinformation;
    delete broken.analyses[0].summary.synergy[0].coinformation;
    const outcome = migrateRecord(broken);
    expect(outcome.status).toBe('invalid');
    if (outcome.status === 'invalid') {
      expect(outcome.problems[0].path).toBe('/analyses/0/summary/synergy/0/coinformation');
      expect(outcome.problems[0].message).toContain('(in a record of layout version 1)');
    }
  });

  it('should name the path of a problem in a version 0 record', () => {
    const broken = clone(v0);
    broken.runs[0].timestamp = 'last spring';
    const outcome = migrateRecord(broken);
    expect(outcome.status).toBe('invalid');
    if (outcome.status === 'invalid') {
      expect(outcome.problems[0]).toEqual({
        path: '/runs/0/timestamp',
        message: '/runs/0/timestamp must be a whole number. (in a record of layout version 0)'
      });
    }
  });

  it('should recognise a newer layout and say it is read-only', () => {
    const outcome = migrateRecord({ version: 4, analyses: [], shelves: {} });
    expect(outcome.status).toBe('newer');
    if (outcome.status === 'newer') {
      expect(outcome.version).toBe(4);
      expect(outcome.notice).toContain('layout version 4, newer than the version 2 this Polyadic reads');
      expect(outcome.notice).toContain('read-only');
    }
  });

  it.each([
    [null, ''],
    [[1, 2], ''],
    ['polyadic', ''],
    [{ analyses: [] }, '/version'],
    [{ version: 1.5, analyses: [] }, '/version'],
    [{ version: -1, analyses: [] }, '/version']
  ])('should refuse %j, naming %j', (stored, pointer) => {
    const outcome = migrateRecord(stored);
    expect(outcome.status).toBe('invalid');
    if (outcome.status === 'invalid') {
      expect(outcome.problems[0].path).toBe(pointer);
    }
  });

  it('should chain steps up to the current version and refuse a version no step starts from', () => {
    const step = (from: number): IMigration => ({
      from,
      to: from + 1,
      validate: value => ({ ok: true, value }),
      migrate: value => ({ ...(value as object), version: from + 1, [`step${from}`]: true })
    });
    expect(migrateRecord({ version: 0 }, [step(1), step(0), step(2)], 3)).toEqual({
      status: 'current',
      document: { version: 3, step0: true, step1: true, step2: true },
      fromVersion: 0
    });
    expect(migrateRecord({ version: 0 }, [step(1)], 2)).toEqual({
      status: 'invalid',
      problems: [{ path: '/version', message: '/version is 0, a layout this Polyadic cannot read (no migration from it).' }]
    });
    expect(MIGRATIONS.map(m => [m.from, m.to])).toEqual([
      [0, 1],
      [1, 2]
    ]);
  });

  it('should run each step on a copy, after checking the old layout', () => {
    const seen: unknown[] = [];
    const step: IMigration = {
      from: 0,
      to: 1,
      validate: value => ({ ok: true, value }),
      migrate: value => {
        seen.push(value);
        (value as { touched?: boolean }).touched = true;
        return { version: 1, analyses: [] };
      }
    };
    const stored = { version: 0, runs: [] };
    const outcome = migrateRecord(stored, [step], 1);
    expect(outcome).toEqual({ status: 'current', document: { version: 1, analyses: [] }, fromVersion: 0 });
    expect(seen).toEqual([{ version: 0, runs: [], touched: true }]);
    expect(stored).toEqual({ version: 0, runs: [] });
  });
});
