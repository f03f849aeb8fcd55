/**
 * Binning specs: the text forms (`auto`, `quantile:4`, `fd`, `edges:0,1.5,3`, …), their
 * parsing and printing, and the rule `auto` follows (see index.ts).
 */

import { PolyadicError } from '../errors';
import { formatCount } from '../text';
import type { BinMethod, ColumnView, IBinSpec } from '../types';

/** Largest K accepted in a spec, and largest bin count a rule may produce. */
export const MAX_BIN_COUNT = 1_000_000;

/** Every valid form of a binning spec, as error messages list them. */
export const BIN_SPEC_FORMS =
  'auto, width:K, quantile:K, fd, scott, sturges, rice, sqrt, doane, kmeans:K, ' +
  `edges:a,b,… (two or more strictly increasing numbers), categorical (K a whole number from 1 to ${formatCount(MAX_BIN_COUNT)})`;

/**
 * Most distinct values a numeric column may have for `auto` to keep each value as a category:
 * 10 covers flags, genotypes, 5- to 10-point scales and small counts, while keeping a triplet of
 * such columns at no more than 1,000 possible joint cells (our choice, no source).
 */
export const AUTO_MAX_LEVELS = 10;

/** A spec whose method is settled (`auto` resolved). */
export interface IAppliedSpec extends IBinSpec {
  method: BinMethod;
}

/** How `auto` bins a numeric column of more than {@link AUTO_MAX_LEVELS} distinct values. */
export const AUTO_NUMERIC: IAppliedSpec = { method: 'quantile', count: 4 };

/** {@link AUTO_NUMERIC} as text: `quantile:4`. */
export const AUTO_NUMERIC_SPEC = `${AUTO_NUMERIC.method}:${AUTO_NUMERIC.count}`;

/** A finite decimal number, as written in an `edges:` list. */
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** Parse a binning spec such as `quantile:4`, `fd` or `edges:0,1.5,3`. */
export function parseBinSpec(text: string): IBinSpec {
  const source = String(text);
  const trimmed = source.trim();
  const colon = trimmed.indexOf(':');
  const head = (colon < 0 ? trimmed : trimmed.slice(0, colon)).trim().toLowerCase();
  const argument = colon < 0 ? undefined : trimmed.slice(colon + 1).trim();
  const fail = (why: string): never => {
    throw new PolyadicError(
      'usage',
      `Binning spec "${source}" is not valid: ${why}. Valid forms: ${BIN_SPEC_FORMS}.`,
      { option: 'bins', value: source }
    );
  };
  switch (head) {
    case 'auto':
      if (argument !== undefined) {
        return fail('auto takes no argument');
      }
      return { method: 'auto' };
    case 'width':
    case 'quantile':
    case 'kmeans': {
      if (argument === undefined || argument === '') {
        return fail(`${head} needs a bin count, as in ${head}:4`);
      }
      if (!/^\d+$/.test(argument)) {
        return fail(`the bin count "${argument}" is not a whole number`);
      }
      const count = Number(argument);
      if (count < 1 || count > MAX_BIN_COUNT) {
        return fail(`the bin count ${argument} is outside 1 … ${formatCount(MAX_BIN_COUNT)}`);
      }
      return { method: head, count };
    }
    case 'edges': {
      if (argument === undefined || argument === '') {
        return fail('edges needs a list of numbers, as in edges:0,1.5,3');
      }
      const parts = argument.split(',').map(part => part.trim());
      const edges: number[] = [];
      for (const part of parts) {
        if (!DECIMAL.test(part)) {
          return fail(`"${part}" is not a finite decimal number`);
        }
        const value = Number(part);
        if (!Number.isFinite(value)) {
          return fail(`"${part}" is not a finite number`);
        }
        edges.push(value);
      }
      if (edges.length < 2) {
        return fail('edges needs at least two numbers');
      }
      for (let i = 1; i < edges.length; i++) {
        if (!(edges[i] > edges[i - 1])) {
          return fail(`the edges must increase strictly, but ${parts[i]} follows ${parts[i - 1]}`);
        }
      }
      return { method: 'edges', edges };
    }
    case 'fd':
    case 'scott':
    case 'sturges':
    case 'rice':
    case 'sqrt':
    case 'doane':
    case 'categorical':
      if (argument !== undefined) {
        return fail(`${head} takes no argument`);
      }
      return { method: head };
    default:
      return fail(head === '' ? 'it is empty' : `"${head}" is not a binning method`);
  }
}

/** The text form of a spec (the inverse of {@link parseBinSpec}). */
export function formatBinSpec(spec: IBinSpec): string {
  switch (spec.method) {
    case 'width':
    case 'quantile':
    case 'kmeans':
      return `${spec.method}:${spec.count}`;
    case 'edges':
      return `edges:${(spec.edges ?? []).map(edge => String(edge)).join(',')}`;
    default:
      return spec.method;
  }
}

/** The spec used when none is given: `categorical` for categorical and boolean columns, else `auto`. */
export function defaultBinSpec(column: ColumnView): IBinSpec {
  if (column.kind === 'categorical' || column.dtype === 'bool') {
    return { method: 'categorical' };
  }
  return { method: 'auto' };
}
