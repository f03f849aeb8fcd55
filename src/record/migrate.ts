/**
 * Record versions: read older layouts by migrating them step by step to the current one, and
 * recognise newer layouts so they are shown read-only instead of being overwritten.
 *
 * Migration happens on read, on a copy: the stored record stays as it is until the person
 * saves a change (store.ts). Each step checks the old layout with its own JSON Schema first,
 * so a problem in a hand-edited old record is reported with its path in the stored document.
 *
 * Version 0 is the pre-release layout: runs under `runs`, a label called `name`, the time as
 * epoch milliseconds, the engine as `name@version`, the source fields flat in the run, the
 * statistics settings absent (only an optional `surrogates`), and camel-case measure names.
 * No released Polyadic wrote it; it is kept so the migration path is exercised by a real
 * step before the first layout change after 1.
 *
 * Version 1 → 2: the co-information field of a summary multiplet is `co_information` (was
 * `coinformation`), as in the CLI's JSON and `polyadic.results()`; multiplets may carry their
 * evidence (p, q, null, intervals, connected information, adequacy); `statistics` holds the
 * settings the engine ran with and is absent when no evidence was computed. Version 1's
 * `statistics` was never the engine's: the panel wrote the schema's defaults (200 surrogates)
 * although no surrogate ran, so the step drops it rather than carry a claim nothing backs.
 */

import V1_LAYOUT from './layouts/record-v1.schema.json';
import { compileValidator, type ValidationResult } from './validate';
import { RECORD_ID_PATTERN } from './schema';
import { FINGERPRINT_ENCODING, RECORD_VERSION, type IRecordProblem } from './types';

/** One step from a layout version to the next. */
export interface IMigration {
  from: number;
  to: number;
  /** Check a stored document of version `from`. */
  validate(document: unknown): ValidationResult<unknown>;
  /** The document in layout `to`; receives a copy it may change. */
  migrate(document: unknown): unknown;
}

/** What reading a stored record's version gave. */
export type MigrationOutcome =
  /** Current layout (or migrated to it): still to be checked against the schema. */
  | { status: 'current'; document: unknown; fromVersion: number }
  /** A layout newer than this code knows. */
  | { status: 'newer'; version: number; notice: string }
  /** Not a record at all, an unknown old version, or an old layout that fails its schema. */
  | { status: 'invalid'; problems: IRecordProblem[] };

/**
 * Bring a stored record to the current layout (`current`, by default {@link RECORD_VERSION}),
 * applying `migrations` one step at a time. The input is never changed; a migrated document is
 * a new object. A current one is returned as it is (the caller validates it).
 */
export function migrateRecord(
  stored: unknown,
  migrations: readonly IMigration[] = MIGRATIONS,
  current: number = RECORD_VERSION
): MigrationOutcome {
  if (typeof stored !== 'object' || stored === null || Array.isArray(stored)) {
    return invalid('', "The Polyadic record must be an object such as { \"version\": 1, \"analyses\": [] }.");
  }
  const version = (stored as { version?: unknown }).version;
  if (typeof version !== 'number' || !Number.isInteger(version) || version < 0) {
    return invalid('/version', `/version must be a whole number ≥ 0 (the record layout version), not ${JSON.stringify(version) ?? 'missing'}.`);
  }
  if (version > current) {
    return {
      status: 'newer',
      version,
      notice:
        `This notebook's Polyadic record has layout version ${version}, newer than the version ` +
        `${current} this Polyadic reads. It is shown read-only; update Polyadic to change it.`
    };
  }
  let document: unknown = stored;
  let at = version;
  while (at < current) {
    const step = migrations.find(migration => migration.from === at && migration.to > at);
    if (!step) {
      return invalid('/version', `/version is ${at}, a layout this Polyadic cannot read (no migration from it).`);
    }
    const checked = step.validate(document);
    if (!checked.ok) {
      return {
        status: 'invalid',
        problems: checked.problems.map(problem => ({
          path: problem.path,
          message: `${problem.message} (in a record of layout version ${at})`
        }))
      };
    }
    document = step.migrate(JSON.parse(JSON.stringify(document)));
    at = step.to;
  }
  return { status: 'current', document, fromVersion: version };
}

