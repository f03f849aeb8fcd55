/**
 * Table readers of the engine: turn an apache-arrow Table, text cells (CSV) or plain JS values
 * (decoded Parquet) into {@link ColumnView}s. Pure: no DOM, no Node API, so the same code runs
 * in the worker, the CLI and jest.
 *
 * Choices that a user can see:
 * - Booleans become categorical columns with the categories `['false', 'true']` (dtype `bool`):
 *   a flag is a category, and its two values are the possible cells even when one never occurs.
 * - Strings become categorical columns whose categories are the distinct non-missing values in
 *   code-unit order, so the codes do not depend on the row order.
 * - Dates, times, timestamps and durations stay numeric in their stored unit; the dtype names
 *   the unit (`timestamp[ns]`, `date32[day]`, `duration[ms]`, …) as Arrow's type names do.
 */

import * as arrow from 'apache-arrow';

import { PolyadicError } from './errors';
import type { ColumnView, ICategoricalColumn, INumericColumn, NumericArray } from './types';

/** Category names of a boolean column (false is code 0, true is code 1). */
export const BOOLEAN_CATEGORIES: readonly string[] = ['false', 'true'];

/** Number of rows of a column. */
export function columnLength(column: ColumnView): number {
  return column.kind === 'numeric' ? column.values.length : column.codes.length;
}

/**
 * Read the columns of an Arrow table (all, or `names` in that order) as column views.
 * Numeric columns of one chunk share the table's memory; several chunks are copied once.
 */
export function columnsFromArrow(table: arrow.Table, names?: string[]): ColumnView[] {
  const available = table.schema.fields.map(field => field.name);
  checkUniqueNames(available);
  const selected = names ?? available;
  return selected.map(name => {
    const index = available.indexOf(name);
    if (index < 0) {
      throw unknownColumn(name, available);
    }
    const vector = table.getChildAt(index);
    if (!vector) {
      throw new PolyadicError('internal', `Column '${name}' has no data in the Arrow table.`, {
        column: name
      });
    }
    return columnFromArrowVector(name, vector);
  });
}

/** Read one Arrow vector (any number of chunks) as a column view. */
export function columnFromArrowVector(name: string, vector: arrow.Vector): ColumnView {
  const type = vector.type as arrow.DataType;
  const chunks = vector.data as arrow.Data[];
  const dtype = arrowTypeName(type);
  switch (type.typeId) {
    case arrow.Type.Int:
    case arrow.Type.Float:
    case arrow.Type.Date:
    case arrow.Type.Time:
    case arrow.Type.Timestamp:
    case arrow.Type.Duration:
      if (arrow.DataType.isFloat(type) && type.precision === arrow.Precision.HALF) {
        return halfFloatColumn(name, dtype, chunks);
      }
      return numericFromChunks(name, dtype, chunks);
    case arrow.Type.Bool:
      return booleanFromChunks(name, chunks);
    case arrow.Type.Dictionary:
      return dictionaryFromChunks(name, dtype, chunks);
    case arrow.Type.Utf8:
    case arrow.Type.LargeUtf8:
    case arrow.Type.Utf8View:
      return stringsFromChunks(name, dtype, chunks);
    default:
      throw new PolyadicError(
        'input',
        `Column '${name}' has Arrow type ${dtype}, which Polyadic cannot read; ` +
          'convert it to a number, a string, a boolean or a category first.',
        { column: name, value: dtype }
      );
  }
}

/**
 * Parse one text cell as a number: decimal notation with an optional exponent, or
 * `inf`/`infinity`/`nan` in any case with an optional sign. Surrounding spaces are ignored.
 * Returns `undefined` for anything else (hexadecimal, thousands separators, words).
 */
export function parseNumberCell(text: string): number | undefined {
  const cell = text.trim();
  if (Private.DECIMAL.test(cell)) {
    return Number(cell);
  }
  const special = Private.SPECIAL.exec(cell);
  if (special) {
    if (special[2].toLowerCase() === 'nan') {
      return NaN;
    }
    return special[1] === '-' ? -Infinity : Infinity;
  }
  return undefined;
}

/** Whether a text cell is missing: empty once surrounding spaces are removed. */
export function isMissingCell(text: string | null | undefined): boolean {
  return text === null || text === undefined || text.trim() === '';
}

