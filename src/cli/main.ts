/**
 * `polyadic`, the headless command line: `polyadic analyze DATA [options]`.
 *
 * Exit codes: 0 done; 2 bad input or usage (one line on stderr starting `polyadic:` that
 * names the column, row, option or value at fault); 1 internal error (a bug: the message and
 * a request to report it).
 */

import { closeSync, existsSync, openSync, readFileSync, writeSync } from 'fs';
import * as path from 'path';

import { analyzeCodes, latticeInput, multipletRows, prepareColumns, resolveOptions } from '../engine/analyze';
import { walkLattice } from '../engine/walk';
import { MAX_SEED, STATISTICS_TAILS, type IStatisticsOptions, type StatisticsTail } from '../engine/statistics/options';
import { EnginePool } from '../worker/pool';
import { BIN_SPEC_FORMS, parseBinSpec } from '../engine/binning';
import { GREEDY_CHAINS } from '../engine/chains';
import { ESTIMATORS } from '../engine/estimators';
import { isPolyadicError, PolyadicError } from '../engine/errors';
import { unknownColumn } from '../engine/table';
import { formatCount } from '../engine/text';
import type { ChainRequest, EstimatorName, IAnalysisResult, IAnalyzeOptions, IMultipletRow, MissingPolicy, Units } from '../engine/types';
import { ANALYSIS_OPTIONS, EXIT, ICliStreams, oneLine, parseCommandLine, reportFailure } from './core';
import { analyzeViaDuckDB, duckdbColumnNames, MAX_DISTINCT_ROWS, MAX_SQL_BINS } from './duckdb';
import { runFingerprint } from './fingerprint';
import { OUTPUT_FORMATS, OutputFormat, writeResult } from './output';
import { readDataFile, type IDataSource } from './readers';
import { defaultThreads, ThreadWorker } from './threads';
import { runRobustness } from './robustness';
import { runVerify } from './verify';

/** The package version, replaced by the bundler; undefined when running from source. */
declare const POLYADIC_VERSION: string | undefined;

/** Re-exported for the CLI's callers; the streams and exit codes of every command live in core.ts. */
export { EXIT, type ICliStreams } from './core';

/** Values each enumerated option accepts. */
export const CHOICES = {
  missing: ['drop', 'category', 'error'] as readonly MissingPolicy[],
  estimator: ESTIMATORS,
  units: ['bits', 'nats'] as readonly Units[],
  format: OUTPUT_FORMATS,
  tail: STATISTICS_TAILS as readonly StatisticsTail[]
};