function invalid(path: string, message: string): MigrationOutcome {
  return { status: 'invalid', problems: [{ path, message }] };
}

/** The layout of version 0 (see the file comment). */
export const RECORD_SCHEMA_V0 = {
  $schema: 'https://json-schema.org/draft/2020-12/schema',
  $id: 'urn:jupyterlab-polyadic:record:0',
  description: 'Pre-release layout of the Polyadic record (version 0), read only to migrate it.',
  type: 'object',
  additionalProperties: false,
  required: ['version', 'runs'],
  properties: {
    version: { const: 0 },
    runs: { type: 'array', items: { $ref: '#/$defs/run' } }
  },
  $defs: {
    measures: {
      type: 'object',
      additionalProperties: false,
      required: ['columns', 'order', 'entropy', 'coInformation', 'totalCorrelation', 'dualTotalCorrelation', 'oInformation'],
      properties: {
        columns: { type: 'array', items: { type: 'string' } },
        order: { type: 'integer' },
        entropy: { type: 'number' },
        coInformation: { type: 'number' },
        totalCorrelation: { type: 'number' },
        dualTotalCorrelation: { type: 'number' },
        oInformation: { type: 'number' }
      }
    },
    run: {
      type: 'object',
      additionalProperties: false,
      required: [
        'id',
        'name',
        'timestamp',
        'engine',
        'frame',
        'rows',
        'fingerprint',
        'columns',
        'bins',
        'missing',
        'estimator',
        'units',
        'max_order',
        'top'
      ],
      properties: {
        id: { type: 'string', pattern: RECORD_ID_PATTERN },
        name: { type: 'string' },
        timestamp: { type: 'integer', minimum: 0, maximum: 8.64e15 },
        engine: { type: 'string', pattern: '^[^@]+@[^@]+$' },
        frame: { type: 'string' },
        rows: { type: 'integer', minimum: 0 },
        fingerprint: { type: 'string', pattern: '^[0-9a-f]{64}$' },
        columns: {
          type: 'array',
          items: {
            type: 'object',
            additionalProperties: false,
            required: ['name', 'dtype', 'kind'],
            properties: {
              name: { type: 'string' },
              dtype: { type: 'string' },
              kind: { enum: ['numeric', 'categorical'] }
            }
          }
        },
        bins: {
          type: 'array',
          items: {
            type: 'object',
            additionalProperties: false,
            required: ['name', 'method', 'spec', 'bins'],
            properties: {
              name: { type: 'string' },
              method: { type: 'string' },
              spec: { type: 'string' },
              bins: { type: 'integer' },
              edges: { type: 'array', items: { type: 'number' } },
              categories: { type: 'array', items: { type: 'string' } },
              missing_code: { type: 'integer' }
            }
          }
        },
        missing: { type: 'string' },
        estimator: { type: 'string' },
        units: { type: 'string' },
        max_order: { type: 'integer' },
        surrogates: { type: 'integer' },
        top: {
          type: 'object',
          additionalProperties: false,
          required: ['synergy', 'redundancy', 'count', 'rowsUsed'],
          properties: {
            synergy: { type: 'array', items: { $ref: '#/$defs/measures' } },
            redundancy: { type: 'array', items: { $ref: '#/$defs/measures' } },
            count: { type: 'integer' },
            rowsUsed: { type: 'integer' }
          }
        }
      }
    }
  }
} as const;

