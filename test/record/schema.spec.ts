/**
 * The record schema: the module exports the one file (src/record/record.schema.json), the schema is a valid draft 2020-12 schema
 * written to our conventions, valid fixtures pass and each invalid fixture fails with a message
 * naming the JSON path of its one defect.
 */
import * as fs from 'fs';
import * as path from 'path';

import Ajv2020 from 'ajv/dist/2020';

import { RECORD_ID_PATTERN, RECORD_SCHEMA, RECORD_SCHEMA_ID } from '../../src/record/schema';
import { completeAnalysis, validateAnalysis, validateRecord } from '../../src/record/validate';
import type { IRecordDocument } from '../../src/record/types';
import { clone } from './helpers';

const ROOT = path.resolve(__dirname, '..', '..');
const FIXTURES = path.join(__dirname, 'fixtures');
const schemaFile = JSON.parse(fs.readFileSync(path.join(ROOT, 'src', 'record', 'record.schema.json'), 'utf8'));
const valid = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'valid-record.json'), 'utf8')) as IRecordDocument;

function readFixture(name: string): unknown {
  return JSON.parse(fs.readFileSync(path.join(FIXTURES, 'invalid', `${name}.json`), 'utf8'));
}

/** Every subschema of a schema, with its JSON Pointer. */
function subschemas(schema: unknown, at = ''): { at: string; node: Record<string, unknown> }[] {
  if (typeof schema !== 'object' || schema === null) {
    return [];
  }
  const node = schema as Record<string, unknown>;
  const out = [{ at, node }];
  for (const key of ['properties', '$defs']) {
    const children = node[key] as Record<string, unknown> | undefined;
    for (const [name, child] of Object.entries(children ?? {})) {
      out.push(...subschemas(child, `${at}/${key}/${name}`));
    }
  }
  if (node.items) {
    out.push(...subschemas(node.items, `${at}/items`));
  }
  return out;
}