/** The text of `polyadic --help`. */
export const HELP = `Usage: polyadic analyze DATA [options]
       polyadic verify NOTEBOOK --data NAME=PATH ...   (see polyadic verify --help)
       polyadic fingerprint DATA [--columns a,b,c]     (see polyadic fingerprint --help)
       polyadic robustness DATA [--variant SPEC ...]   (see polyadic robustness --help)
       polyadic --help | --version

Find higher-order structure in a table: entropy of every column, and co-information,
total correlation, dual total correlation, O-information and S-information of every
multiplet (set of columns) up to an order.

DATA is a .csv or .tsv file with a header row, an Arrow IPC file or stream (.arrow,
.feather, .arrows, .ipc, uncompressed) or a .parquet file.

Options:
  --columns a,b,c       columns to analyse (default: all)
  --bins SPEC           binning of every numeric column (default: auto, which keeps
                        each value of a column with at most 10 distinct values as
                        a category and bins any other by quantile:4); text and
                        boolean columns stay categorical
  --bin COLUMN=SPEC     binning of one column; repeat for several
  --missing POLICY      drop | category | error (default: drop)
  --estimator NAME      plugin | miller-madow | chao-shen | shrinkage (default: plugin),
                        or gaussian-copula: no binning; each numeric column becomes
                        the normal scores of its ranks and every entropy comes from
                        their covariance (bias-corrected); continuous columns only,
                        missing values: drop or error
  --units UNITS         bits | nats (default: bits)
  --max-order K         largest multiplet order (default: all when at most 12
                        columns, else 3)
  --top N               keep the N most negative and N most positive co-information
                        multiplets of order 2 and above
  --threads N           worker threads (default: all cores); results are identical
                        for any number
  --via duckdb          read a .parquet, .csv or .tsv file with DuckDB (npm package @duckdb/node-api),
                        which bins every column with the same edges and counts the
                        distinct binned rows, which the walk takes with their counts:
                        the rows never enter this process, and the JSON is the same
                        as without --via, bit for bit. Numbers, booleans and
                        text only; at most ${formatCount(MAX_DISTINCT_ROWS)} distinct binned rows and
                        ${formatCount(MAX_SQL_BINS)} bins per column; --bootstrap resamples the
                        weighted rows (multinomial), --beyond-pairs fits their counts;
                        no --surrogates, --sharpen or gaussian-copula (they need the rows)
  --chain a,b,c         add a conditioning chain along that ordering of columns (two
                        up to the maximum order) to the JSON as 'chains': the
                        co-information of each prefix from the pair on ('values') and
                        what each further column adds ('steps', the chain rule's
                        -I(prefix | column)); greedy-synergy grows from the most
                        synergistic triplet, greedy-redundancy from the most redundant
                        pair, up to the maximum order; repeat for several

Evidence against chance (all off by default; the same seed gives the same bits):
  --surrogates N        independence surrogates: each column shuffled on its own, the
                        lattice walked again; adds p_value, q_value (Benjamini-Hochberg
                        over every multiplet of order >= 2), null_mean, null_sd,
                        co_information_corrected and the same for O-information
                        (orders >= 3); at most 100000
  --sharpen M           M fresh surrogates, on that multiplet alone, for each multiplet
                        whose p-value sits at its floor 1/(N+1) (at most 64, the most
                        extreme first): with many multiplets, N alone cannot bring any
                        q below 0.05; p_surrogates says which count each p rests on
  --tail TAIL           two | synergy | redundancy (default: two)
  --bootstrap B         row resamples: percentile intervals of every measure
                        (ci_low, ci_high, <measure>_ci_low/high) and same_sign
  --alpha A             intervals cover 1 - A (default: 0.05)
  --beyond-pairs N      for the N most negative and N most positive multiplets of
                        order >= 3: the maximum-entropy fit to their (k-1)-column
                        marginals, connected_information and connected_p_value
  --fit-draws D         parametric-bootstrap draws per fit (default: 200)
  --seed S              seed of every random draw, 0 to ${MAX_SEED} (default: 0)
  --format FORMAT       json | csv (default: json, or csv when --out ends in .csv)
  --out PATH            write the result to PATH instead of standard output
  -h, --help            show this help
  -V, --version         show the version

SPEC is one of: ${BIN_SPEC_FORMS}.

Co-information sign (Bell 2003): negative means synergy dominates, positive
redundancy. In CSV output the columns of a multiplet are joined with '|'.

Exit codes: 0 done, 2 bad input or usage, 1 internal error.
`;

