/**
 * Table readers (src/engine/table.ts): Arrow vectors, text cells and JS values to column views.
 * The Arrow side is checked against the values the vectors were built from and against
 * apache-arrow's own `get()`/`isValid()`, which honour validity bitmaps.
 */
import * as arrow from 'apache-arrow';
import fc from 'fast-check';

import { PolyadicError } from '../../src/engine/errors';
import {
  columnFromTextCells,
  columnFromValues,
  columnsFromArrow,
  columnsFromRecords,
  parseNumberCell,
  sameColumnData
} from '../../src/engine/table';
import type { ColumnView, ICategoricalColumn, INumericColumn } from '../../src/engine/types';

function numeric(column: ColumnView): INumericColumn {
  if (column.kind !== 'numeric') {
    throw new Error(`expected a numeric column, got ${column.kind}`);
  }
  return column;
}

function categorical(column: ColumnView): ICategoricalColumn {
  if (column.kind !== 'categorical') {
    throw new Error(`expected a categorical column, got ${column.kind}`);
  }
  return column;
}

/** The labels of a categorical column, null where missing. */
function labels(column: ICategoricalColumn): (string | null)[] {
  return Array.from(column.codes, (code, i) => (column.missing?.[i] || code < 0 ? null : column.categories[code]));
}

/** Whether a function throws a PolyadicError of a kind whose message matches. */
function expectPolyadic(run: () => unknown, kind: string, pattern: RegExp): void {
  let caught: unknown;
  try {
    run();
  } catch (error) {
    caught = error;
  }
  expect(caught).toBeInstanceOf(PolyadicError);
  expect((caught as PolyadicError).kind).toBe(kind);
  expect((caught as PolyadicError).message).toMatch(pattern);
}