/**
 * Parse one text cell as a boolean, as `pandas.read_csv` does by default: `True` or `False` in
 * any case (`true`, `FALSE`, …), with no surrounding spaces. Returns `undefined` for anything else.
 */
export function parseBooleanCell(text: string): boolean | undefined {
  return Private.BOOLEAN.test(text) ? text.toLowerCase() === 'true' : undefined;
}

/**
 * Build a column from the text cells of one CSV column. A column whose every non-missing cell
 * is a number ({@link parseNumberCell}) is numeric float64; one whose every non-missing cell is
 * a boolean ({@link parseBooleanCell}: `pandas.DataFrame.to_csv` writes booleans as True/False)
 * is a boolean column, as Arrow and Parquet booleans are; any other is categorical with the
 * cells as written. Missing cells ({@link isMissingCell}) are marked missing in all three.
 */
export function columnFromTextCells(
  name: string,
  cells: ArrayLike<string | null | undefined>
): ColumnView {
  const boolean = Private.booleanFromTextCells(name, cells);
  if (boolean !== null) {
    return boolean;
  }
  const n = cells.length;
  const values = new Float64Array(n);
  let missing: Uint8Array | null = null;
  let numeric = true;
  for (let i = 0; i < n; i++) {
    const cell = cells[i];
    if (isMissingCell(cell)) {
      missing ??= new Uint8Array(n);
      missing[i] = 1;
      values[i] = NaN;
      continue;
    }
    const value = parseNumberCell(cell as string);
    if (value === undefined) {
      numeric = false;
      break;
    }
    values[i] = value;
  }
  if (numeric) {
    return { kind: 'numeric', name, dtype: 'float64', values, missing };
  }
  return categoricalFromStrings(name, 'string', n, i => {
    const cell = cells[i];
    return isMissingCell(cell) ? null : (cell as string);
  });
}

/**
 * Build a column from plain JS values (one per row), as a Parquet decoder or a record list
 * gives them: numbers and bigints make a numeric column, booleans a boolean one, strings a
 * categorical one, Date objects a numeric column of epoch milliseconds; `null` and `undefined`
 * are missing. Typed arrays are used as they are. Anything else is refused, naming the row.
 */
export function columnFromValues(name: string, values: ArrayLike<unknown>, dtype?: string): ColumnView {
  if (ArrayBuffer.isView(values) && !(values instanceof DataView)) {
    return {
      kind: 'numeric',
      name,
      dtype: dtype ?? Private.typedArrayDtype(values as NumericArray),
      values: values as NumericArray,
      missing: null
    };
  }
  const n = values.length;
  let kind: 'number' | 'bigint' | 'boolean' | 'string' | 'date' | undefined;
  for (let i = 0; i < n; i++) {
    const value = values[i];
    if (value === null || value === undefined) {
      continue;
    }
    const found = Private.valueKind(value);
    if (found === undefined) {
      throw unsupportedValue(name, i, value);
    }
    if (kind === undefined) {
      kind = found;
    } else if (kind !== found) {
      if ((kind === 'number' && found === 'bigint') || (kind === 'bigint' && found === 'number')) {
        kind = 'number';
      } else {
        throw new PolyadicError(
          'input',
          `Column '${name}' mixes ${kind} and ${found} values (first ${found} at row ${i}); ` +
            'a column must hold one kind of value.',
          { column: name, row: i }
        );
      }
    }
  }
  let missing: Uint8Array | null = null;
  const markMissing = (i: number): void => {
    missing ??= new Uint8Array(n);
    missing[i] = 1;
  };
  if (kind === 'boolean') {
    const codes = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      const value = values[i];
      if (value === null || value === undefined) {
        codes[i] = -1;
        markMissing(i);
      } else {
        codes[i] = value ? 1 : 0;
      }
    }
    return {
      kind: 'categorical',
      name,
      dtype: dtype ?? 'bool',
      codes,
      categories: [...BOOLEAN_CATEGORIES],
      missing
    };
  }
  if (kind === 'string') {
    return categoricalFromStrings(name, dtype ?? 'string', n, i => {
      const value = values[i];
      return value === null || value === undefined ? null : (value as string);
    });
  }
  if (kind === 'bigint') {
    const out = new BigInt64Array(n);
    for (let i = 0; i < n; i++) {
      const value = values[i];
      if (value === null || value === undefined) {
        markMissing(i);
      } else {
        out[i] = value as bigint;
      }
    }
    return { kind: 'numeric', name, dtype: dtype ?? 'int64', values: out, missing };
  }
  // numbers, dates, or a column with no value at all (all missing: float64 of NaN)
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const value = values[i];
    if (value === null || value === undefined) {
      out[i] = NaN;
      markMissing(i);
    } else if (value instanceof Date) {
      out[i] = value.getTime();
    } else {
      out[i] = Number(value);
    }
  }
  const fallback = kind === 'date' ? 'timestamp[ms]' : 'float64';
  return { kind: 'numeric', name, dtype: dtype ?? fallback, values: out, missing };
}

