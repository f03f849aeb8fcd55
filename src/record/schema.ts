/**
 * The JSON Schema (draft 2020-12) of the record that Polyadic keeps in a notebook's metadata
 * under the key `polyadic`. schema/record.schema.json is the same document as a file, for
 * people and tools outside the extension; a test keeps the two equal. It lives here as a
 * module because the front end and the CLI bundle it, and TypeScript's `rootDir` is `src/`.
 */

/** The `$id` of the record schema, version 2. */
export const RECORD_SCHEMA_ID = 'urn:jupyterlab-polyadic:record:2';

/** Pattern of a record id: `pd-` and 8 to 32 lower-case letters or digits. */
export const RECORD_ID_PATTERN = '^pd-[0-9a-z]{8,32}$';

/** The record schema, version 2 (src/record/layouts/ keeps the older layouts for migration). */
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
      description: 'Layout version of the record. Version 2 is described here.',
      const: 2
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
        statistics: {
          $ref: '#/$defs/statistics',
          description: 'The settings of the evidence against chance; absent when none was computed.'
        },
        summary: { $ref: '#/$defs/summary', description: 'The results, in brief.' },
        robustness: {
          $ref: '#/$defs/robustness',
          description:
            'The robustness run of the analysis: its variants, and how its top multiplets held across them; ' +
            'absent when none was run. Optional and additive, so version 2 stays: every record without it ' +
            'is unchanged (a Polyadic from before the block refuses a record holding it, and leaves it untouched).'
        }
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
    robustness: {
      description:
        'The analysis re-run under variants (another binning, estimator or missing-value policy): the settings, ' +
        'the verdicts on the top multiplets of each table and the agreement between every two variants.',
      type: 'object',
      additionalProperties: false,
      required: ['settings', 'results'],
      properties: {
        settings: {
          description: 'What the run compared.',
          type: 'object',
          additionalProperties: false,
          required: ['variants', 'top'],
          properties: {
            variants: {
              description:
                "The variants besides the base, each as its text: settings joined by ';', each KEY=VALUE with KEY " +
                'bins, bin.COLUMN, estimator or missing. The text is the label.',
              type: 'array',
              minItems: 1,
              maxItems: 100,
              uniqueItems: true,
              items: { type: 'string', minLength: 1, maxLength: 20000 }
            },
            top: {
              description: 'N: the base top N multiplets of each table are followed across the variants.',
              type: 'integer',
              minimum: 1,
              maximum: 1000
            }
          }
        },
        results: {
          description: 'The verdicts and the agreement.',
          type: 'object',
          additionalProperties: false,
          required: ['verdicts', 'agreement'],
          properties: {
            verdicts: {
              description: 'One per followed multiplet: the synergy table first, most negative first, then the redundancy table.',
              type: 'array',
              items: { $ref: '#/$defs/robustnessVerdict' }
            },
            agreement: {
              description: 'Rank agreement between every two variants (the base, labelled base, first).',
              type: 'array',
              items: { $ref: '#/$defs/robustnessAgreement' }
            }
          }
        }
      }
    },
    robustnessVerdict: {
      description:
        'One multiplet of the top N of a table under the base or a variant, followed across the variants. It holds ' +
        "under a variant when it has its table's sign (negative: synergy, positive: redundancy) and stays in that " +
        "variant's top N of the table; robust when the base and every variant give it that sign and it stays in the " +
        'top N under at least 80 % of the variants.',
      type: 'object',
      additionalProperties: false,
      required: ['columns', 'table', 'values', 'ranks', 'same_sign', 'in_base_top', 'in_top', 'holds', 'robust', 'verdict'],
      properties: {
        columns: {
          description: 'The multiplet (selected columns).',
          type: 'array',
          minItems: 2,
          items: { $ref: '#/$defs/columnName' }
        },
        table: {
          description: 'The table it is followed in.',
          enum: ['synergy', 'redundancy']
        },
        values: {
          description: 'Co-information per variant, the base first, in the units of the analysis (null: not a finite number).',
          type: 'array',
          items: { type: ['number', 'null'] }
        },
        ranks: {
          description: 'Rank per variant among the multiplets of order 2 and above, the base first; 1 = most negative, ties averaged.',
          type: 'array',
          items: { type: 'number' }
        },
        same_sign: {
          description: "Share of the variants (the base not counted) whose co-information has the table's sign.",
          type: 'number',
          minimum: 0,
          maximum: 1
        },
        in_base_top: {
          description: "Whether it is among the base's top N of its table (false: a variant's top N brought it in).",
          type: 'boolean'
        },
        in_top: {
          description: 'Per variant (the base not counted): whether it stays in the top N of its table.',
          type: 'array',
          items: { type: 'boolean' }
        },
        holds: {
          description: "Variants (the base not counted) under which it has its table's sign and stays in the top N.",
          type: 'integer',
          minimum: 0
        },
        robust: {
          description: "The verdict: the table's sign under the base and every variant, and in the top N under at least 80 % of the variants.",
          type: 'boolean'
        },
        verdict: {
          description: "The verdict in plain words, e.g. 'robust: holds in 9 of 10 variants'.",
          type: 'string',
          maxLength: 200
        }
      }
    },
    robustnessAgreement: {
      description: 'Rank agreement between two variants.',
      type: 'object',
      additionalProperties: false,
      required: ['a', 'b', 'kendall_tau', 'overlap_synergy', 'overlap_redundancy', 'overlap_of'],
      properties: {
        a: { description: 'Label of the first variant (base, or its text).', type: 'string', minLength: 1 },
        b: { description: 'Label of the second variant.', type: 'string', minLength: 1 },
        kendall_tau: {
          description: "Kendall's tau-b between their co-informations over every multiplet of order 2 and above (null when undefined).",
          type: ['number', 'null']
        },
        overlap_synergy: {
          description: 'How many of the first variant\'s most negative multiplets (overlap_of of them) are among the second\'s.',
          type: 'integer',
          minimum: 0
        },
        overlap_redundancy: {
          description: 'The same for the most positive multiplets.',
          type: 'integer',
          minimum: 0
        },
        overlap_of: {
          description: 'Length of each list compared: 10, or every multiplet when there are fewer; ties broken by the walk order.',
          type: 'integer',
          minimum: 0
        }
      }
    },
    statistics: {
      description:
        'The evidence against chance computed with the analysis: independence surrogates, ' +
        'bootstrap resamples, the pairwise-preserving null and the level.',
      type: 'object',
      additionalProperties: false,
      required: ['surrogates', 'seed', 'bootstrap', 'tail', 'alpha', 'beyond_pairs', 'fit_draws', 'sharpen'],
      properties: {
        surrogates: {
          description: 'Independence surrogates (each column shuffled on its own, the lattice walked again); 0 means none.',
          type: 'integer',
          minimum: 0,
          maximum: 100000
        },
        seed: {
          description: 'Seed of every random draw (surrogates, resamples, draws from the fits).',
          type: 'integer',
          minimum: 0,
          maximum: 4294967295
        },
        bootstrap: {
          description: 'Bootstrap resamples of the rows for percentile intervals; 0 means none.',
          type: 'integer',
          minimum: 0,
          maximum: 100000
        },
        tail: {
          description: 'Tail of the surrogate p-values: two-sided, or only the synergy (negative) or redundancy (positive) side.',
          enum: ['two', 'synergy', 'redundancy']
        },
        alpha: {
          description: 'Level: false discovery rate of the "q below alpha" filters; intervals cover 1 − alpha.',
          type: 'number',
          exclusiveMinimum: 0,
          exclusiveMaximum: 1
        },
        beyond_pairs: {
          description: 'Multiplets of order 3 and above per table that got the pairwise-preserving null; 0 means none.',
          type: 'integer',
          minimum: 0,
          maximum: 1000
        },
        fit_draws: {
          description: 'Parametric-bootstrap draws from each maximum-entropy fit.',
          type: 'integer',
          minimum: 0,
          maximum: 100000
        },
        sharpen: {
          description: 'Fresh surrogates for each multiplet whose p-value sat at its floor 1/(N + 1); 0 means none.',
          type: 'integer',
          minimum: 0,
          maximum: 1000000
        }
      }
    },
    evidence: {
      description: 'What the evidence of an analysis was computed over: the tested families, the null bands, the counts.',
      type: 'object',
      additionalProperties: false,
      required: ['families', 'null_bands', 'interval_level', 'sharpened', 'bootstrap_multiplets'],
      properties: {
        families: {
          description: 'The families over which q-values control the false discovery rate (null when not tested).',
          type: 'object',
          additionalProperties: false,
          required: ['co_information', 'o_information'],
          properties: {
            co_information: { $ref: '#/$defs/family', description: 'Co-information tests (orders 2 and above).' },
            o_information: { $ref: '#/$defs/family', description: 'O-information tests (orders 3 and above).' }
          }
        },
        null_bands: {
          description: 'Per order, the 2.5 % and 97.5 % quantiles and the mean of the surrogate co-information.',
          type: 'array',
          maxItems: 1000,
          items: { $ref: '#/$defs/nullBand' }
        },
        interval_level: {
          description: 'Level of the bootstrap intervals, 1 − alpha.',
          type: 'number',
          minimum: 0,
          maximum: 1
        },
        sharpened: {
          description: 'Multiplets whose p-value was refined with fresh surrogates.',
          type: 'integer',
          minimum: 0
        },
        bootstrap_multiplets: {
          description: 'Multiplets that got bootstrap intervals.',
          type: 'integer',
          minimum: 0
        },
        fitted: {
          description: 'Multiplets fitted for the pairwise-preserving null (present when it was asked for).',
          type: 'integer',
          minimum: 0
        },
        refused: {
          description: 'Multiplets the pairwise-preserving null refused, and why (e.g. a joint table too large).',
          type: 'array',
          maxItems: 2000,
          items: { $ref: '#/$defs/refusal' }
        }
      }
    },
    nullBand: {
      description: 'The null band of one order.',
      type: 'object',
      additionalProperties: false,
      required: ['order', 'low', 'high', 'mean', 'values'],
      properties: {
        order: { description: 'Multiplet order.', type: 'integer', minimum: 2 },
        low: { description: '2.5 % quantile of the surrogate co-information.', type: 'number' },
        high: { description: '97.5 % quantile of the surrogate co-information.', type: 'number' },
        mean: { description: 'Mean surrogate co-information.', type: 'number' },
        values: { description: 'Surrogate values behind the band.', type: 'integer', minimum: 0 }
      }
    },
    refusal: {
      description: 'A multiplet the pairwise-preserving null refused.',
      type: 'object',
      additionalProperties: false,
      required: ['columns', 'reason'],
      properties: {
        columns: { description: 'Its columns.', type: 'array', items: { $ref: '#/$defs/columnName' } },
        reason: { description: 'Why it was refused.', type: 'string', maxLength: 2000 }
      }
    },
    family: {
      description: 'A family of tests (the orders tested and how many multiplets), or null when none was tested.',
      type: ['object', 'null'],
      additionalProperties: false,
      required: ['orders', 'count'],
      properties: {
        orders: {
          description: 'Orders in the family.',
          type: 'array',
          items: { type: 'integer', minimum: 2 }
        },
        count: { description: 'Multiplets tested.', type: 'integer', minimum: 0 }
      }
    },
    evidenceValue: {
      description: 'A value of the evidence, or null where it was not computed for this multiplet.',
      type: ['number', 'null']
    },
    multiplet: {
      description: 'One multiplet and its measures, in the units of the analysis.',
      type: 'object',
      additionalProperties: false,
      required: [
        'columns',
        'order',
        'entropy',
        'co_information',
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
        co_information: {
          description: 'Co-information (Bell 2003 sign: negative means synergy dominates).',
          type: 'number'
        },
        total_correlation: { description: 'Total correlation (Watanabe 1960).', type: 'number' },
        dual_total_correlation: { description: 'Dual total correlation (Han 1978).', type: 'number' },
        o_information: { description: 'O-information (Rosas et al. 2019).', type: 'number' },
        adequacy: { $ref: '#/$defs/evidenceValue', description: 'Rows per possible joint cell; below 1 the sample cannot fill the joint table.' },
        p_value: { $ref: '#/$defs/evidenceValue', description: 'Surrogate p-value of co-information.' },
        q_value: { $ref: '#/$defs/evidenceValue', description: 'Benjamini–Hochberg q-value of co-information over its family.' },
        p_surrogates: { $ref: '#/$defs/evidenceValue', description: 'Surrogates behind p_value (more when sharpened).' },
        null_mean: { $ref: '#/$defs/evidenceValue', description: 'Mean surrogate co-information.' },
        null_sd: { $ref: '#/$defs/evidenceValue', description: 'Standard deviation of the surrogate co-information.' },
        co_information_corrected: { $ref: '#/$defs/evidenceValue', description: 'Co-information minus the surrogate mean.' },
        o_information_p_value: { $ref: '#/$defs/evidenceValue', description: 'Surrogate p-value of O-information.' },
        o_information_q_value: { $ref: '#/$defs/evidenceValue', description: 'Benjamini–Hochberg q-value of O-information over its family.' },
        o_information_null_mean: { $ref: '#/$defs/evidenceValue', description: 'Mean surrogate O-information.' },
        o_information_null_sd: { $ref: '#/$defs/evidenceValue', description: 'Standard deviation of the surrogate O-information.' },
        ci_low: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap percentile interval of co-information, lower end.' },
        ci_high: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap percentile interval of co-information, upper end.' },
        same_sign: { $ref: '#/$defs/evidenceValue', description: 'Share of bootstrap resamples whose co-information has the observed sign.' },
        entropy_ci_low: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of the joint entropy, lower end.' },
        entropy_ci_high: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of the joint entropy, upper end.' },
        total_correlation_ci_low: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of total correlation, lower end.' },
        total_correlation_ci_high: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of total correlation, upper end.' },
        dual_total_correlation_ci_low: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of dual total correlation, lower end.' },
        dual_total_correlation_ci_high: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of dual total correlation, upper end.' },
        o_information_ci_low: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of O-information, lower end.' },
        o_information_ci_high: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of O-information, upper end.' },
        s_information_ci_low: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of S-information, lower end.' },
        s_information_ci_high: { $ref: '#/$defs/evidenceValue', description: 'Bootstrap interval of S-information, upper end.' },
        connected_information: { $ref: '#/$defs/evidenceValue', description: 'Connected information of the order of the multiplet: entropy of the maximum-entropy fit to its lower-order marginals minus its own.' },
        connected_p_value: { $ref: '#/$defs/evidenceValue', description: 'Parametric-bootstrap p-value of the connected information.' }
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
        },
        inadequate_count: {
          description: 'Multiplets of order 2 and above with adequacy below 1 (fewer rows than possible joint cells).',
          type: 'integer',
          minimum: 0
        },
        evidence: { $ref: '#/$defs/evidence', description: 'What the evidence was computed over; present with statistics.' }
      }
    }
  }
} as const;