describe('columnsFromArrow', () => {
  describe('#integers and floats', () => {
    const widths: [arrow.DataType, string, (n: number) => unknown][] = [
      [new arrow.Int8(), 'int8', n => n],
      [new arrow.Int16(), 'int16', n => n],
      [new arrow.Int32(), 'int32', n => n],
      [new arrow.Int64(), 'int64', n => BigInt(n)],
      [new arrow.Uint8(), 'uint8', n => n],
      [new arrow.Uint16(), 'uint16', n => n],
      [new arrow.Uint32(), 'uint32', n => n],
      [new arrow.Uint64(), 'uint64', n => BigInt(n)],
      [new arrow.Float32(), 'float32', n => n + 0.5],
      [new arrow.Float64(), 'float64', n => n + 0.25]
    ];
    it.each(widths)('should read %s values with their dtype and honour nulls', (type, dtype, make) => {
      const source = [make(1), null, make(3), make(4), null, make(6), make(7), make(8), make(9)];
      const vector = arrow.vectorFromArray(source, type);
      const [column] = columnsFromArrow(new arrow.Table({ x: vector }));
      const view = numeric(column);
      expect(view.dtype).toBe(dtype);
      expect(view.values.length).toBe(source.length);
      expect(Array.from(view.missing!)).toEqual(source.map(v => (v === null ? 1 : 0)));
      source.forEach((value, i) => {
        if (value !== null) {
          expect(view.values[i]).toEqual(value);
        }
      });
    });

    it('should give Int64 as a BigInt64Array', () => {
      const vector = arrow.vectorFromArray([1n, 2n, -3n], new arrow.Int64());
      const [column] = columnsFromArrow(new arrow.Table({ big: vector }));
      expect(numeric(column).values).toBeInstanceOf(BigInt64Array);
      expect(Array.from(numeric(column).values as BigInt64Array)).toEqual([1n, 2n, -3n]);
    });

    it('should mark nulls that toArray() hides', () => {
      const vector = arrow.vectorFromArray([5, null, 7], new arrow.Int32());
      // apache-arrow's toArray() returns the value buffer, which holds a 0 under the null
      expect(Array.from(vector.toArray() as Int32Array)).toEqual([5, 0, 7]);
      const view = numeric(columnsFromArrow(new arrow.Table({ x: vector }))[0]);
      expect(Array.from(view.missing!)).toEqual([0, 1, 0]);
    });

    it('should leave missing null when no value is null', () => {
      const view = numeric(columnsFromArrow(arrow.tableFromArrays({ x: new Float64Array([1, 2, 3]) }))[0]);
      expect(view.missing).toBeNull();
    });

    it('should share the memory of a single-chunk column', () => {
      const table = arrow.tableFromArrays({ x: new Float64Array([1, 2, 3, 4]) });
      const chunk = table.getChild('x')!.data[0];
      const view = numeric(columnsFromArrow(table)[0]);
      expect(view.values.buffer).toBe((chunk.values as Float64Array).buffer);
      expect(view.values.byteOffset).toBe((chunk.values as Float64Array).byteOffset);
    });

    it('should copy several chunks once, in order, with their validity', () => {
      const first = arrow.vectorFromArray([1, null, 3], new arrow.Int16());
      const second = arrow.vectorFromArray([null, 5], new arrow.Int16());
      const third = arrow.vectorFromArray([6, 7, 8], new arrow.Int16());
      const vector = first.concat(second, third);
      expect(vector.data.length).toBe(3);
      const view = numeric(columnsFromArrow(new arrow.Table({ x: vector }))[0]);
      expect(view.values).toBeInstanceOf(Int16Array);
      expect(Array.from(view.values as Int16Array).filter((_, i) => !view.missing![i])).toEqual([1, 3, 5, 6, 7, 8]);
      expect(Array.from(view.missing!)).toEqual([0, 1, 0, 1, 0, 0, 0, 0]);
    });

    it('should honour the bit offset of a sliced vector', () => {
      fc.assert(
        fc.property(
          fc.array(fc.option(fc.integer({ min: -1000, max: 1000 }), { nil: null }), { minLength: 1, maxLength: 40 }),
          fc.nat(),
          fc.nat(),
          (source, a, b) => {
            const start = a % source.length;
            const end = start + (b % (source.length - start + 1));
            const sliced = arrow.vectorFromArray(source, new arrow.Int32()).slice(start, end);
            const view = numeric(columnsFromArrow(new arrow.Table({ x: sliced }))[0]);
            expect(view.values.length).toBe(end - start);
            for (let i = 0; i < end - start; i++) {
              // apache-arrow's get() and isValid() are the reference for each row
              const missing = view.missing ? view.missing[i] === 1 : false;
              expect(missing).toBe(!sliced.isValid(i));
              if (!missing) {
                expect(view.values[i]).toBe(sliced.get(i));
              }
            }
          }
        )
      );
    });

    it('should widen float16 to float64', () => {
      const vector = arrow.vectorFromArray([0.5, null, -2, 65504], new arrow.Float16());
      const view = numeric(columnsFromArrow(new arrow.Table({ h: vector }))[0]);
      expect(view.dtype).toBe('float16');
      expect(view.values).toBeInstanceOf(Float64Array);
      expect(view.values[0]).toBe(0.5);
      expect(view.values[2]).toBe(-2);
      // 65504 is the largest finite half-precision value (IEEE 754-2008 binary16)
      expect(view.values[3]).toBe(65504);
      expect(Array.from(view.missing!)).toEqual([0, 1, 0, 0]);
    });
  });

  describe('#booleans', () => {
    it('should read booleans as categorical false/true with nulls missing', () => {
      fc.assert(
        fc.property(fc.array(fc.option(fc.boolean(), { nil: null }), { maxLength: 50 }), fc.nat(), (source, cut) => {
          const start = source.length === 0 ? 0 : cut % source.length;
          const vector = arrow.vectorFromArray(source, new arrow.Bool()).slice(start);
          const view = categorical(columnsFromArrow(new arrow.Table({ flag: vector }))[0]);
          expect(view.dtype).toBe('bool');
          expect(view.categories).toEqual(['false', 'true']);
          expect(labels(view)).toEqual(source.slice(start).map(v => (v === null ? null : String(v))));
        })
      );
    });
  });

  describe('#strings and dictionaries', () => {
    it('should build sorted categories from plain strings', () => {
      const vector = arrow.vectorFromArray(['pear', null, 'apple', 'pear', 'fig'], new arrow.Utf8());
      const view = categorical(columnsFromArrow(new arrow.Table({ fruit: vector }))[0]);
      expect(view.dtype).toBe('string');
      expect(view.categories).toEqual(['apple', 'fig', 'pear']);
      expect(labels(view)).toEqual(['pear', null, 'apple', 'pear', 'fig']);
      expect(view.codes[1]).toBe(-1);
    });

    it('should read large strings', () => {
      const vector = arrow.vectorFromArray(['b', 'a', null], new arrow.LargeUtf8());
      const view = categorical(columnsFromArrow(new arrow.Table({ s: vector }))[0]);
      expect(view.dtype).toBe('large_string');
      expect(labels(view)).toEqual(['b', 'a', null]);
    });

    it('should keep dictionary codes and merge different dictionaries across chunks', () => {
      const first = arrow.vectorFromArray(['wet', 'dry', null, 'wet']);
      const second = arrow.vectorFromArray(['soaked', 'dry']);
      expect(arrow.DataType.isDictionary(first.type)).toBe(true);
      const vector = first.concat(second);
      const view = categorical(columnsFromArrow(new arrow.Table({ soil: vector }))[0]);
      expect(view.dtype).toMatch(/^dictionary<values=string/);
      expect(labels(view)).toEqual(['wet', 'dry', null, 'wet', 'soaked', 'dry']);
      expect(new Set(view.categories).size).toBe(view.categories.length);
    });
  });

  describe('#dates and durations', () => {
    it('should keep timestamps, dates and durations numeric in their unit', () => {
      const table = new arrow.Table({
        ts: arrow.vectorFromArray([new Date(0), new Date(1500), null], new arrow.TimestampMillisecond()),
        day: arrow.vectorFromArray([new Date(86400000), null, new Date(0)], new arrow.DateDay()),
        dur: arrow.vectorFromArray([1n, 2n, null], new arrow.DurationNanosecond())
      });
      const [ts, day, dur] = columnsFromArrow(table).map(numeric);
      expect(ts.dtype).toBe('timestamp[ms]');
      expect(Number(ts.values[1])).toBe(1500);
      expect(Array.from(ts.missing!)).toEqual([0, 0, 1]);
      expect(day.dtype).toBe('date32[day]');
      expect(day.values[0]).toBe(1);
      expect(Array.from(day.missing!)).toEqual([0, 1, 0]);
      expect(dur.dtype).toBe('duration[ns]');
      expect(dur.values[1]).toBe(2n);
    });
  });

  describe('#errors', () => {
    it('should refuse an unsupported type naming the column and the type', () => {
      const list = arrow.vectorFromArray([[1], [2, 3]], new arrow.List(new arrow.Field('item', new arrow.Int32())));
      const table = new arrow.Table({ ok: arrow.vectorFromArray([1, 2], new arrow.Int32()), nested: list });
      expectPolyadic(() => columnsFromArrow(table), 'input', /'nested'.*list/i);
    });

    it('should refuse an unknown column and list the available ones', () => {
      const table = arrow.tableFromArrays({ a: new Float64Array(2), b: new Float64Array(2) });
      expectPolyadic(() => columnsFromArrow(table, ['a', 'c']), 'usage', /'c'.*'a', 'b'/);
    });

    it('should return the requested columns in the requested order', () => {
      const table = arrow.tableFromArrays({ a: new Float64Array([1]), b: new Int32Array([2]) });
      expect(columnsFromArrow(table, ['b', 'a']).map(c => c.name)).toEqual(['b', 'a']);
    });
  });
});

