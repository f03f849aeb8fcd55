/**
 * Validation of the record against src/record/record.schema.json with Ajv (draft 2020-12, strict,
 * all errors), plus
 * the few rules a JSON Schema cannot state (ids unique across analyses, the binning list
 * following the selected columns, summary multiplets drawn from the selection). Every problem
 * names the JSON Pointer of the offending value, so a person can find it in a hand-edited file.
 * The record's validators are compiled at build time (scripts/build-validators.mjs, with these
 * options), so no schema is compiled on the page; only the older layouts compile when migrated.
 */

import Ajv2020, { type ErrorObject, type ValidateFunction } from 'ajv/dist/2020';

import { PolyadicError } from '../engine/errors';
import { FORMATS } from './formats';
import { analysisWithDefaults } from './record-defaults.generated';
import { analysis, record } from './record-validators.generated';
import type { IAnalysisRecord, IRecordDocument, IRecordProblem } from './types';

/** Most problems reported for one record; a badly broken record would otherwise list thousands. */
export const MAX_PROBLEMS = 50;

/** The outcome of a validation. */
export type ValidationResult<T> = { ok: true; value: T } | { ok: false; problems: IRecordProblem[] };

/** Check a whole record (`{ version: 1, analyses }`) against the schema and the cross-field rules. */
export function validateRecord(value: unknown): ValidationResult<IRecordDocument> {
  const check = Private.validators().record;
  if (!check(value)) {
    return { ok: false, problems: Private.problemsOf(check.errors ?? [], '') };
  }
  const record = value as IRecordDocument;
  const problems: IRecordProblem[] = [];
  const firstIndexOf = new Map<string, number>();
  record.analyses.forEach((analysis, index) => {
    const first = firstIndexOf.get(analysis.id);
    if (first !== undefined) {
      problems.push({
        path: `/analyses/${index}/id`,
        message: `/analyses/${index}/id repeats the id '${analysis.id}' of /analyses/${first}; ids must be unique.`
      });
    } else {
      firstIndexOf.set(analysis.id, index);
    }
    problems.push(...Private.crossFieldProblems(analysis, `/analyses/${index}`));
  });
  return problems.length ? { ok: false, problems: problems.slice(0, MAX_PROBLEMS) } : { ok: true, value: record };
}

/**
 * Check one analysis. `basePath` is prefixed to every path (e.g. `/analyses/3`), so problems of
 * an analysis about to be added read like problems of the stored record.
 */
export function validateAnalysis(value: unknown, basePath = ''): ValidationResult<IAnalysisRecord> {
  const check = Private.validators().analysis;
  if (!check(value)) {
    return { ok: false, problems: Private.problemsOf(check.errors ?? [], basePath) };
  }
  const problems = Private.crossFieldProblems(value as IAnalysisRecord, basePath);
  return problems.length ? { ok: false, problems } : { ok: true, value: value as IAnalysisRecord };
}

/**
 * Fill the defaults the schema declares (the statistics settings) into a new analysis, in
 * place, and check it. Defaults live in the schema only; this is how code gets them.
 */
export function completeAnalysis(value: Record<string, unknown>): ValidationResult<IAnalysisRecord> {
  fillSchemaDefaults(value);
  return validateAnalysis(value);
}

/** Fill the defaults the schema declares into an analysis-shaped object, in place; no check. */
export function fillSchemaDefaults(value: Record<string, unknown>): void {
  Private.validators().withDefaults(value);
}

/**
 * A validator for another JSON Schema (draft 2020-12), reporting problems like the record's:
 * used for the layouts of older record versions before they are migrated.
 */
export function compileValidator<T>(schema: object): (value: unknown) => ValidationResult<T> {
  const check = Private.makeAjv().compile(schema);
  return value =>
    check(value) ? { ok: true, value: value as T } : { ok: false, problems: Private.problemsOf(check.errors ?? [], '') };
}

/** One error for a list of problems: the first few, each naming its path. */
export function problemsError(what: string, problems: IRecordProblem[]): PolyadicError {
  const shown = problems.slice(0, 5).map(problem => problem.message);
  const more = problems.length > shown.length ? ` (and ${problems.length - shown.length} more)` : '';
  return new PolyadicError('input', `${what}: ${shown.join(' ')}${more}`, {
    path: problems[0]?.path ?? '',
    problems
  });
}

