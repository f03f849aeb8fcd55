/**
 * The record's validators generated at build time (scripts/build-validators.mjs) against the
 * schema file: the committed modules are what the schema gives now, and they judge records as
 * Ajv compiling the schema at run time does (same verdicts, same errors).
 */
import { execFileSync } from 'child_process';
import * as fs from 'fs';
import * as path from 'path';

import Ajv2020 from 'ajv/dist/2020';

import { FORMATS } from '../../src/record/formats';
import { analysis, record } from '../../src/record/record-validators.generated';
import { analysisWithDefaults } from '../../src/record/record-defaults.generated';
import { RECORD_SCHEMA, RECORD_SCHEMA_ID } from '../../src/record/schema';
import type { IRecordDocument } from '../../src/record/types';

const root = path.resolve(__dirname, '..', '..');
const fixtures = path.join(__dirname, 'fixtures');
const read = (file: string): unknown => JSON.parse(fs.readFileSync(file, 'utf8'));
const validRecord = (): IRecordDocument => read(path.join(fixtures, 'valid-record.json')) as IRecordDocument;

function compiled(useDefaults: boolean) {
  const ajv = new Ajv2020({ allErrors: true, strict: true, useDefaults });
  ajv.addFormat('date-time', FORMATS['date-time']);
  ajv.addSchema(RECORD_SCHEMA);
  return {
    record: ajv.getSchema(RECORD_SCHEMA_ID)!,
    analysis: ajv.getSchema(`${RECORD_SCHEMA_ID}#/$defs/analysis`)!
  };
}

describe('generated record validators', () => {
  it('should be what scripts/build-validators.mjs writes from the schema now', () => {
    // exits non-zero (and execFileSync throws) when a committed module is stale
    expect(() =>
      execFileSync(process.execPath, [path.join(root, 'scripts', 'build-validators.mjs'), '--check'], { stdio: 'pipe' })
    ).not.toThrow();
  });

  it('should give the verdicts and errors of the schema compiled at run time', () => {
    const runtime = compiled(false);
    const good = validRecord();
    const invalid = fs.readdirSync(path.join(fixtures, 'invalid')).map(name => read(path.join(fixtures, 'invalid', name)));
    expect(invalid.length).toBeGreaterThan(5);
    const wrongVersion = { ...good, version: 3 };
    const broken: unknown[] = [
      ...invalid,
      good,
      wrongVersion,
      { ...good, analyses: [{ ...good.analyses[0], id: 'nope' }] },
      { ...good, analyses: [{ ...good.analyses[0], created: '2024-13-45T99:00:00Z' }] },
      { ...good, analyses: [{ ...good.analyses[0], extra: 1, columns: 'a' }] },
      { analyses: [] },
      null
    ];
    let refused = 0;
    for (const value of broken) {
      const mine = record(value);
      refused += mine ? 0 : 1;
      const theirs = runtime.record(value);
      expect(mine).toBe(theirs);
      expect(record.errors ?? null).toEqual(runtime.record.errors ?? null);
    }
    expect(record(good)).toBe(true);
    expect(record(wrongVersion)).toBe(false);
    // most invalid fixtures break the schema itself (the rest break rules beyond it)
    expect(refused).toBeGreaterThan(invalid.length / 2);
    expect(analysis(good.analyses[0])).toBe(runtime.analysis(good.analyses[0]));
  });

  it('should fill the schema defaults as the compiled schema does', () => {
    const runtime = compiled(true);
    const bare = (): Record<string, unknown> => {
      const one = JSON.parse(JSON.stringify(validRecord().analyses[0])) as Record<string, unknown>;
      delete one.statistics;
      return one;
    };
    const mine = bare();
    const theirs = bare();
    analysisWithDefaults(mine);
    runtime.analysis(theirs);
    expect(mine).toEqual(theirs);
  });
});
