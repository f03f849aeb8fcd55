/**
 * The metadata store: reads never write, only the `polyadic` key is ever written, an invalid
 * record is never rewritten, a newer one is read-only, an older one is migrated on read and
 * written back only when the person changes the record.
 */
import * as fs from 'fs';
import * as path from 'path';

import {
  addAnalysis,
  deleteAnalysis,
  findAnalysis,
  readRecords,
  renameAnalysis,
  type IMetadataAccess
} from '../../src/record/store';
import type { IAnalysisRecord, IRecordDocument } from '../../src/record/types';
import { clone } from './helpers';

const FIXTURES = path.join(__dirname, 'fixtures');
const valid = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'valid-record.json'), 'utf8')) as IRecordDocument;
const v0 = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'v0-record.json'), 'utf8'));
const [first, second] = valid.analyses;

/** Notebook metadata as a JupyterLab model keeps it, logging every write. */
class FakeMetadata implements IMetadataAccess {
  readonly values: Record<string, unknown>;
  readonly writes: string[] = [];

  constructor(values: Record<string, unknown>) {
    this.values = values;
  }

  get(key: string): unknown {
    return this.values[key];
  }

  set(key: string, value: unknown): void {
    this.writes.push(key);
    this.values[key] = value;
  }
}

/** Metadata with other extensions' keys beside an optional record. */
function notebookMetadata(record?: unknown): FakeMetadata {
  return new FakeMetadata({
    kernelspec: { name: 'python3', display_name: 'Python 3', language: 'python' },
    jupytext: { formats: 'ipynb,py:percent' },
    ...(record === undefined ? {} : { polyadic: record })
  });
}

function withId(analysis: IAnalysisRecord, id: string): IAnalysisRecord {
  return { ...clone(analysis), id };
}