/**
 * Build columns from a list of records (one object per row), taking the names of the first
 * record unless `names` is given. A key absent from a record is a missing value.
 */
export function columnsFromRecords(
  records: ReadonlyArray<Record<string, unknown>>,
  names?: string[]
): ColumnView[] {
  const selected = names ?? (records.length > 0 ? Object.keys(records[0]) : []);
  checkUniqueNames(selected);
  return selected.map(name => {
    const values = records.map(record => record[name]);
    return columnFromValues(name, values);
  });
}

/**
 * Whether two views hold the same data: name, kind, type and length, the same missing rows,
 * and the same value in every other row (NaN equal to NaN; a categorical row by its category's
 * text, so two dictionaries in another order compare equal).
 */
export function sameColumnData(a: ColumnView, b: ColumnView): boolean {
  const n = columnLength(a);
  if (a.name !== b.name || a.kind !== b.kind || a.dtype !== b.dtype || n !== columnLength(b)) {
    return false;
  }
  const missingA = (i: number): boolean => (a.missing !== null && a.missing[i] === 1) || (a.kind === 'categorical' && a.codes[i] < 0);
  const missingB = (i: number): boolean => (b.missing !== null && b.missing[i] === 1) || (b.kind === 'categorical' && b.codes[i] < 0);
  for (let i = 0; i < n; i++) {
    const gapA = missingA(i);
    if (gapA !== missingB(i)) {
      return false;
    }
    if (gapA) {
      continue;
    }
    if (a.kind === 'numeric' && b.kind === 'numeric') {
      const x = a.values[i];
      const y = b.values[i];
      if (x !== y && !(Number.isNaN(x) && Number.isNaN(y))) {
        return false;
      }
    } else if (a.kind === 'categorical' && b.kind === 'categorical') {
      if (a.categories[a.codes[i]] !== b.categories[b.codes[i]]) {
        return false;
      }
    }
  }
  return true;
}

/** Refuse a list of column names with a duplicate, naming it and both positions (1-based). */
export function checkUniqueNames(names: readonly string[]): void {
  const seen = new Map<string, number>();
  names.forEach((name, index) => {
    const first = seen.get(name);
    if (first !== undefined) {
      throw new PolyadicError(
        'input',
        `Column name '${name}' appears twice (columns ${first + 1} and ${index + 1}); ` +
          'column names must be unique.',
        { column: name }
      );
    }
    seen.set(name, index);
  });
}

/** The error for a column name that is not in the data, listing the available ones. */
export function unknownColumn(name: string, available: readonly string[]): PolyadicError {
  return new PolyadicError(
    'usage',
    `Unknown column '${name}'; available columns: ${available.map(a => `'${a}'`).join(', ')}.`,
    { column: name, available: [...available] }
  );
}

