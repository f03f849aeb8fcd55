/**
 * The settings schema (schema/settings/plugin.json) against JupyterLab's own plugin meta-schema and
 * the rules of STYLE.md: every property titled, described and defaulted; enums as oneOf.
 */
import type { ISettingRegistry } from '@jupyterlab/settingregistry';
import pluginMetaSchema from '@jupyterlab/settingregistry/lib/plugin-schema.json';
import Ajv from 'ajv';

import schemaJson from '../../schema/settings/plugin.json';
import { IPolyadicSettings } from '../../src/tokens';

const schema = schemaJson as unknown as ISettingRegistry.ISchema;
const properties = schema.properties as Record<string, Record<string, unknown>>;

/** Every field of IPolyadicSettings; the compiler rejects this object if one is missing. */
const settingKeys: Record<keyof IPolyadicSettings, true> = {
  rowCap: true,
  multipletCap: true,
  estimator: true,
  units: true,
  missing: true,
  numericBinning: true,
  maxOrderRule: true,
  fixedMaxOrder: true,
  surrogates: true,
  seed: true,
  alpha: true
};

/**
 * Validate `user` settings the way JupyterLab's settings registry does: the steps and Ajv
 * options of DefaultSchemaValidator in @jupyterlab/settingregistry 4.5
 * (lib/settingregistry.js), repeated here because jest does not load that package's
 * ES-module build. The schema must pass the plugin meta-schema and the JSON Schema
 * meta-schema; the user data is validated, then completed with the defaults.
 */
function validate(user: Record<string, unknown>): {
  errors: unknown[] | null;
  composite: Record<string, unknown>;
} {
  const validator = new Ajv({ strict: false });
  const composer = new Ajv({ strict: false, useDefaults: true });
  const checkPlugin = validator.compile(pluginMetaSchema);
  if (!checkPlugin(schema)) {
    return { errors: checkPlugin.errors ?? [], composite: {} };
  }
  if (!validator.validateSchema(schema)) {
    return { errors: validator.errors ?? [], composite: {} };
  }
  const check = validator.compile(schema);
  if (!check(user)) {
    return { errors: check.errors ?? [], composite: {} };
  }
  const composite = structuredClone(user);
  const compose = composer.compile(schema);
  if (!compose(composite)) {
    return { errors: compose.errors ?? [], composite: {} };
  }
  return { errors: null, composite };
}

/**
 * The schema without JupyterLab's `jupyter.lab.*` annotations, which Ajv's strict mode
 * cannot register (keyword names may not contain dots); every other unknown keyword, such
 * as a misspelt `minimun`, is an error in strict mode.
 */
function withoutJupyterKeys(value: Record<string, unknown>): Record<string, unknown> {
  return Object.fromEntries(
    Object.entries(value).filter(([key]) => !key.startsWith('jupyter.'))
  );
}

describe('schema/settings/plugin.json', () => {
  it('should declare exactly the fields of IPolyadicSettings', () => {
    expect(Object.keys(properties).sort()).toEqual(Object.keys(settingKeys).sort());
  });

  it('should forbid properties it does not declare', () => {
    expect(schema.additionalProperties).toBe(false);
    expect(validate({ rowCaps: 10 }).errors).not.toBeNull();
  });

  it('should give every property a title, a description and a default', () => {
    for (const [key, property] of Object.entries(properties)) {
      expect([key, typeof property.title]).toEqual([key, 'string']);
      expect([key, typeof property.description]).toEqual([key, 'string']);
      expect([key, 'default' in property]).toEqual([key, true]);
    }
  });

  it('should write enums as oneOf with const and title', () => {
    for (const [key, property] of Object.entries(properties)) {
      expect([key, 'enum' in property]).toEqual([key, false]);
      if (Array.isArray(property.oneOf)) {
        for (const choice of property.oneOf as Record<string, unknown>[]) {
          expect([key, 'const' in choice, typeof choice.title]).toEqual([key, true, 'string']);
        }
      }
    }
  });

  it('should compile under strict JSON Schema rules, with defaults that validate', () => {
    const check = new Ajv({ strict: true, allErrors: true }).compile(
      withoutJupyterKeys(schemaJson)
    );
    const defaults = Object.fromEntries(
      Object.entries(properties).map(([key, property]) => [key, property.default])
    );
    expect(check(defaults)).toBe(true);
  });

  it('should fill in the documented defaults when the user set nothing', () => {
    const { errors, composite } = validate({});
    expect(errors).toBeNull();
    // The caps stated in the issue text: 2,000,000 rows and 2^24 multiplets.
    expect(composite.rowCap).toBe(2_000_000);
    expect(composite.multipletCap).toBe(2 ** 24);
    expect(composite.units).toBe('bits');
  });

  it('should accept every estimator the engine implements', () => {
    const engineEstimators: IPolyadicSettings['estimator'][] = [
      'plugin',
      'miller-madow',
      'chao-shen',
      'shrinkage',
      'gaussian-copula'
    ];
    for (const estimator of engineEstimators) {
      expect(validate({ estimator }).errors).toBeNull();
    }
    expect(validate({ estimator: 'bayesian' }).errors).not.toBeNull();
  });

  it('should accept binning specs of the glossary and refuse malformed ones', () => {
    for (const spec of ['auto', 'quantile:4', 'width:10', 'kmeans:3', 'fd', 'doane', 'sqrt']) {
      expect([spec, validate({ numericBinning: spec }).errors]).toEqual([spec, null]);
    }
    for (const spec of ['quantile:0', 'quantile:', 'width:x', 'categorical', 'fd ', 'edges:1,2', 'auto:3']) {
      expect([spec, validate({ numericBinning: spec }).errors === null]).toEqual([spec, false]);
    }
  });

  it('should refuse out-of-range numbers', () => {
    expect(validate({ alpha: 0 }).errors).not.toBeNull();
    expect(validate({ alpha: 1.5 }).errors).not.toBeNull();
    expect(validate({ rowCap: 0 }).errors).not.toBeNull();
    expect(validate({ fixedMaxOrder: 1 }).errors).not.toBeNull();
    expect(validate({ surrogates: -1 }).errors).not.toBeNull();
    expect(validate({ seed: 2.5 }).errors).not.toBeNull();
  });
});
