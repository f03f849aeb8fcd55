/** Record ids: the strict pattern, new random ids, and the code of a analysis cell. */
import { isRecordId, newRecordId, NEW_ID_LENGTH, showCellSource } from '../../src/record/ids';

describe('record ids', () => {
  describe('#isRecordId', () => {
    it.each(['pd-0fixture01', 'pd-abcdefgh', `pd-${'z'.repeat(32)}`])('should accept %j', id => {
      expect(isRecordId(id)).toBe(true);
    });

    it.each([
      'pd-abc"); import os; os.system("rm -rf ~',
      "pd-abcdefgh'",
      'pd-abcdefgh\n',
      'pd-abcdefgh\nimport os',
      'pd-ABCDEFGH',
      'pd-abc',
      `pd-${'a'.repeat(33)}`,
      'xx-abcdefgh',
      'pd-abcdefgh ',
      'pd-abcdéfgh',
      ''
    ])('should refuse %j', id => {
      expect(isRecordId(id)).toBe(false);
    });

    it('should refuse values that are not strings', () => {
      expect(isRecordId(undefined)).toBe(false);
      expect(isRecordId(['pd-abcdefgh'])).toBe(false);
    });
  });

  describe('#newRecordId', () => {
    it('should make valid, distinct ids using every character', () => {
      const ids = Array.from({ length: 2000 }, () => newRecordId());
      expect(ids.every(isRecordId)).toBe(true);
      expect(ids.every(id => id.length === 3 + NEW_ID_LENGTH)).toBe(true);
      expect(new Set(ids).size).toBe(ids.length);
      const used = new Set(ids.join('').replace(/pd-/g, ''));
      expect(used.size).toBe(36);
    });
  });

  describe('#showCellSource', () => {
    it('should write the id quoted into a polyadic.show call', () => {
      expect(showCellSource('pd-0fixture01')).toBe('import polyadic\npolyadic.show("pd-0fixture01")');
    });

    it('should refuse anything that is not an id, so no metadata text reaches code', () => {
      expect(() => showCellSource('pd-x"); import os; os.system("ls')).toThrow('is not a record id');
      expect(() => showCellSource('pd-abcdefgh\n')).toThrow('no cell was inserted');
    });
  });
});
