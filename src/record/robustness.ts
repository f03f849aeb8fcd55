/**
 * The robustness block of a recorded analysis: built from a completed robustness run
 * (engine/robustness.ts), attached to the analysis and checked against the schema; the options
 * that re-run it exactly for `polyadic verify`.
 */

import { PolyadicError } from '../engine/errors';
import { IRobustnessResult, IRobustnessVariant, parseVariantSpec } from '../engine/robustness';
import type { IAnalyzeOptions } from '../engine/types';
import { optionsFromRecord } from './settings';
import type { IAnalysisRecord, IRobustnessRecord } from './types';
import { problemsError, validateAnalysis } from './validate';

/** A number as JSON keeps it: a non-finite one becomes null. */
function finite(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}

/**
 * The block of a completed run: the variant texts it ran (the labels of its variants, the base
 * not counted), its N, the verdicts and the agreement.
 */
export function robustnessBlockOf(result: IRobustnessResult): IRobustnessRecord {
  return {
    settings: { variants: result.variants.slice(1).map(variant => variant.label), top: result.top },
    results: {
      verdicts: result.verdicts.map(verdict => ({
        columns: [...verdict.columns],
        table: verdict.table,
        values: verdict.values.map(finite),
        ranks: [...verdict.ranks],
        same_sign: verdict.same_sign,
        in_base_top: verdict.in_base_top,
        in_top: [...verdict.in_top],
        holds: verdict.holds,
        robust: verdict.robust,
        verdict: verdict.verdict
      })),
      agreement: result.agreement.map(pair => ({
        a: pair.a,
        b: pair.b,
        kendall_tau: finite(pair.kendall_tau),
        overlap_synergy: pair.overlap_synergy,
        overlap_redundancy: pair.overlap_redundancy,
        overlap_of: pair.overlap_of
      }))
    }
  };
}

/**
 * The analysis with its robustness block set to the run's (a new object; the old block, if any,
 * replaced), checked against the schema: a failure is a PolyadicError naming the field.
 */
export function withRobustness(analysis: IAnalysisRecord, result: IRobustnessResult): IAnalysisRecord {
  const next = { ...analysis, robustness: robustnessBlockOf(result) };
  const checked = validateAnalysis(JSON.parse(JSON.stringify(next)));
  if (!checked.ok) {
    throw problemsError('The robustness run cannot be recorded', checked.problems);
  }
  return checked.value;
}

/** What re-runs a recorded robustness block: the base options, the parsed variants and N. */
export interface IRobustnessRerun {
  base: IAnalyzeOptions;
  variants: IRobustnessVariant[];
  top: number;
}

/**
 * The settings that re-run an analysis' robustness block exactly (the recorded per-column
 * binning as the base, no statistics); undefined without a block. A variant text that no longer
 * parses is a usage error naming it.
 */
export function robustnessRerunOf(analysis: IAnalysisRecord): IRobustnessRerun | undefined {
  const block = analysis.robustness;
  if (!block) {
    return undefined;
  }
  const variants = block.settings.variants.map(text => {
    try {
      return parseVariantSpec(text);
    } catch (error) {
      if (error instanceof PolyadicError) {
        throw new PolyadicError('usage', `The recorded robustness run of '${analysis.id}': ${error.message}`, error.detail);
      }
      throw error;
    }
  });
  return { base: optionsFromRecord(analysis), variants, top: block.settings.top };
}