/** Run the CLI on arguments (without `node` and the script); resolves to the exit code. */
export async function main(argv: string[], streams: ICliStreams = process): Promise<number> {
  // the other commands parse their own options
  if (argv[0] === 'verify') {
    return runVerify(argv.slice(1), streams);
  }
  if (argv[0] === 'fingerprint') {
    return runFingerprint(argv.slice(1), streams);
  }
  if (argv[0] === 'robustness') {
    return runRobustness(argv.slice(1), streams);
  }
  let source: IDataSource | undefined;
  try {
    const command = Private.parseCommand(argv);
    if (command.kind === 'help') {
      streams.stdout.write(HELP);
      return EXIT.done;
    }
    if (command.kind === 'version') {
      streams.stdout.write(`polyadic ${Private.packageVersion()}\n`);
      return EXIT.done;
    }
    let result: IAnalysisResult;
    let rows: Iterable<IMultipletRow>;
    if (command.via === 'duckdb') {
      const names = await duckdbColumnNames(command.data);
      const options = Private.analyzeOptions(command, command.columns ?? names, names);
      const run = await analyzeViaDuckDB(command.data, { ...options, columns: command.columns ?? names });
      result = run.result;
      rows = result.multiplets;
      streams.stderr.write(`polyadic: note: ${oneLine(run.note)}
`);
    } else {
      source = await readDataFile(command.data, { columns: command.columns });
      const options = Private.analyzeOptions(command, source.columns.map(column => column.name), source.names);
      ({ result, rows } = await Private.run(source, options, command.threads));
    }
    for (const warning of result.warnings) {
      streams.stderr.write(`polyadic: warning: ${oneLine(warning)}\n`);
    }
    for (const note of Private.statisticsNotes(result)) {
      streams.stderr.write(`polyadic: note: ${note}\n`);
    }
    // the rows go out in chunks as they are made from the lattice, never all held at once
    if (command.out) {
      Private.writeOutput(command.out, write => writeResult(result, rows, command.format, write));
    } else {
      writeResult(result, rows, command.format, text => streams.stdout.write(text));
    }
    return EXIT.done;
  } catch (error) {
    return reportError(error, streams, source);
  }
}

/**
 * Print an error and return its exit code: a PolyadicError about input, usage or a limit is
 * one line naming what is at fault (2); anything else is a bug (1).
 */
export function reportError(error: unknown, streams: ICliStreams, source?: IDataSource): number {
  return reportFailure(error, streams, { lineOfRow: source?.lineOfRow?.bind(source) });
}

/** Module-private helpers. */
namespace Private {
  /** A parsed command line. */
  export type Command =
    | { kind: 'help' }
    | { kind: 'version' }
    | {
        kind: 'analyze';
        data: string;
        columns?: string[];
        bins?: string;
        binsByColumn: [string, string][];
        missing?: MissingPolicy;
        estimator?: EstimatorName;
        units?: Units;
        maxOrder?: number;
        top?: number;
        threads?: number;
        via?: 'duckdb';
        chains: ChainRequest[];
        statistics: IStatisticsOptions;
        format: OutputFormat;
        out?: string;
      };

  /**
   * Analyze in this thread (one thread, or a run too small to share) or in a pool of worker
   * threads running this very bundle; the result is the same bit for bit. Without statistics
   * the result comes without its rows, which are made one at a time from the lattice as the
   * output is written (a full lattice has a million of them).
   */
  export async function run(
    source: IDataSource,
    options: IAnalyzeOptions,
    threads: number | undefined
  ): Promise<{ result: IAnalysisResult; rows: Iterable<IMultipletRow> }> {
    const count = threads ?? defaultThreads();
    const bundle = process.argv[1];
    const script = bundle ? path.join(path.dirname(bundle), 'polyadic-worker.cjs') : '';
    const top = options.top ?? null;
    if (count <= 1 || !bundle?.endsWith('.cjs') || !existsSync(script)) {
      // From source (tests import main.ts) there is no worker bundle to start threads with.
      const prepared = prepareColumns(source.columns, options);
      if (resolveOptions(options, prepared.codes.length).statistics !== null) {
        const result = analyzeCodes(prepared, options);
        return { result, rows: result.multiplets };
      }
      const lattice = walkLattice(latticeInput(prepared, options));
      const result = analyzeCodes(prepared, options, lattice, undefined, false);
      return { result, rows: multipletRows(result, lattice, top) };
    }
    const pool = new EnginePool({ createWorker: () => new ThreadWorker(script), workers: count });
    try {
      const done = await pool.analyze(source.columns, options, { transferColumns: true, includeLattice: true, omitRows: true });
      // with statistics the rows carry their evidence and come with the result
      const rows = done.result.statistics || !done.lattice ? done.result.multiplets : multipletRows(done.result, done.lattice, top);
      return { result: done.result, rows };
    } finally {
      pool.dispose();
    }
  }