/** Module-private helpers. */
namespace Private {
  interface IValidators {
    record: ValidateFunction;
    analysis: ValidateFunction;
    withDefaults: ValidateFunction;
  }

  /** The validators generated from the schema at build time. */
  export function validators(): IValidators {
    return { record, analysis, withDefaults: analysisWithDefaults } as IValidators;
  }

  /** An Ajv instance with the options of the generated validators (strict, all errors, our formats), for the older layouts. */
  export function makeAjv(): Ajv2020 {
    const ajv = new Ajv2020({ allErrors: true, strict: true });
    ajv.addFormat('date-time', FORMATS['date-time']);
    return ajv;
  }

  /** Problems from Ajv errors, one sentence each, deduplicated, at most {@link MAX_PROBLEMS}. */
  export function problemsOf(errors: ErrorObject[], basePath: string): IRecordProblem[] {
    const seen = new Set<string>();
    const problems: IRecordProblem[] = [];
    for (const error of errors) {
      const problem = describe(error, basePath);
      if (!seen.has(problem.message)) {
        seen.add(problem.message);
        problems.push(problem);
      }
      if (problems.length >= MAX_PROBLEMS) {
        break;
      }
    }
    return problems;
  }

  /** A sentence for one Ajv error, starting with the path it concerns. */
  function describe(error: ErrorObject, basePath: string): IRecordProblem {
    const at = basePath + error.instancePath;
    const name = at === '' ? 'the record' : at;
    const params = error.params as Record<string, unknown>;
    switch (error.keyword) {
      case 'required': {
        const path = `${at}/${escapePointer(String(params.missingProperty))}`;
        return { path, message: `${path} is missing (a required field of ${name}).` };
      }
      case 'additionalProperties': {
        const path = `${at}/${escapePointer(String(params.additionalProperty))}`;
        return { path, message: `${path} is not a field of a Polyadic record; remove it.` };
      }
      case 'enum':
        return {
          path: at,
          message: `${name} must be one of ${(params.allowedValues as unknown[]).map(String).join(', ')}.`
        };
      case 'const':
        return { path: at, message: `${name} must be ${JSON.stringify(params.allowedValue)}.` };
      case 'type':
        return { path: at, message: `${name} must be ${article(String(params.type))}.` };
      case 'pattern':
        return { path: at, message: `${name} ${patternText(error.schemaPath, String(params.pattern))}.` };
      case 'format':
        return { path: at, message: `${name} must be a date and time such as 2024-05-01T12:00:00Z.` };
      case 'minimum':
      case 'maximum':
      case 'exclusiveMinimum':
      case 'exclusiveMaximum':
        return { path: at, message: `${name} must be ${String(params.comparison)} ${String(params.limit)}.` };
      case 'minLength':
        return { path: at, message: `${name} must have at least ${String(params.limit)} character(s).` };
      case 'maxLength':
        return { path: at, message: `${name} must have at most ${String(params.limit)} characters.` };
      case 'minItems':
        return { path: at, message: `${name} must have at least ${String(params.limit)} item(s).` };
      case 'maxItems':
        return { path: at, message: `${name} must have at most ${String(params.limit)} items.` };
      case 'uniqueItems':
        return {
          path: at,
          message: `${name} repeats an item (items ${String(params.j)} and ${String(params.i)} are equal).`
        };
      default:
        return { path: at, message: `${name} ${error.message ?? 'is not valid'}.` };
    }
  }

  /** What a pattern means, by the schema definition it belongs to. */
  function patternText(schemaPath: string, pattern: string): string {
    if (schemaPath.includes('/recordId/')) {
      return 'must be a record id: pd- followed by 8 to 32 lower-case letters or digits';
    }
    if (schemaPath.includes('/sha256/')) {
      return 'must be a SHA-256 digest of 64 lower-case hexadecimal digits';
    }
    if (schemaPath.includes('/label/')) {
      return 'must be one line without control characters';
    }
    return `must match the pattern ${pattern}`;
  }

  function article(type: string): string {
    const names: Record<string, string> = {
      integer: 'a whole number',
      number: 'a number',
      string: 'a string',
      array: 'a list',
      object: 'an object',
      boolean: 'true or false',
      null: 'null'
    };
    return type
      .split(',')
      .map(part => names[part] ?? part)
      .join(' or ');
  }

