/**
 * The JSON Schema (draft 2020-12) of the record that Polyadic keeps in a notebook's metadata
 * under the key `polyadic`. schema/record.schema.json is the same document as a file, for
 * people and tools outside the extension; a test keeps the two equal. It lives here as a
 * module because the front end and the CLI bundle it, and TypeScript's `rootDir` is `src/`.
 */

/** The `$id` of the record schema, version 1. */
export const RECORD_SCHEMA_ID = 'urn:jupyterlab-polyadic:record:1';

/** Pattern of a record id: `pd-` and 8 to 32 lower-case letters or digits. */
export const RECORD_ID_PATTERN = '^pd-[0-9a-z]{8,32}$';

/** The record schema, version 1. */
export const RECORD_SCHEMA = {
  $schema: 'https://json-schema.org/draft/2020-12/schema',
  $id: RECORD_SCHEMA_ID,
  title: 'Polyadic record',
  description:
    'Analyses Polyadic ran on the dataframes of a notebook: their settings, a fingerprint of ' +
    'the data and a summary of the results, so that `polyadic verify` can re-derive every value.',
  type: 'object',
  additionalProperties: false,
  required: ['version', 'analyses'],
  properties: {
    version: {
      description: 'Layout version of the record. Version 1 is described here.',
      const: 1
    },
    analyses: {
      description: 'The analyses of the notebook, oldest first; ids are unique.',
      type: 'array',
      maxItems: 1000,
      items: { $ref: '#/$defs/analysis' }
    }
  },
  $defs: {
    recordId: {
      description:
        'Id of an analysis: `pd-` and 8 to 32 lower-case letters or digits. The strict form lets ' +
        'the id be written into a code cell without any quoting problem.',
      type: 'string',
      pattern: RECORD_ID_PATTERN
    },
    columnName: {
      description: 'A column name as the dataframe spells it.',
      type: 'string',
      maxLength: 1024
    },
    sha256: {
      description: 'A SHA-256 digest as 64 lower-case hexadecimal digits.',
      type: 'string',
      pattern: '^[0-9a-f]{64}$'
    },
    analysis: {
      description: 'One analysis: what was analysed, how, and its most synergistic and most redundant multiplets.',
      type: 'object',
      additionalProperties: false,
      required: [
        'id',
        'label',
        'created',
        'engine',
        'source',
        'columns',
        'binning',
        'missing',
        'estimator',
        'units',
        'max_order',
        'statistics',
        'summary'
      ],
      properties: {
        id: { $ref: '#/$defs/recordId', description: 'Unique id of the analysis within the notebook.' },
        label: {
          description: 'Name the person gave the analysis: one line of 1 to 200 characters.',
          type: 'string',
          minLength: 1,
          maxLength: 200,
          pattern: '^[^\\u0000-\\u001f\\u007f]+$'
        },
        created: {
          description: 'When the analysis ran, as an RFC 3339 date-time (UTC).',
          type: 'string',
          format: 'date-time'
        },
        engine: {
          description: 'The engine that computed the values.',
          type: 'object',
          additionalProperties: false,
          required: ['name', 'version'],
          properties: {
            name: { description: 'Engine name.', type: 'string', minLength: 1, maxLength: 100 },
            version: {
              description: 'Engine version; values must be identical under the same version.',
              type: 'string',
              pattern: '^[0-9A-Za-z][0-9A-Za-z.+-]{0,99}$'
            }
          }
        },
        source: { $ref: '#/$defs/source', description: 'The data the analysis read.' },
        columns: {
          description: 'The selected columns, in the order the analysis used them.',
          type: 'array',
          minItems: 1,
          uniqueItems: true,
          items: { $ref: '#/$defs/columnName' }
        },
        binning: {
          description: 'The binning of each selected column, in the order of `columns`.',
          type: 'array',
          minItems: 1,
          items: { $ref: '#/$defs/columnBinning' }
        },
        missing: {
          description:
            'Missing-value policy across the selected columns: drop the row, count missing as its ' +
            'own bin, or refuse.',
          enum: ['drop', 'category', 'error']
        },
        estimator: {
          description: 'Entropy estimator.',
          enum: ['plugin', 'miller-madow', 'chao-shen', 'shrinkage', 'gaussian-copula']
        },
        units: { description: 'Units of every information value.', enum: ['bits', 'nats'] },
        max_order: {
          description: 'Largest multiplet order computed.',
          type: 'integer',
          minimum: 1
        },
        statistics: { $ref: '#/$defs/statistics', description: 'Significance-testing settings.' },
        summary: { $ref: '#/$defs/summary', description: 'The results, in brief.' }
      }
    },
    source: {
      description: 'The dataframe an analysis read, and the fingerprint of the selected columns.',
      type: 'object',
      additionalProperties: false,
      required: ['frame', 'rows', 'columns', 'fingerprint'],
      properties: {
        frame: {
          description: 'Name of the dataframe (the kernel variable, or the file name for the CLI).',
          type: 'string',
          minLength: 1,
          maxLength: 200
        },
        rows: {
          description: 'Rows the engine read (after the row-cap sample, if any).',
          type: 'integer',
          minimum: 0
        },
        columns: {
          description: 'The selected columns as read: name, source type, how the engine read it, and its own digest.',
          type: 'array',
          minItems: 1,
          items: { $ref: '#/$defs/sourceColumn' }
        },
        sample: {
          description: 'Present when the frame had more rows than the row cap and a seeded random sample was read.',
          type: 'object',
          additionalProperties: false,
          required: ['seed', 'row_cap', 'original_rows'],
          properties: {
            seed: { description: "Seed of numpy's default_rng that drew the sample.", type: 'integer', minimum: 0 },
            row_cap: { description: 'Rows sampled.', type: 'integer', minimum: 1 },
            original_rows: { description: 'Rows of the whole frame.', type: 'integer', minimum: 1 }
          }
        },
        fingerprint: { $ref: '#/$defs/fingerprint', description: 'Fingerprint of the selected columns.' }
      }
    },
    sourceColumn: {
      description: 'One selected column as the engine read it.',
      type: 'object',
      additionalProperties: false,
      required: ['name', 'dtype', 'kind'],
      properties: {
        name: { $ref: '#/$defs/columnName', description: 'Column name.' },
        dtype: {
          description: "The source library's type name, e.g. float64, int32, bool, string.",
          type: 'string',
          maxLength: 200
        },
        kind: {
          description: 'How the engine read the column: as numbers or as categories.',
          enum: ['numeric', 'categorical']
        },
        sha256: {
          $ref: '#/$defs/sha256',
          description:
            "SHA-256 of the column's canonical encoding (docs/fingerprint.md), so a change can be " +
            'traced to a column. Absent in records migrated from version 0.'
        }
      }
    },
    fingerprint: {
      description: 'SHA-256 over the canonical encoding of the selected columns (docs/fingerprint.md).',
      type: 'object',
      additionalProperties: false,
      required: ['encoding', 'sha256'],
      properties: {
        encoding: { description: 'Name of the canonical encoding.', const: 'pdfp1' },
        sha256: { $ref: '#/$defs/sha256', description: 'The digest.' }
      }
    },
    columnBinning: {
      description: 'How one column was binned, and the resulting edges or categories.',
      type: 'object',
      additionalProperties: false,
      required: ['name', 'method', 'spec', 'bins'],
      properties: {
        name: { $ref: '#/$defs/columnName', description: 'Column name.' },
        method: {
          description: 'Binning method.',
          enum: ['width', 'quantile', 'fd', 'scott', 'sturges', 'rice', 'sqrt', 'doane', 'kmeans', 'edges', 'categorical', 'copula']
        },
        spec: {
          description: 'The binning spec as text, e.g. quantile:4 or edges:0,1.5,3.',
          type: 'string',
          minLength: 1,
          maxLength: 100000
        },
        bins: {
          description: 'Number of codes: bins or categories, plus one for missing under the policy `category`.',
          type: 'integer',
          minimum: 0
        },
        edges: {
          description: 'Bin edges of a numeric column, increasing.',
          type: 'array',
          minItems: 2,
          items: { type: 'number' }
        },
        categories: {
          description: 'Categories of a categorical column, in code order.',
          type: 'array',
          items: { type: 'string' }
        },
        missing_code: {
          description: 'The code of missing values under the policy `category`.',
          type: 'integer',
          minimum: 0
        }
      }
    },
    statistics: {
      description: 'Settings of the significance tests and confidence intervals.',
      type: 'object',
      additionalProperties: false,
      required: ['surrogates', 'seed', 'bootstrap', 'alpha'],
      properties: {
        surrogates: {
          description: 'Surrogate datasets per significance test, each column shuffled independently; 0 means no test.',
          type: 'integer',
          minimum: 0,
          maximum: 100000,
          default: 200
        },
        seed: {
          description: 'Seed of the surrogate shuffles and bootstrap resamples.',
          type: 'integer',
          minimum: 0,
          maximum: 4294967295,
          default: 1
        },
        bootstrap: {
          description: 'Bootstrap resamples of the rows for confidence intervals; 0 means none.',
          type: 'integer',
          minimum: 0,
          maximum: 100000,
          default: 0
        },
        alpha: {
          description: 'Benjamini–Hochberg false discovery rate.',
          type: 'number',
          exclusiveMinimum: 0,
          maximum: 1,
          default: 0.05
        }
      }
    },
    multiplet: {
      description: 'One multiplet and its measures, in the units of the analysis.',
      type: 'object',
      additionalProperties: false,
      required: [
        'columns',
        'order',
        'entropy',
        'coinformation',
        'total_correlation',
        'dual_total_correlation',
        'o_information'
      ],
      properties: {
        columns: {
          description: 'The columns of the multiplet.',
          type: 'array',
          minItems: 1,
          uniqueItems: true,
          items: { $ref: '#/$defs/columnName' }
        },
        order: { description: 'Number of columns.', type: 'integer', minimum: 1 },
        entropy: { description: 'Joint entropy.', type: 'number' },
        coinformation: {
          description: 'Co-information (Bell 2003 sign: negative means synergy dominates).',
          type: 'number'
        },
        total_correlation: { description: 'Total correlation (Watanabe 1960).', type: 'number' },
        dual_total_correlation: { description: 'Dual total correlation (Han 1978).', type: 'number' },
        o_information: { description: 'O-information (Rosas et al. 2019).', type: 'number' }
      }
    },
    histogram: {
      description: 'Order histogram: how the co-information of the multiplets of one order is distributed.',
      type: 'object',
      additionalProperties: false,
      required: ['order', 'edges', 'counts'],
      properties: {
        order: { description: 'Multiplet order.', type: 'integer', minimum: 2 },
        edges: {
          description: 'Bin edges, increasing (equal width from the smallest to the largest value).',
          type: 'array',
          minItems: 2,
          items: { type: 'number' }
        },
        counts: {
          description: 'Multiplets per bin; one fewer than the edges.',
          type: 'array',
          minItems: 1,
          items: { type: 'integer', minimum: 0 }
        }
      }
    },
    summary: {
      description: 'The results in brief.',
      type: 'object',
      additionalProperties: false,
      required: ['synergy', 'redundancy', 'multiplet_count', 'rows_used'],
      properties: {
        synergy: {
          description: 'Multiplets of order 2 and above with negative co-information, most negative first.',
          type: 'array',
          maxItems: 1000,
          items: { $ref: '#/$defs/multiplet' }
        },
        redundancy: {
          description: 'Multiplets of order 2 and above with positive co-information, most positive first.',
          type: 'array',
          maxItems: 1000,
          items: { $ref: '#/$defs/multiplet' }
        },
        multiplet_count: { description: 'Multiplets computed, all orders.', type: 'integer', minimum: 0 },
        rows_used: { description: 'Rows counted after the missing-value policy.', type: 'integer', minimum: 0 },
        histograms: {
          description: 'Order histograms of co-information, one per order from 2 up to the largest order.',
          type: 'array',
          maxItems: 1000,
          items: { $ref: '#/$defs/histogram' }
        }
      }
    }
  }
} as const;