  /** Parse argv strictly; usage errors name the option or value at fault. */
  export function parseCommand(argv: string[]): Command {
    const parsed = parseCommandLine(
      argv,
      {
        ...ANALYSIS_OPTIONS,
        top: { type: 'string' },
        threads: { type: 'string' },
        via: { type: 'string' },
        chain: { type: 'string', multiple: true },
        surrogates: { type: 'string' },
        bootstrap: { type: 'string' },
        seed: { type: 'string' },
        tail: { type: 'string' },
        alpha: { type: 'string' },
        'beyond-pairs': { type: 'string' },
        'fit-draws': { type: 'string' },
        sharpen: { type: 'string' },
        format: { type: 'string' },
        out: { type: 'string' },
        help: { type: 'boolean', short: 'h' },
        version: { type: 'boolean', short: 'V' }
      },
      null
    );
    const { values, positionals } = parsed;
    if (values.help) {
      return { kind: 'help' };
    }
    if (values.version) {
      return { kind: 'version' };
    }
    const [verb, data, ...extra] = positionals;
    if (verb === undefined) {
      throw new PolyadicError('usage', 'No command given; try polyadic analyze DATA, or polyadic --help.', {});
    }
    if (verb !== 'analyze') {
      throw new PolyadicError('usage', `Unknown command '${verb}'; the commands are analyze, verify, fingerprint and robustness (see polyadic --help).`, {
        value: verb
      });
    }
    if (data === undefined) {
      throw new PolyadicError('usage', 'analyze needs a DATA file: polyadic analyze DATA [options].', {});
    }
    if (extra.length > 0) {
      throw new PolyadicError('usage', `Unexpected argument '${extra[0]}'; analyze takes one DATA file.`, {
        value: extra[0]
      });
    }
    const columns = values.columns === undefined ? undefined : columnList(values.columns);
    const binsByColumn = (values.bin ?? []).map(binOption);
    const out = values.out;
    const format = values.format === undefined
      ? out && path.extname(out).toLowerCase() === '.csv' ? 'csv' : 'json'
      : choice('--format', values.format, CHOICES.format);
    const chains = (values.chain ?? []).map(chainOption);
    if (chains.length > 0 && format === 'csv') {
      throw new PolyadicError('usage', "--chain adds a 'chains' array to the JSON output; CSV holds one row per multiplet, so use --format json.", {
        option: '--chain'
      });
    }
    return {
      kind: 'analyze',
      data,
      columns,
      chains,
      bins: values.bins === undefined ? undefined : binSpec('--bins', values.bins),
      binsByColumn,
      missing: values.missing === undefined ? undefined : choice('--missing', values.missing, CHOICES.missing),
      estimator:
        values.estimator === undefined ? undefined : choice('--estimator', values.estimator, CHOICES.estimator),
      units: values.units === undefined ? undefined : choice('--units', values.units, CHOICES.units),
      maxOrder: values['max-order'] === undefined ? undefined : positiveInteger('--max-order', values['max-order']),
      top: values.top === undefined ? undefined : positiveInteger('--top', values.top),
      threads: values.threads === undefined ? undefined : positiveInteger('--threads', values.threads),
      via: values.via === undefined ? undefined : choice('--via', values.via, ['duckdb'] as const),
      statistics: statisticsOptions(values),
      format,
      out
    };
  }

  /** Engine options from a command, with --bin columns checked against the selection. */
  export function analyzeOptions(
    command: Extract<Command, { kind: 'analyze' }>,
    selected: string[],
    names: string[]
  ): IAnalyzeOptions {
    const binsByColumn: Record<string, string> = {};
    for (const [column, spec] of command.binsByColumn) {
      if (!selected.includes(column)) {
        if (!names.includes(column)) {
          throw unknownColumn(column, names);
        }
        throw new PolyadicError(
          'usage',
          `--bin names column '${column}', which is not among --columns (${selected.join(', ')}).`,
          { option: '--bin', column }
        );
      }
      if (column in binsByColumn) {
        throw new PolyadicError('usage', `--bin is given twice for column '${column}'.`, { option: '--bin', column });
      }
      binsByColumn[column] = spec;
    }
    const options: IAnalyzeOptions = {};
    if (command.bins !== undefined) options.bins = command.bins;
    if (Object.keys(binsByColumn).length > 0) options.binsByColumn = binsByColumn;
    if (command.missing !== undefined) options.missing = command.missing;
    if (command.estimator !== undefined) options.estimator = command.estimator;
    if (command.units !== undefined) options.units = command.units;
    if (command.maxOrder !== undefined) options.maxOrder = command.maxOrder;
    if (command.top !== undefined) options.top = command.top;
    if (command.chains.length > 0) options.chains = command.chains;
    if (Object.keys(command.statistics).length > 0) options.statistics = command.statistics;
    return options;
  }

