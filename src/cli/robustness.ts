/**
 * `polyadic robustness DATA --variant SPEC [--variant SPEC ...] [options]`: re-run one analysis
 * under several variants and say how far its co-information holds across them: value and rank
 * per variant, the share of variants with the base's sign, and Kendall's τ-b between every two
 * variants (engine/robustness.ts).
 *
 * Exit codes: 0 done; 2 bad input or usage (one line naming the option, variant or column at
 * fault); 1 internal error.
 */

import { promises as fs } from 'fs';
import * as path from 'path';
import { parseArgs } from 'util';

import Papa from 'papaparse';

import { isPolyadicError, PolyadicError } from '../engine/errors';
import { defaultVariants, IRobustnessResult, IRobustnessVariant, parseVariantSpec, robustnessRun } from '../engine/robustness';
import type { IAnalyzeOptions, Units } from '../engine/types';
import { COLUMN_SEPARATOR } from '../results-format';
import { argumentError, EXIT, ICliStreams, oneLine, reportFailure } from './core';
import { readDataFile } from './readers';

/**
 * The variants run without --variant when the base bins every selected column by quantile:4
 * (the `auto` rule for continuous columns) with the plug-in estimator. Other bases get
 * engine/robustness.ts defaultVariants() of their own binning; a test keeps the two in line.
 */
export const DEFAULT_VARIANTS = [
  'bins=quantile:3',
  'bins=quantile:5',
  'bins=fd',
  'bins=kmeans:4',
  'estimator=miller-madow',
  'estimator=chao-shen',
  'estimator=shrinkage',
  'estimator=gaussian-copula'
];

/** The text of `polyadic robustness --help`. */
export const ROBUSTNESS_HELP = `Usage: polyadic robustness DATA [--variant SPEC ...] [options]

Re-run one analysis (the base, set by the options below as for polyadic analyze)
under each variant, and compare the co-information of every multiplet of order 2
and above: its value and rank under each variant (rank 1 = most negative), the
share of the variants with the base's sign (same_sign), and Kendall's tau-b
between every two variants over all those multiplets.

SPEC is one or more settings joined by ';', each KEY=VALUE with KEY one of
  bins            binning of every numeric column (as --bins)
  bin.COLUMN      binning of one column (as --bin COLUMN=SPEC)
  estimator       plugin | miller-madow | chao-shen | shrinkage | gaussian-copula
  missing         drop | category | error
e.g. --variant 'bins=quantile:8;estimator=miller-madow'. The SPEC is the variant's
label. Without --variant, the defaults are built from the base: for the numeric
columns the base bins, quantile with one bin fewer and one more than each
column's count, fd, and kmeans with the same count (columns kept as categories
stay so); the other estimators (plugin, miller-madow, chao-shen, shrinkage); and
gaussian-copula when every selected column is continuous. For a base of
quantile:4 on continuous columns: ${DEFAULT_VARIANTS.join(', ')}.

Verdicts follow the top N multiplets of each table (N = --top, else 10) under the
base and under every variant (those only a variant ranks that high say "not in
the base's top N"): a multiplet holds under a variant when it has its table's
sign and stays in that variant's top N; it is robust when the base and every
variant give it that sign and it stays in the top N under at least 80 % of the
variants. Between every two variants:
Kendall's tau-b and the overlap of their 10 most negative and 10 most positive.

Options (the base analysis):
  --columns a,b,c  --bins SPEC  --bin COLUMN=SPEC  --missing POLICY
  --estimator NAME  --units UNITS  --max-order K   (as for polyadic analyze)
  --top N               table of the N most negative and N most positive base
                        co-informations (tau always uses every multiplet)
  --format FORMAT       json | csv (default: json, or csv when --out ends in .csv)
  --out PATH            write the result to PATH instead of standard output
  -h, --help            show this help

Exit codes: 0 done, 2 bad input or usage, 1 internal error.
`;

/** Run `polyadic robustness` on its arguments (after the word `robustness`); resolves to the exit code. */
export async function runRobustness(args: string[], io: ICliStreams): Promise<number> {
  try {
    const command = Private.parseCommand(args);
    if (command === 'help') {
      io.stdout.write(ROBUSTNESS_HELP);
      return EXIT.done;
    }
    const source = await readDataFile(command.data, { columns: command.base.columns });
    const base = { ...command.base, columns: undefined };
    const variants = command.variants ?? defaultVariants(source.columns, base).map(parseVariant);
    const result = robustnessRun(source.columns, base, variants, command.top);
    for (const warning of result.warnings) {
      io.stderr.write(`polyadic: warning: ${oneLine(warning)}\n`);
    }
    for (const pair of result.agreement) {
      io.stderr.write(
        `polyadic: note: Kendall's tau-b ${oneLine(pair.a)} vs ${oneLine(pair.b)}: ${pair.kendall_tau.toFixed(4)} over ${result.multiplet_count} multiplets; ` +
          `top ${pair.overlap_of} shared: ${pair.overlap_synergy} most negative, ${pair.overlap_redundancy} most positive\n`
      );
    }
    const text = command.format === 'json' ? JSON.stringify(result, null, 2) + '\n' : Private.csv(result);
    if (command.out) {
      try {
        await fs.writeFile(command.out, text, 'utf8');
      } catch (error) {
        throw new PolyadicError('usage', `--out '${command.out}' cannot be written (${(error as Error).message}).`, {
          option: '--out'
        });
      }
    } else {
      io.stdout.write(text);
    }
    return EXIT.done;
  } catch (error) {
    return reportFailure(error, io);
  }
}