describe('record store', () => {
  describe('#readRecords', () => {
    it('should read a notebook without a record as empty and present: false', () => {
      const metadata = notebookMetadata();
      const state = readRecords(metadata);
      expect(state).toMatchObject({ status: 'ok', present: false, analyses: [], readOnly: false, notice: null });
      expect(metadata.writes).toEqual([]);
    });

    it('should list the analyses of a valid record, as copies', () => {
      const metadata = notebookMetadata(clone(valid));
      const state = readRecords(metadata);
      expect(state.status).toBe('ok');
      expect(state.analyses).toEqual(valid.analyses);
      state.analyses[0].label = 'changed by the caller';
      expect((metadata.values.polyadic as IRecordDocument).analyses[0].label).toBe(first.label);
      expect(findAnalysis(state, second.id)?.label).toBe(second.label);
      expect(metadata.writes).toEqual([]);
    });

    it('should report an invalid record with its path and leave it untouched', () => {
      const broken = clone(valid) as unknown as { analyses: Record<string, unknown>[] };
      broken.analyses[1].units = 'hartleys';
      const stored = clone(broken);
      const metadata = notebookMetadata(broken);
      const state = readRecords(metadata);
      expect(state.status).toBe('invalid');
      expect(state.readOnly).toBe(true);
      expect(state.problems).toEqual([{ path: '/analyses/1/units', message: '/analyses/1/units must be one of bits, nats.' }]);
      expect(state.notice).toContain('/analyses/1/units must be one of bits, nats.');
      expect(state.notice).toContain('It is left untouched');
      expect(() => addAnalysis(metadata, withId(first, 'pd-newrun0001'))).toThrow('/analyses/1/units must be one of bits, nats.');
      expect(() => renameAnalysis(metadata, first.id, 'New name')).toThrow('is not valid');
      expect(() => deleteAnalysis(metadata, first.id)).toThrow('is not valid');
      expect(metadata.writes).toEqual([]);
      expect(metadata.values.polyadic).toEqual(stored);
    });

    it('should show the readable analyses of a newer record, read-only', () => {
      const newer = {
        version: 3,
        analyses: [clone(first), { ...clone(second), shelf: 'B' }],
        shelves: ['A', 'B']
      };
      const stored = clone(newer);
      const metadata = notebookMetadata(newer);
      const state = readRecords(metadata);
      expect(state.status).toBe('newer');
      expect(state.readOnly).toBe(true);
      expect(state.storedVersion).toBe(3);
      expect(state.analyses.map(a => a.id)).toEqual([first.id]);
      expect(state.notice).toContain('read-only');
      expect(() => addAnalysis(metadata, withId(first, 'pd-newrun0001'))).toThrow('read-only');
      expect(() => renameAnalysis(metadata, first.id, 'x')).toThrow('read-only');
      expect(() => deleteAnalysis(metadata, first.id)).toThrow('read-only');
      expect(metadata.writes).toEqual([]);
      expect(metadata.values.polyadic).toEqual(stored);
    });

    it('should migrate an older record on read without writing it', () => {
      const metadata = notebookMetadata(clone(v0));
      const state = readRecords(metadata);
      expect(state).toMatchObject({ status: 'ok', migrated: true, storedVersion: 0, readOnly: false });
      expect(state.analyses.map(a => [a.id, a.label])).toEqual([['pd-legacy0001', 'Humidity pair (pre-release)']]);
      expect(state.notice).toContain('rewritten only when you change it');
      expect(metadata.writes).toEqual([]);
      expect(metadata.values.polyadic).toEqual(v0);
    });
  });

  describe('#addAnalysis', () => {
    it('should create the record in a notebook without one and touch no other key', () => {
      const metadata = notebookMetadata();
      const others = { kernelspec: metadata.values.kernelspec, jupytext: metadata.values.jupytext };
      const snapshot = clone(others);
      const state = addAnalysis(metadata, clone(first));
      expect(metadata.writes).toEqual(['polyadic']);
      expect(metadata.values.polyadic).toEqual({ version: 2, analyses: [first] });
      expect(state.analyses.map(a => a.id)).toEqual([first.id]);
      // the other extensions' values are the same objects, unchanged
      expect(metadata.values.kernelspec).toBe(others.kernelspec);
      expect(metadata.values.jupytext).toBe(others.jupytext);
      expect({ kernelspec: metadata.values.kernelspec, jupytext: metadata.values.jupytext }).toEqual(snapshot);
      expect(Object.keys(metadata.values).sort()).toEqual(['jupytext', 'kernelspec', 'polyadic']);
    });

    it('should append to the existing analyses', () => {
      const metadata = notebookMetadata(clone(valid));
      addAnalysis(metadata, withId(first, 'pd-newrun0001'));
      const record = metadata.values.polyadic as IRecordDocument;
      expect(record.analyses.map(a => a.id)).toEqual([first.id, second.id, 'pd-newrun0001']);
    });

    it('should rewrite a migrated record in the current layout when a run is added', () => {
      const metadata = notebookMetadata(clone(v0));
      addAnalysis(metadata, withId(first, 'pd-newrun0001'));
      const record = metadata.values.polyadic as IRecordDocument;
      expect(record.version).toBe(2);
      expect(record.analyses.map(a => a.id)).toEqual(['pd-legacy0001', 'pd-newrun0001']);
      expect(readRecords(metadata)).toMatchObject({ status: 'ok', migrated: false, storedVersion: 2 });
    });

    it('should refuse an id that is already recorded, writing nothing', () => {
      const metadata = notebookMetadata(clone(valid));
      expect(() => addAnalysis(metadata, clone(second))).toThrow(`An analysis with id '${second.id}' is already recorded`);
      expect(metadata.writes).toEqual([]);
    });

    it('should refuse an analysis that does not fit the layout, naming the path it would have', () => {
      const metadata = notebookMetadata(clone(valid));
      const bad = withId(first, 'pd-newrun0001') as unknown as Record<string, unknown>;
      bad.max_order = 0;
      expect(() => addAnalysis(metadata, bad as unknown as IAnalysisRecord)).toThrow('/analyses/2/max_order must be >= 1.');
      expect(metadata.writes).toEqual([]);
    });

    it('should store a copy, not the caller\'s object', () => {
      const metadata = notebookMetadata();
      const analysis = clone(first);
      addAnalysis(metadata, analysis);
      analysis.label = 'changed after saving';
      expect((metadata.values.polyadic as IRecordDocument).analyses[0].label).toBe(first.label);
    });
  });

  describe('#renameAnalysis', () => {
    it('should rename, trimmed, and keep everything else', () => {
      const metadata = notebookMetadata(clone(valid));
      renameAnalysis(metadata, second.id, '  Leak alarm triplet  ');
      const record = metadata.values.polyadic as IRecordDocument;
      expect(record.analyses[1]).toEqual({ ...second, label: 'Leak alarm triplet' });
      expect(record.analyses[0]).toEqual(first);
      expect(metadata.writes).toEqual(['polyadic']);
    });

    it.each([
      ['   ', 'it is empty'],
      ['x'.repeat(201), 'it has 201 characters, more than 200'],
      ['two\nlines', 'it must be one line without control characters']
    ])('should refuse the name %j (%s)', (label, reason) => {
      const metadata = notebookMetadata(clone(valid));
      expect(() => renameAnalysis(metadata, first.id, label)).toThrow(`The name cannot be used: ${reason}.`);
      expect(metadata.writes).toEqual([]);
    });

    it('should refuse an id that is not recorded', () => {
      const metadata = notebookMetadata(clone(valid));
      expect(() => renameAnalysis(metadata, 'pd-notthere1', 'x')).toThrow("No analysis with id 'pd-notthere1'");
    });
  });

  describe('#deleteAnalysis', () => {
    it('should delete one analysis and keep an empty record when the last goes', () => {
      const metadata = notebookMetadata(clone(valid));
      deleteAnalysis(metadata, first.id);
      expect((metadata.values.polyadic as IRecordDocument).analyses.map(a => a.id)).toEqual([second.id]);
      deleteAnalysis(metadata, second.id);
      expect(metadata.values.polyadic).toEqual({ version: 2, analyses: [] });
      expect(metadata.writes).toEqual(['polyadic', 'polyadic']);
    });
  });
});