describe('parseNumberCell', () => {
  it('should read back every double written by String()', () => {
    // String(x) is the shortest round-trip form (ECMA-262 Number::toString)
    fc.assert(
      fc.property(fc.double({ noNaN: true }), x => {
        expect(Object.is(parseNumberCell(String(x)), x) || (x === 0 && parseNumberCell(String(x)) === 0)).toBe(true);
      })
    );
  });

  it.each([
    ['1', 1],
    [' 2.5 ', 2.5],
    ['-.5', -0.5],
    ['+3.', 3],
    ['1e3', 1000],
    ['1E-2', 0.01],
    ['inf', Infinity],
    ['-Infinity', -Infinity],
    ['+INF', Infinity]
  ])('should parse %j as %p', (text, value) => {
    expect(parseNumberCell(text)).toBe(value);
  });

  it.each(['nan', 'NaN', '-nan'])('should parse %j as NaN', text => {
    expect(parseNumberCell(text)).toBeNaN();
  });

  it.each(['', 'abc', '0x10', '1,000', '1_000', '1e', '.', '--1', 'infinite', '12abc', 'Na'])(
    'should refuse %j',
    text => {
      expect(parseNumberCell(text)).toBeUndefined();
    }
  );
});

describe('columnFromTextCells', () => {
  it('should make a numeric column when every non-empty cell is a number', () => {
    const view = numeric(columnFromTextCells('t', ['1.5', '', ' 2 ', 'inf', 'nan']));
    expect(view.dtype).toBe('float64');
    expect(Array.from(view.values as Float64Array).slice(0, 4)).toEqual([1.5, NaN, 2, Infinity]);
    expect(view.values[4]).toBeNaN();
    expect(Array.from(view.missing!)).toEqual([0, 1, 0, 0, 0]);
  });

  it('should make a categorical column when one cell is not a number', () => {
    const view = categorical(columnFromTextCells('t', ['1', '2', 'two', '', '1']));
    expect(view.categories).toEqual(['1', '2', 'two']);
    expect(labels(view)).toEqual(['1', '2', 'two', null, '1']);
  });

  it('should read True/False in any case as booleans, as pandas.read_csv does, with empty cells missing', () => {
    // pandas.DataFrame.to_csv writes a bool column as True/False; pandas.read_csv reads True,
    // TRUE, true (any case) back as booleans, but not ' True' with a space, nor T or yes.
    const view = categorical(columnFromTextCells('valve', ['True', 'False', '', 'true', 'FALSE', 'TrUe']));
    expect(view.dtype).toBe('bool');
    expect(view.categories).toEqual(['false', 'true']);
    expect(Array.from(view.codes)).toEqual([1, 0, -1, 1, 0, 1]);
    expect(Array.from(view.missing!)).toEqual([0, 0, 1, 0, 0, 0]);
    // the same column as Arrow's bool reads it
    const arrowView = columnsFromArrow(arrow.tableFromArrays({ valve: [true, false] }))[0];
    expect(columnFromTextCells('valve', ['True', 'False'])).toEqual(arrowView);
    for (const cells of [[' True', 'False'], ['True', 'T'], ['yes', 'no'], ['True', '1']]) {
      expect(categorical(columnFromTextCells('x', cells)).dtype).toBe('string');
    }
    // a column with no value at all stays float64 of NaN, as before
    expect(numeric(columnFromTextCells('x', ['', ''])).dtype).toBe('float64');
  });

  it('should give the same codes whatever the row order', () => {
    fc.assert(
      fc.property(fc.array(fc.constantFrom('a', 'b', 'c', 'x y', ''), { minLength: 1 }), cells => {
        const forward = categorical(columnFromTextCells('c', [...cells, 'zz']));
        const backward = categorical(columnFromTextCells('c', [...cells, 'zz'].reverse()));
        expect(forward.categories).toEqual(backward.categories);
        expect(labels(forward)).toEqual(labels(backward).reverse());
      })
    );
  });
});