/** Arrow's name for a type, in the spelling pyarrow prints (`int64`, `timestamp[ns, tz=UTC]`). */
export function arrowTypeName(type: arrow.DataType): string {
  const unitName = (unit: arrow.TimeUnit): string =>
    ({
      [arrow.TimeUnit.SECOND]: 's',
      [arrow.TimeUnit.MILLISECOND]: 'ms',
      [arrow.TimeUnit.MICROSECOND]: 'us',
      [arrow.TimeUnit.NANOSECOND]: 'ns'
    })[unit];
  if (arrow.DataType.isInt(type)) {
    return `${type.isSigned ? 'int' : 'uint'}${type.bitWidth}`;
  }
  if (arrow.DataType.isFloat(type)) {
    return { [arrow.Precision.HALF]: 'float16', [arrow.Precision.SINGLE]: 'float32', [arrow.Precision.DOUBLE]: 'float64' }[
      type.precision
    ];
  }
  if (arrow.DataType.isBool(type)) {
    return 'bool';
  }
  if (arrow.DataType.isUtf8(type)) {
    return 'string';
  }
  if (arrow.DataType.isLargeUtf8(type)) {
    return 'large_string';
  }
  if (arrow.DataType.isUtf8View(type)) {
    return 'string_view';
  }
  if (arrow.DataType.isDate(type)) {
    return type.unit === arrow.DateUnit.DAY ? 'date32[day]' : 'date64[ms]';
  }
  if (arrow.DataType.isTime(type)) {
    return `time${type.bitWidth}[${unitName(type.unit)}]`;
  }
  if (arrow.DataType.isTimestamp(type)) {
    const zone = type.timezone ? `, tz=${type.timezone}` : '';
    return `timestamp[${unitName(type.unit)}${zone}]`;
  }
  if (arrow.DataType.isDuration(type)) {
    return `duration[${unitName(type.unit)}]`;
  }
  if (arrow.DataType.isDictionary(type)) {
    return `dictionary<values=${arrowTypeName(type.dictionary)}, indices=${arrowTypeName(type.indices)}>`;
  }
  return String(type).toLowerCase();
}

/** Numeric column from fixed-width chunks: a view of one chunk, or one copy across chunks. */
function numericFromChunks(name: string, dtype: string, chunks: arrow.Data[]): INumericColumn {
  const missing = Private.missingFromChunks(chunks);
  if (chunks.length === 1) {
    const chunk = chunks[0];
    // Arrow pads buffers to 8 bytes, so the view is cut to the chunk's length.
    const values = (chunk.values as NumericArray).subarray(0, chunk.length) as NumericArray;
    return { kind: 'numeric', name, dtype, values, missing };
  }
  const total = chunks.reduce((sum, chunk) => sum + chunk.length, 0);
  const first = chunks[0]?.values as NumericArray | undefined;
  const ArrayType = (first?.constructor ?? Float64Array) as new (length: number) => NumericArray;
  const values = new ArrayType(total);
  let at = 0;
  for (const chunk of chunks) {
    const part = (chunk.values as NumericArray).subarray(0, chunk.length);
    (values as unknown as { set(source: ArrayLike<unknown>, offset: number): void }).set(part, at);
    at += chunk.length;
  }
  return { kind: 'numeric', name, dtype, values, missing };
}

/** float16 has no typed array in ES2022: widen to float64 (one copy). */
function halfFloatColumn(name: string, dtype: string, chunks: arrow.Data[]): INumericColumn {
  const total = chunks.reduce((sum, chunk) => sum + chunk.length, 0);
  const values = new Float64Array(total);
  let at = 0;
  for (const chunk of chunks) {
    const halves = chunk.values as Uint16Array;
    for (let i = 0; i < chunk.length; i++) {
      values[at + i] = arrow.util.uint16ToFloat64(halves[i]);
    }
    at += chunk.length;
  }
  return { kind: 'numeric', name, dtype, values, missing: Private.missingFromChunks(chunks) };
}

/** Boolean chunks (bit-packed, starting at the chunk's bit offset) as categorical false/true. */
function booleanFromChunks(name: string, chunks: arrow.Data[]): ICategoricalColumn {
  const total = chunks.reduce((sum, chunk) => sum + chunk.length, 0);
  const codes = new Int32Array(total);
  const missing = Private.missingFromChunks(chunks);
  let at = 0;
  for (const chunk of chunks) {
    const bits = chunk.values as Uint8Array;
    for (let i = 0; i < chunk.length; i++) {
      const pos = chunk.offset + i;
      codes[at + i] = (bits[pos >> 3] >> (pos & 7)) & 1;
    }
    at += chunk.length;
  }
  if (missing) {
    for (let i = 0; i < total; i++) {
      if (missing[i]) {
        codes[i] = -1;
      }
    }
  }
  return { kind: 'categorical', name, dtype: 'bool', codes, categories: [...BOOLEAN_CATEGORIES], missing };
}

