/**
 * The one count formatter and the one pluralising helper (src/engine/text.ts), and the messages
 * that used to say "1 bins" or print a count without grouped digits.
 */
import { analyze } from '../../src/engine/analyze';
import { binColumn } from '../../src/engine/binning';
import { checkMultipletCount } from '../../src/engine/multiplets';
import { formatCount, formatDataValue, formatValue, plural, wordFor } from '../../src/engine/text';
import { expectPolyadic, numericColumn } from './helpers';

describe('text', () => {
  describe('#formatCount', () => {
    it('should group digits in threes with commas, for numbers and bigints', () => {
      // 2^40 − 1, the multiplets of 40 columns
      expect(formatCount(1099511627775)).toBe('1,099,511,627,775');
      expect(formatCount(1099511627775n)).toBe('1,099,511,627,775');
      expect(formatCount(999)).toBe('999');
      expect(formatCount(0)).toBe('0');
      expect(formatCount(-12345)).toBe('-12,345');
      expect(formatCount(Number.POSITIVE_INFINITY)).toBe('Infinity');
    });
  });

  describe('#formatValue', () => {
    it('should give information values 4 significant digits, a true minus and an exponent far from 1', () => {
      expect(formatValue(-0.78361)).toBe('\u22120.7836');
      expect(formatValue(1.5)).toBe('1.500');
      expect(formatValue(0.000123456)).toBe('1.235e-4');
      expect(formatValue(-0)).toBe('0');
      expect(formatValue(3e-14)).toBe('0');
      expect(formatValue(Number.NaN)).toBe('NaN');
    });
  });

  describe('#formatDataValue', () => {
    it('should keep whole numbers whole and give others 4 significant digits', () => {
      expect(formatDataValue(10000)).toBe('10000');
      expect(formatDataValue(22.53819)).toBe('22.54');
      expect(formatDataValue(-1.25)).toBe('-1.25');
      expect(formatDataValue(0.000123456)).toBe('0.0001235');
    });
  });

  describe('#plural', () => {
    it('should make the noun agree with the count', () => {
      expect(plural(1, 'bin')).toBe('1 bin');
      expect(plural(0, 'bin')).toBe('0 bins');
      expect(plural(2, 'bin')).toBe('2 bins');
      expect(plural(1n, 'multiplet')).toBe('1 multiplet');
      expect(plural(65535n, 'multiplet')).toBe('65,535 multiplets');
      expect(plural(1, 'category', 'categories')).toBe('1 category');
      expect(plural(3, 'category', 'categories')).toBe('3 categories');
      expect(wordFor(1, 'has', 'have')).toBe('has');
      expect(wordFor(2, 'has', 'have')).toBe('have');
    });
  });

  describe('messages', () => {
    it('should say 1 bin, 1 row, 1 selected column, and group large counts', () => {
      const flat = binColumn(numericColumn('flat', [3, 3, 3, 3, 3, 3, 3, 3, 3, 3, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14]), 'quantile:4');
      // 11 threes then 4 … 14 (n = 22): quartiles at 21·q = 0, 5.25, 10.5, 15.75, 21 → 3, 3, 3.5, 8.75, 14
      expect(flat.warnings.join(' ')).toContain("'flat': quantile:4 gave 3 bins instead of 4");
      const dropped = analyze([numericColumn('a', [1, Number.NaN, 3]), numericColumn('b', [1, 2, 3])], { bins: 'categorical' });
      expect(dropped.warnings).toContain(
        "1 of 3 rows has a missing value in a selected column and was left out (missing-value policy 'drop'); 2 rows remain."
      );
      const one = analyze([numericColumn('a', [1, 2])], { maxOrder: 3 });
      expect(one.warnings).toContain('The maximum order 3 is above the 1 selected column; order 1 is the largest computed.');
      expectPolyadic(() => checkMultipletCount(40, 40), 'limit', /^40 columns up to order 40 make 1,099,511,627,775 multiplets, above the limit of 16,777,216;/);
    });
  });
});