  /** What the q-values of a result control, for the terminal (the JSON has it as `statistics.families`). */
  export function statisticsNotes(result: IAnalysisResult): string[] {
    const families = result.statistics?.families;
    if (!families) {
      return [];
    }
    const describe = (name: string, family: { orders: number[]; count: number } | null): string[] =>
      family
        ? [
            `q-values of ${name}: Benjamini–Hochberg over ${family.count.toLocaleString('en-US')} multiplets of order ` +
              `${family.orders.length > 1 ? `${family.orders[0]}–${family.orders[family.orders.length - 1]}` : family.orders[0]}; ` +
              'they bound the expected share of false discoveries among those called significant, not the chance that any one is.'
          ]
        : [];
    return [...describe('co-information', families.co_information), ...describe('O-information', families.o_information)];
  }

  /** The statistics flags, each checked as a whole number (or a choice); the engine checks the caps. */
  function statisticsOptions(values: Record<string, string | boolean | string[] | undefined>): IStatisticsOptions {
    const options: IStatisticsOptions = {};
    const text = (name: string): string | undefined => {
      const value = values[name];
      return typeof value === 'string' ? value : undefined;
    };
    const whole = (name: string): number | undefined => {
      const value = text(name);
      if (value === undefined) {
        return undefined;
      }
      if (!/^\d+$/.test(value) || !Number.isSafeInteger(Number(value))) {
        throw new PolyadicError('usage', `--${name} must be a whole number ≥ 0; got '${value}'.`, {
          option: `--${name}`,
          value
        });
      }
      return Number(value);
    };
    const surrogates = whole('surrogates');
    const bootstrap = whole('bootstrap');
    const seed = whole('seed');
    const beyondPairs = whole('beyond-pairs');
    const fitDraws = whole('fit-draws');
    const sharpen = whole('sharpen');
    if (sharpen !== undefined) options.sharpen = sharpen;
    if (surrogates !== undefined) options.surrogates = surrogates;
    if (bootstrap !== undefined) options.bootstrap = bootstrap;
    if (seed !== undefined) options.seed = seed;
    if (beyondPairs !== undefined) options.beyondPairs = beyondPairs;
    if (fitDraws !== undefined) options.fitDraws = fitDraws;
    const tail = text('tail');
    if (tail !== undefined) options.tail = choice('--tail', tail, CHOICES.tail);
    const alpha = text('alpha');
    if (alpha !== undefined) {
      const value = Number(alpha);
      if (!/^(0?\.\d+|0|1)$/.test(alpha) || !(value > 0 && value < 1)) {
        throw new PolyadicError('usage', `--alpha must be a number between 0 and 1, such as 0.05; got '${alpha}'.`, {
          option: '--alpha',
          value: alpha
        });
      }
      options.alpha = value;
    }
    return options;
  }

  /** `--columns a,b,c` as a list: no empty name, no name twice. */
  /** One --chain: a greedy growth by name, or an ordering of column names joined by ','. */
  function chainOption(text: string): ChainRequest {
    if ((GREEDY_CHAINS as readonly string[]).includes(text)) {
      return text as (typeof GREEDY_CHAINS)[number];
    }
    const names = text.split(',');
    if (names.some(name => name === '')) {
      throw new PolyadicError('usage', `--chain '${text}' has an empty column name; give column names joined by ',' or ${GREEDY_CHAINS.join(' or ')}.`, {
        option: '--chain',
        value: text
      });
    }
    return names;
  }