/**
 * Dictionary chunks: each chunk may carry its own dictionary (replacement or delta batches),
 * so every chunk's entries are mapped to one category list in order of first appearance.
 */
function dictionaryFromChunks(name: string, dtype: string, chunks: arrow.Data[]): ICategoricalColumn {
  const total = chunks.reduce((sum, chunk) => sum + chunk.length, 0);
  const codes = new Int32Array(total);
  const missing = Private.missingFromChunks(chunks) ?? new Uint8Array(total);
  const categories: string[] = [];
  const indexOf = new Map<string, number>();
  let anyMissing = false;
  let at = 0;
  for (const chunk of chunks) {
    const dictionary = chunk.dictionary;
    const remap = new Int32Array(dictionary ? dictionary.length : 0);
    for (let j = 0; j < remap.length; j++) {
      const entry = dictionary!.get(j) as unknown;
      if (entry === null || entry === undefined) {
        remap[j] = -1;
        continue;
      }
      const label = entry instanceof Date ? entry.toISOString() : String(entry);
      let code = indexOf.get(label);
      if (code === undefined) {
        code = categories.length;
        categories.push(label);
        indexOf.set(label, code);
      }
      remap[j] = code;
    }
    const keys = chunk.values as NumericArray;
    for (let i = 0; i < chunk.length; i++) {
      if (missing[at + i]) {
        codes[at + i] = -1;
        anyMissing = true;
        continue;
      }
      const key = Number(keys[i]);
      const code = key >= 0 && key < remap.length ? remap[key] : -1;
      if (code < 0) {
        if (key < 0 || key >= remap.length) {
          throw new PolyadicError(
            'input',
            `Column '${name}' has dictionary index ${key} at row ${at + i}, outside its ` +
              `dictionary of ${remap.length} entries.`,
            { column: name, row: at + i, value: String(key) }
          );
        }
        missing[at + i] = 1;
        anyMissing = true;
      }
      codes[at + i] = code;
    }
    at += chunk.length;
  }
  return { kind: 'categorical', name, dtype, codes, categories, missing: anyMissing ? missing : null };
}

/** String chunks (utf8, large_utf8, string_view) as a categorical column. */
function stringsFromChunks(name: string, dtype: string, chunks: arrow.Data[]): ICategoricalColumn {
  const total = chunks.reduce((sum, chunk) => sum + chunk.length, 0);
  const vector = arrow.makeVector(chunks);
  const missing = Private.missingFromChunks(chunks);
  return categoricalFromStrings(name, dtype, total, i =>
    missing && missing[i] ? null : (vector.get(i) as string | null)
  );
}

/**
 * Categorical column from a string per row (`null` for missing): categories are the distinct
 * strings in code-unit order, so equal data gives equal codes whatever the row order.
 */
function categoricalFromStrings(
  name: string,
  dtype: string,
  n: number,
  cellAt: (row: number) => string | null
): ICategoricalColumn {
  const firstSeen = new Int32Array(n);
  const indexOf = new Map<string, number>();
  const seen: string[] = [];
  let missing: Uint8Array | null = null;
  for (let i = 0; i < n; i++) {
    const cell = cellAt(i);
    if (cell === null) {
      missing ??= new Uint8Array(n);
      missing[i] = 1;
      firstSeen[i] = -1;
      continue;
    }
    let code = indexOf.get(cell);
    if (code === undefined) {
      code = seen.length;
      seen.push(cell);
      indexOf.set(cell, code);
    }
    firstSeen[i] = code;
  }
  const order = seen.map((_, code) => code).sort((a, b) => (seen[a] < seen[b] ? -1 : seen[a] > seen[b] ? 1 : 0));
  const rank = new Int32Array(seen.length);
  order.forEach((code, position) => {
    rank[code] = position;
  });
  const codes = new Int32Array(n);
  for (let i = 0; i < n; i++) {
    codes[i] = firstSeen[i] < 0 ? -1 : rank[firstSeen[i]];
  }
  return { kind: 'categorical', name, dtype, codes, categories: order.map(code => seen[code]), missing };
}