/** Version 0 → 1 (see the file comment for what changed). */
export const MIGRATE_V0_TO_V1: IMigration = {
  from: 0,
  to: 1,
  validate: compileValidator(RECORD_SCHEMA_V0 as unknown as object),
  migrate(document: unknown): unknown {
    const old = document as Private.IRecordV0;
    return {
      version: 1,
      analyses: old.runs.map(run => {
        const at = run.engine.indexOf('@');
        // version 0 had no statistics settings beyond `surrogates`: version 1's schema defaults fill them
        const statistics = { ...Private.V1_STATISTICS_DEFAULTS, ...(run.surrogates !== undefined ? { surrogates: run.surrogates } : {}) };
        const analysis: Record<string, unknown> = {
          id: run.id,
          label: run.name,
          created: new Date(run.timestamp).toISOString(),
          engine: { name: run.engine.slice(0, at), version: run.engine.slice(at + 1) },
          source: {
            frame: run.frame,
            rows: run.rows,
            columns: run.columns,
            fingerprint: { encoding: FINGERPRINT_ENCODING, sha256: run.fingerprint }
          },
          columns: run.columns.map(column => column.name),
          binning: run.bins,
          missing: run.missing,
          estimator: run.estimator,
          units: run.units,
          max_order: run.max_order,
          statistics,
          summary: {
            synergy: run.top.synergy.map(Private.measuresV1),
            redundancy: run.top.redundancy.map(Private.measuresV1),
            multiplet_count: run.top.count,
            rows_used: run.top.rowsUsed
          }
        };
        return analysis;
      })
    };
  }
};

/** The layout of version 1 (frozen: src/record/layouts/record-v1.schema.json). */
export const RECORD_SCHEMA_V1: object = V1_LAYOUT;

/** Version 1 → 2 (see the file comment for what changed). */
export const MIGRATE_V1_TO_V2: IMigration = {
  from: 1,
  to: 2,
  validate: compileValidator(RECORD_SCHEMA_V1),
  migrate(document: unknown): unknown {
    const old = document as { analyses: Record<string, unknown>[] };
    return {
      version: 2,
      analyses: old.analyses.map(analysis => {
        const { statistics: _placeholder, summary, ...rest } = analysis as { statistics: unknown; summary: Private.ISummaryV1 };
        void _placeholder;
        return {
          ...rest,
          summary: {
            ...summary,
            synergy: summary.synergy.map(Private.multipletV2),
            redundancy: summary.redundancy.map(Private.multipletV2)
          }
        };
      })
    };
  }
};

/** Every migration step, oldest first. */
export const MIGRATIONS: readonly IMigration[] = [MIGRATE_V0_TO_V1, MIGRATE_V1_TO_V2];

/** Module-private helpers. */
namespace Private {
  /** A multiplet in version 0. */
  export interface IMeasuresV0 {
    columns: string[];
    order: number;
    entropy: number;
    coInformation: number;
    totalCorrelation: number;
    dualTotalCorrelation: number;
    oInformation: number;
  }

  /** One run in version 0. */
  export interface IRunV0 {
    id: string;
    name: string;
    timestamp: number;
    engine: string;
    frame: string;
    rows: number;
    fingerprint: string;
    columns: { name: string; dtype: string; kind: string }[];
    bins: Record<string, unknown>[];
    missing: string;
    estimator: string;
    units: string;
    max_order: number;
    surrogates?: number;
    top: { synergy: IMeasuresV0[]; redundancy: IMeasuresV0[]; count: number; rowsUsed: number };
  }

  /** The whole record in version 0. */
  export interface IRecordV0 {
    version: 0;
    runs: IRunV0[];
  }

  /** The defaults version 1's schema declared for its statistics settings. */
  export const V1_STATISTICS_DEFAULTS = { surrogates: 200, seed: 1, bootstrap: 0, alpha: 0.05 };

  /** A version-1 summary: multiplets with `coinformation`. */
  export interface ISummaryV1 {
    synergy: Record<string, unknown>[];
    redundancy: Record<string, unknown>[];
    [key: string]: unknown;
  }

  /** A version-1 summary multiplet with the version-2 field names (key order kept). */
  export function multipletV2(old: Record<string, unknown>): Record<string, unknown> {
    return Object.fromEntries(Object.entries(old).map(([key, value]) => [key === 'coinformation' ? 'co_information' : key, value]));
  }

  /** A version-0 multiplet with the version-1 field names. */
  export function measuresV1(old: IMeasuresV0): Record<string, unknown> {
    return {
      columns: old.columns,
      order: old.order,
      entropy: old.entropy,
      coinformation: old.coInformation,
      total_correlation: old.totalCorrelation,
      dual_total_correlation: old.dualTotalCorrelation,
      o_information: old.oInformation
    };
  }
}