  function columnList(text: string): string[] {
    const names = text.split(',');
    names.forEach((name, index) => {
      if (name === '') {
        throw new PolyadicError('usage', `--columns has an empty name at position ${index + 1} in '${text}'.`, {
          option: '--columns',
          value: text
        });
      }
      if (names.indexOf(name) !== index) {
        throw new PolyadicError('usage', `--columns names '${name}' twice.`, { option: '--columns', column: name });
      }
    });
    return names;
  }

  /** `--bin COLUMN=SPEC`: split at the last '=', since a spec never holds one. */
  function binOption(text: string): [string, string] {
    const at = text.lastIndexOf('=');
    if (at <= 0 || at === text.length - 1) {
      throw new PolyadicError(
        'usage',
        `--bin expects COLUMN=SPEC, got '${text}'; SPEC is one of ${BIN_SPEC_FORMS}.`,
        { option: '--bin', value: text }
      );
    }
    return [text.slice(0, at), binSpec(`--bin for column '${text.slice(0, at)}'`, text.slice(at + 1))];
  }

  /**
   * Check a binning spec with the engine's parser before the data is read, so a typo is
   * reported at once, with the option it came from.
   */
  function binSpec(option: string, spec: string): string {
    try {
      parseBinSpec(spec);
    } catch (error) {
      if (isPolyadicError(error)) {
        throw new PolyadicError('usage', `${option}: ${error.message}`, { ...error.detail, option: option.split(' ')[0] });
      }
      throw error;
    }
    return spec;
  }

  /** One of a fixed set of values, or a usage error listing them. */
  function choice<T extends string>(option: string, value: string, allowed: readonly T[]): T {
    if (!(allowed as readonly string[]).includes(value)) {
      throw new PolyadicError('usage', `${option} must be one of ${allowed.join(', ')}; got '${value}'.`, {
        option,
        value
      });
    }
    return value as T;
  }

  /** A whole number ≥ 1, or a usage error. */
  function positiveInteger(option: string, value: string): number {
    if (!/^[1-9]\d*$/.test(value) || !Number.isSafeInteger(Number(value))) {
      throw new PolyadicError('usage', `${option} must be a whole number of at least 1; got '${value}'.`, {
        option,
        value
      });
    }
    return Number(value);
  }

  /** Write the output file, reporting a path that cannot be written as a usage error. */
  export function writeOutput(out: string, produce: (write: (text: string) => void) => void): void {
    const failed = (error: unknown): PolyadicError =>
      new PolyadicError('usage', `--out '${out}' cannot be written (${(error as Error).message}).`, {
        option: '--out',
        value: out
      });
    let fd: number;
    try {
      fd = openSync(out, 'w');
    } catch (error) {
      throw failed(error);
    }
    try {
      produce(text => {
        try {
          const bytes = Buffer.from(text, 'utf8');
          for (let done = 0; done < bytes.length; ) {
            done += writeSync(fd, bytes, done, bytes.length - done);
          }
        } catch (error) {
          throw failed(error);
        }
      });
    } finally {
      closeSync(fd);
    }
  }

  /**
   * The package version: written into the bundle at build time (scripts/build-cli.mjs), else
   * read from the package.json above this file when running from source (tests).
   */
  export function packageVersion(): string {
    if (typeof POLYADIC_VERSION === 'string') {
      return POLYADIC_VERSION;
    }
    let dir = __dirname;
    for (let depth = 0; depth < 4; depth++) {
      try {
        const manifest = JSON.parse(readFileSync(path.join(dir, 'package.json'), 'utf8'));
        if (manifest.name === 'jupyterlab-polyadic') {
          return String(manifest.version);
        }
      } catch {
        // no manifest at this level: look one directory up
      }
      dir = path.dirname(dir);
    }
    return 'unknown';
  }
}

if (require.main === module) {
  // a reader that stops early (`polyadic analyze … | head`) is not an error
  process.stdout.on('error', (error: NodeJS.ErrnoException) => {
    if (error.code === 'EPIPE') {
      process.exit(EXIT.done);
    }
    throw error;
  });
  void main(process.argv.slice(2)).then(code => {
    process.exitCode = code;
  });
}