/** The error for a value of a kind no column can hold. */
function unsupportedValue(name: string, row: number, value: unknown): PolyadicError {
  const what = Array.isArray(value) ? 'a list' : typeof value === 'object' ? 'a nested record' : typeof value;
  return new PolyadicError(
    'input',
    `Column '${name}' holds ${what} at row ${row}; Polyadic reads numbers, strings, booleans ` +
      'and dates only.',
    { column: name, row }
  );
}

/** Module-private helpers. */
namespace Private {
  /** Decimal notation: digits with an optional point and exponent. */
  export const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

  /** Infinity and not-a-number spellings (numpy's and pandas' text forms). */
  export const SPECIAL = /^([+-]?)(inf|infinity|nan)$/i;

  /** pandas' default true and false values, any case (pandas.read_csv `true_values`). */
  export const BOOLEAN = /^(true|false)$/i;

  /** A boolean column when every non-missing cell is True/False (and one at least is), else null. */
  export function booleanFromTextCells(name: string, cells: ArrayLike<string | null | undefined>): ICategoricalColumn | null {
    const n = cells.length;
    const codes = new Int32Array(n);
    let missing: Uint8Array | null = null;
    let present = 0;
    for (let i = 0; i < n; i++) {
      const cell = cells[i];
      if (isMissingCell(cell)) {
        missing ??= new Uint8Array(n);
        missing[i] = 1;
        codes[i] = -1;
        continue;
      }
      const value = parseBooleanCell(cell as string);
      if (value === undefined) {
        return null;
      }
      codes[i] = value ? 1 : 0;
      present++;
    }
    if (present === 0) {
      return null;
    }
    return { kind: 'categorical', name, dtype: 'bool', codes, categories: [...BOOLEAN_CATEGORIES], missing };
  }

  /**
   * One flag per row from the chunks' validity bitmaps (bit set = valid, starting at the
   * chunk's offset); `null` when no chunk has a null.
   */
  export function missingFromChunks(chunks: arrow.Data[]): Uint8Array | null {
    if (!chunks.some(chunk => chunk.nullCount > 0)) {
      return null;
    }
    const total = chunks.reduce((sum, chunk) => sum + chunk.length, 0);
    const missing = new Uint8Array(total);
    let at = 0;
    for (const chunk of chunks) {
      const bitmap = chunk.nullBitmap;
      if (chunk.nullCount > 0 && bitmap && bitmap.length > 0) {
        for (let i = 0; i < chunk.length; i++) {
          const pos = chunk.offset + i;
          missing[at + i] = ((bitmap[pos >> 3] >> (pos & 7)) & 1) ^ 1;
        }
      } else if (chunk.nullCount > 0 && chunk.nullCount === chunk.length) {
        // a chunk of nulls without a bitmap (Arrow's Null type or an all-null slice)
        missing.fill(1, at, at + chunk.length);
      }
      at += chunk.length;
    }
    return missing;
  }

  /** The dtype a typed array stands for. */
  export function typedArrayDtype(values: NumericArray): string {
    if (values instanceof Float64Array) return 'float64';
    if (values instanceof Float32Array) return 'float32';
    if (values instanceof Int8Array) return 'int8';
    if (values instanceof Int16Array) return 'int16';
    if (values instanceof Int32Array) return 'int32';
    if (values instanceof Uint8Array) return 'uint8';
    if (values instanceof Uint16Array) return 'uint16';
    if (values instanceof Uint32Array) return 'uint32';
    if (values instanceof BigInt64Array) return 'int64';
    return 'uint64';
  }

  /** The kind of one non-missing JS value, or `undefined` when no column can hold it. */
  export function valueKind(value: unknown): 'number' | 'bigint' | 'boolean' | 'string' | 'date' | undefined {
    switch (typeof value) {
      case 'number':
        return 'number';
      case 'bigint':
        return 'bigint';
      case 'boolean':
        return 'boolean';
      case 'string':
        return 'string';
      default:
        return value instanceof Date ? 'date' : undefined;
    }
  }
}

/**
 * The patterns behind {@link parseNumberCell} and {@link parseBooleanCell} (also valid RE2, so a
 * SQL engine can classify text cells by the same rules).
 */
export const TEXT_CELL_PATTERNS: Readonly<{ decimal: RegExp; special: RegExp; boolean: RegExp }> = {
  decimal: Private.DECIMAL,
  special: Private.SPECIAL,
  boolean: Private.BOOLEAN
};