describe('record schema', () => {
  it('should be exported by the module as the file src/record/record.schema.json, its id and id pattern read from it', () => {
    expect(RECORD_SCHEMA).toEqual(schemaFile);
    expect(RECORD_SCHEMA_ID).toBe('urn:jupyterlab-polyadic:record:2');
    expect(RECORD_ID_PATTERN).toBe('^pd-[0-9a-z]{8,32}$');
    expect(new RegExp(RECORD_ID_PATTERN).test('pd-0123abcd')).toBe(true);
  });

  it('should be a valid draft 2020-12 schema that compiles in strict mode', () => {
    const ajv = new Ajv2020({ strict: true });
    ajv.addFormat('date-time', /^/);
    expect(ajv.validateSchema(schemaFile)).toBe(true);
    expect(() => ajv.compile(schemaFile)).not.toThrow();
    expect(schemaFile.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
  });

  it('should describe every property and close every object', () => {
    const nodes = subschemas(schemaFile);
    const undescribed: string[] = [];
    const open: string[] = [];
    for (const { at, node } of nodes) {
      if (/\/properties\/[^/]+$/.test(at) && typeof node.description !== 'string') {
        undescribed.push(at);
      }
      if (node.type === 'object' && node.additionalProperties !== false) {
        open.push(at);
      }
    }
    expect(nodes.length).toBeGreaterThan(60);
    expect(undescribed).toEqual([]);
    expect(open).toEqual([]);
  });

  describe('#validateRecord', () => {
    it('should accept the valid fixture and an empty record', () => {
      expect(validateRecord(valid)).toEqual({ ok: true, value: valid });
      expect(validateRecord({ version: 2, analyses: [] }).ok).toBe(true);
    });

    it('should not change the record it checks', () => {
      const copy = clone(valid);
      delete (copy.analyses[1].statistics as unknown as Record<string, unknown>).alpha;
      const before = JSON.stringify(copy);
      expect(validateRecord(copy).ok).toBe(false);
      expect(JSON.stringify(copy)).toBe(before);
    });

    // each invalid fixture is the valid one with one defect; the first problem must name its path
    const cases: [string, string, string][] = [
      ['bad-estimator', '/analyses/0/estimator', '/analyses/0/estimator must be one of plugin, miller-madow, chao-shen, shrinkage, gaussian-copula.'],
      ['id-with-quote', '/analyses/1/id', '/analyses/1/id must be a record id: pd- followed by 8 to 32 lower-case letters or digits.'],
      ['missing-label', '/analyses/0/label', '/analyses/0/label is missing (a required field of /analyses/0).'],
      ['unknown-field', '/analyses/0/colour~1shade', '/analyses/0/colour~1shade is not a field of a Polyadic record; remove it.'],
      [
        'uppercase-digest',
        '/analyses/0/source/fingerprint/sha256',
        '/analyses/0/source/fingerprint/sha256 must be a SHA-256 digest of 64 lower-case hexadecimal digits.'
      ],
      ['bad-created', '/analyses/0/created', '/analyses/0/created must be a date and time such as 2024-05-01T12:00:00Z.'],
      ['version-as-text', '/version', '/version must be 2.'],
      ['negative-surrogates', '/analyses/1/statistics/surrogates', '/analyses/1/statistics/surrogates must be >= 0.'],
      ['duplicate-id', '/analyses/1/id', "/analyses/1/id repeats the id 'pd-0fixture01' of /analyses/0; ids must be unique."],
      [
        'binning-out-of-order',
        '/analyses/0/binning/0/name',
        "/analyses/0/binning/0/name is 'air_temp_c' where column 1 of the selection is 'valve_command'."
      ],
      [
        'summary-column-not-selected',
        '/analyses/1/summary/synergy/0/columns',
        "/analyses/1/summary/synergy/0/columns names 'soil_moisture_bed1_pct', which is not a selected column."
      ],
      ['label-two-lines', '/analyses/0/label', '/analyses/0/label must be one line without control characters.']
    ];

    it('should have a case for every invalid fixture', () => {
      const files = fs.readdirSync(path.join(FIXTURES, 'invalid')).map(file => file.replace(/\.json$/, ''));
      expect(files.sort()).toEqual(cases.map(c => c[0]).sort());
    });

    it.each(cases)('should refuse %s, naming %s', (name, pointer, message) => {
      const outcome = validateRecord(readFixture(name));
      expect(outcome.ok).toBe(false);
      if (!outcome.ok) {
        expect(outcome.problems[0]).toEqual({ path: pointer, message });
      }
    });

    it('should cap the number of problems of a badly broken record', () => {
      const broken = { version: 2, analyses: Array.from({ length: 200 }, () => ({ id: 'x' })) };
      const outcome = validateRecord(broken);
      expect(outcome.ok).toBe(false);
      if (!outcome.ok) {
        expect(outcome.problems.length).toBe(50);
      }
    });
  });

  describe('#validateAnalysis', () => {
    it('should prefix problems with the path the analysis will have', () => {
      const analysis = clone(valid.analyses[0]) as unknown as Record<string, unknown>;
      analysis.units = 'hartleys';
      const outcome = validateAnalysis(analysis, '/analyses/7');
      expect(outcome.ok).toBe(false);
      if (!outcome.ok) {
        expect(outcome.problems).toEqual([{ path: '/analyses/7/units', message: '/analyses/7/units must be one of bits, nats.' }]);
      }
    });
  });

  describe('#completeAnalysis', () => {
    it('should refuse statistics settings with one left out, since a record states every setting the engine ran with', () => {
      const analysis = clone(valid.analyses[1]) as unknown as Record<string, unknown>;
      analysis.statistics = { surrogates: 999 };
      const outcome = completeAnalysis(analysis);
      expect(outcome.ok).toBe(false);
      if (!outcome.ok) {
        expect(outcome.problems[0].path).toBe('/statistics/seed');
        expect(outcome.problems[0].message).toContain('/statistics/seed');
      }
    });

    it('should accept an analysis without statistics, and evidence values that are null', () => {
      const analysis = clone(valid.analyses[1]) as unknown as Record<string, any>;
      delete analysis.statistics;
      analysis.summary.synergy[0].ci_low = null;
      expect(completeAnalysis(analysis).ok).toBe(true);
      analysis.summary.synergy[0].ci_low = 'wide';
      const outcome = completeAnalysis(analysis);
      expect(outcome.ok).toBe(false);
    });
  });
});