  /** A JSON Pointer token (RFC 6901): `~` and `/` escaped. */
  export function escapePointer(token: string): string {
    return token.replace(/~/g, '~0').replace(/\//g, '~1');
  }

  /** The rules across fields of one analysis that the schema cannot state. */
  export function crossFieldProblems(analysis: IAnalysisRecord, at: string): IRecordProblem[] {
    const problems: IRecordProblem[] = [];
    const add = (path: string, message: string): void => {
      problems.push({ path, message: `${path} ${message}` });
    };
    const selected = analysis.columns;
    const inSelection = new Set(selected);
    if (analysis.binning.length !== selected.length) {
      add(`${at}/binning`, `has ${analysis.binning.length} entries for ${selected.length} selected columns.`);
    }
    analysis.binning.forEach((binning, i) => {
      if (i < selected.length && binning.name !== selected[i]) {
        add(`${at}/binning/${i}/name`, `is '${binning.name}' where column ${i + 1} of the selection is '${selected[i]}'.`);
      }
      const edges = binning.edges;
      if (edges) {
        for (let j = 1; j < edges.length; j++) {
          if (!(edges[j] > edges[j - 1])) {
            add(`${at}/binning/${i}/edges/${j}`, `is ${edges[j]}, not above the edge before it (${edges[j - 1]}).`);
            break;
          }
        }
      }
    });
    const sourceNames = analysis.source.columns.map(column => column.name);
    if (sourceNames.length !== selected.length || sourceNames.some((name, i) => name !== selected[i])) {
      add(`${at}/source/columns`, 'must list the selected columns, in the order of the selection.');
    }
    if (analysis.max_order > selected.length) {
      add(`${at}/max_order`, `is ${analysis.max_order}, above the ${selected.length} selected column(s).`);
    }
    for (const side of ['synergy', 'redundancy'] as const) {
      analysis.summary[side].forEach((multiplet, i) => {
        const path = `${at}/summary/${side}/${i}`;
        const stranger = multiplet.columns.find(name => !inSelection.has(name));
        if (stranger !== undefined) {
          add(`${path}/columns`, `names '${stranger}', which is not a selected column.`);
        }
        if (multiplet.order !== multiplet.columns.length) {
          add(`${path}/order`, `is ${multiplet.order} for ${multiplet.columns.length} column(s).`);
        } else if (multiplet.order < 2 || multiplet.order > analysis.max_order) {
          add(`${path}/order`, `is ${multiplet.order}, outside 2 … max_order (${analysis.max_order}).`);
        }
      });
    }
    (analysis.summary.histograms ?? []).forEach((histogram, i) => {
      const path = `${at}/summary/histograms/${i}`;
      if (histogram.counts.length !== histogram.edges.length - 1) {
        add(`${path}/counts`, `has ${histogram.counts.length} bins for ${histogram.edges.length} edges (one fewer expected).`);
      }
      for (let j = 1; j < histogram.edges.length; j++) {
        if (!(histogram.edges[j] > histogram.edges[j - 1])) {
          add(`${path}/edges/${j}`, 'is not above the edge before it.');
          break;
        }
      }
      if (histogram.order > analysis.max_order) {
        add(`${path}/order`, `is ${histogram.order}, above max_order (${analysis.max_order}).`);
      }
    });
    const robustness = analysis.robustness;
    if (robustness) {
      const variants = robustness.settings.variants.length;
      robustness.results.verdicts.forEach((verdict, i) => {
        const path = `${at}/robustness/results/verdicts/${i}`;
        const stranger = verdict.columns.find(name => !inSelection.has(name));
        if (stranger !== undefined) {
          add(`${path}/columns`, `names '${stranger}', which is not a selected column.`);
        }
        for (const [field, length] of [['values', variants + 1], ['ranks', variants + 1], ['in_top', variants]] as const) {
          if (verdict[field].length !== length) {
            add(`${path}/${field}`, `has ${verdict[field].length} entries for ${variants} variant(s) (${length} expected).`);
          }
        }
      });
      const pairs = ((variants + 1) * variants) / 2;
      if (robustness.results.agreement.length !== pairs) {
        add(`${at}/robustness/results/agreement`, `has ${robustness.results.agreement.length} entries for ${variants + 1} variants with the base (${pairs} pairs expected).`);
      }
    }
    return problems;
  }
}