/** Parse one variant SPEC (see the help; engine/robustness.ts parses it); errors name the setting at fault. */
export function parseVariant(spec: string): IRobustnessVariant {
  try {
    return parseVariantSpec(spec);
  } catch (error) {
    if (isPolyadicError(error)) {
      const why = error.message.replace(/^Variant '[\s\S]*?': /, '').replace(/\.$/, '');
      throw new PolyadicError('usage', `--variant '${spec}': ${why}; see polyadic robustness --help.`, {
        option: '--variant',
        value: spec
      });
    }
    throw error;
  }
}

namespace Private {
  /** A parsed command line. */
  export interface ICommand {
    data: string;
    base: IAnalyzeOptions;
    /** Absent: the engine's defaults for the base. */
    variants?: IRobustnessVariant[];
    top?: number;
    format: 'json' | 'csv';
    out?: string;
  }

  /** Parse the arguments strictly. */
  export function parseCommand(args: string[]): ICommand | 'help' {
    let parsed;
    try {
      parsed = parseArgs({
        args,
        strict: true,
        allowPositionals: true,
        options: {
          columns: { type: 'string' },
          bins: { type: 'string' },
          bin: { type: 'string', multiple: true },
          missing: { type: 'string' },
          estimator: { type: 'string' },
          units: { type: 'string' },
          'max-order': { type: 'string' },
          variant: { type: 'string', multiple: true },
          top: { type: 'string' },
          format: { type: 'string' },
          out: { type: 'string' },
          help: { type: 'boolean', short: 'h' }
        }
      });
    } catch (error) {
      throw argumentError(error, 'robustness');
    }
    const { values, positionals } = parsed;
    if (values.help) {
      return 'help';
    }
    const [data, ...extra] = positionals;
    if (data === undefined) {
      throw new PolyadicError('usage', 'robustness needs a DATA file: polyadic robustness DATA [--variant SPEC ...].');
    }
    if (extra.length > 0) {
      throw new PolyadicError('usage', `Unexpected argument '${extra[0]}'; robustness takes one DATA file.`, { value: extra[0] });
    }
    // The base's own settings are checked as a variant's are, then by the engine.
    const baseSettings: string[] = [];
    if (values.bins !== undefined) baseSettings.push(`bins=${values.bins}`);
    for (const text of values.bin ?? []) {
      const at = text.lastIndexOf('=');
      if (at <= 0 || at === text.length - 1) {
        throw new PolyadicError('usage', `--bin expects COLUMN=SPEC, got '${text}'.`, { option: '--bin', value: text });
      }
      baseSettings.push(`bin.${text.slice(0, at)}=${text.slice(at + 1)}`);
    }
    if (values.estimator !== undefined) baseSettings.push(`estimator=${values.estimator}`);
    if (values.missing !== undefined) baseSettings.push(`missing=${values.missing}`);
    const base: IAnalyzeOptions = baseSettings.length > 0 ? { ...parseVariant(baseSettings.join(';')).options } : {};
    if (values.columns !== undefined) {
      base.columns = values.columns.split(',');
    }
    if (values.units !== undefined) {
      if (values.units !== 'bits' && values.units !== 'nats') {
        throw new PolyadicError('usage', `--units must be one of bits, nats; got '${values.units}'.`, { option: '--units' });
      }
      base.units = values.units as Units;
    }
    if (values['max-order'] !== undefined) base.maxOrder = whole('--max-order', values['max-order']);
    const variants = values.variant?.map(parseVariant);
    const out = values.out;
    const format =
      values.format === undefined ? (out && path.extname(out).toLowerCase() === '.csv' ? 'csv' : 'json') : values.format;
    if (format !== 'json' && format !== 'csv') {
      throw new PolyadicError('usage', `--format must be one of json, csv; got '${format}'.`, { option: '--format' });
    }
    return {
      data,
      base,
      variants,
      top: values.top === undefined ? undefined : whole('--top', values.top),
      format,
      out
    };
  }

  /** A whole number ≥ 1, or a usage error. */
  function whole(option: string, value: string): number {
    if (!/^[1-9]\d*$/.test(value) || !Number.isSafeInteger(Number(value))) {
      throw new PolyadicError('usage', `${option} must be a whole number of at least 1; got '${value}'.`, { option, value });
    }
    return Number(value);
  }

  /**
   * One row per multiplet: columns, order, then co-information and rank per variant, then
   * same_sign, and for a followed multiplet (the top N of a table under the base or a variant)
   * the table it is followed in, whether it is robust and the verdict (empty for the others).
   */
  export function csv(result: IRobustnessResult): string {
    const labels = result.variants.map(variant => variant.label);
    const fields = [
      'columns',
      'order',
      ...labels.map(label => `co_information[${label}]`),
      ...labels.map(label => `rank[${label}]`),
      'same_sign',
      'table',
      'robust',
      'verdict'
    ];
    const verdicts = new Map(result.verdicts.map(verdict => [verdict.columns.join(COLUMN_SEPARATOR), verdict]));
    const rows = result.multiplets.map(row => {
      const key = row.columns.join(COLUMN_SEPARATOR);
      const verdict = verdicts.get(key);
      return [
        key,
        row.order,
        // numbers go in as numbers: papaparse's formula escaping would mark a negative one as text
        ...row.values,
        ...row.ranks,
        row.same_sign,
        verdict?.table ?? '',
        verdict === undefined ? '' : String(verdict.robust),
        verdict?.verdict ?? ''
      ];
    });
    return Papa.unparse({ fields, data: rows }, { quotes: false, escapeFormulae: true, newline: '\n', header: true }) + '\n';
  }
}