describe('sameColumnData', () => {
  it('should compare rows, gaps and category texts, not the encoding', () => {
    const x = numeric(columnFromTextCells('x', ['1.5', '', 'nan', '2']));
    expect(sameColumnData(x, numeric(columnFromTextCells('x', ['1.5', '', 'nan', '2'])))).toBe(true);
    expect(sameColumnData(x, numeric(columnFromTextCells('x', ['1.5', '', 'nan', '2.5'])))).toBe(false);
    expect(sameColumnData(x, numeric(columnFromTextCells('y', ['1.5', '', 'nan', '2'])))).toBe(false);
    // the same rows in two dictionaries of another order
    const a: ICategoricalColumn = { kind: 'categorical', name: 's', dtype: 'string', codes: Int32Array.of(0, 1, -1), categories: ['p', 'q'], missing: null };
    const b: ICategoricalColumn = { ...a, codes: Int32Array.of(1, 0, -1), categories: ['q', 'p'] };
    expect(sameColumnData(a, b)).toBe(true);
    expect(sameColumnData(a, { ...b, codes: Int32Array.of(1, 0, 0) })).toBe(false);
  });
});

describe('columnFromValues', () => {
  it('should read numbers with null and undefined missing', () => {
    const view = numeric(columnFromValues('x', [1, null, 2.5, undefined]));
    expect(Array.from(view.missing!)).toEqual([0, 1, 0, 1]);
    expect(view.values[2]).toBe(2.5);
  });

  it('should read bigints as int64 and mixed number/bigint as float64', () => {
    expect(numeric(columnFromValues('x', [1n, null, 3n])).values).toBeInstanceOf(BigInt64Array);
    expect(numeric(columnFromValues('x', [1n, 2.5])).values).toBeInstanceOf(Float64Array);
  });

  it('should read booleans and strings as categorical', () => {
    expect(labels(categorical(columnFromValues('b', [true, false, null])))).toEqual(['true', 'false', null]);
    expect(labels(categorical(columnFromValues('s', ['q', null, 'p'])))).toEqual(['q', null, 'p']);
  });

  it('should read dates as epoch milliseconds', () => {
    const view = numeric(columnFromValues('d', [new Date(10), new Date(20)]));
    expect(Array.from(view.values as Float64Array)).toEqual([10, 20]);
  });

  it('should use a typed array as it is', () => {
    const values = new Int32Array([1, 2, 3]);
    const view = numeric(columnFromValues('x', values));
    expect(view.values).toBe(values);
    expect(view.dtype).toBe('int32');
  });

  it('should refuse mixed kinds naming the column and the row', () => {
    expectPolyadic(() => columnFromValues('m', [1, 2, 'three']), 'input', /'m'.*row 2/);
  });

  it('should refuse nested values naming the row', () => {
    expectPolyadic(() => columnFromValues('n', [1, [2]]), 'input', /'n'.*list at row 1/);
  });
});

describe('columnsFromRecords', () => {
  it('should read columns from records, absent keys missing', () => {
    const columns = columnsFromRecords([{ a: 1, b: 'x' }, { a: 2 }]);
    expect(columns.map(c => c.name)).toEqual(['a', 'b']);
    expect(labels(categorical(columns[1]))).toEqual(['x', null]);
  });
});
