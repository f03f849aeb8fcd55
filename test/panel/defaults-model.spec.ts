/**
 * DefaultsModel and describeSettings: the panel's list of settings, in the schema's words.
 */
import schemaJson from '../../schema/settings/plugin.json';
import { DefaultsModel, describeSettings } from '../../src/panel/defaults/model';
import { IPolyadicSettings } from '../../src/tokens';

const properties = schemaJson.properties as Record<string, { default: unknown }>;
const defaults = Object.fromEntries(
  Object.entries(properties).map(([key, property]) => [key, property.default])
) as unknown as IPolyadicSettings;

describe('describeSettings', () => {
  it('should list every property in schema order', () => {
    const rows = describeSettings(schemaJson, { ...defaults });
    expect(rows.map(row => row.key)).toEqual(Object.keys(properties));
  });

  it('should label rows with the schema titles', () => {
    const rows = describeSettings(schemaJson, { ...defaults });
    expect(rows.find(row => row.key === 'rowCap')?.label).toBe('Row cap');
    expect(rows.find(row => row.key === 'alpha')?.label).toBe('False discovery rate');
  });

  it('should show an enum value by the title of its choice', () => {
    const rows = describeSettings(schemaJson, { ...defaults, estimator: 'chao-shen' });
    expect(rows.find(row => row.key === 'estimator')?.value).toBe(
      'Chao–Shen coverage adjustment'
    );
  });

  it('should group the digits of integers and leave fractions alone', () => {
    const rows = describeSettings(schemaJson, { ...defaults, multipletCap: 16777216 });
    expect(rows.find(row => row.key === 'multipletCap')?.value).toBe('16,777,216');
    expect(rows.find(row => row.key === 'alpha')?.value).toBe('0.05');
  });

  it('should show a value outside the choices as it is', () => {
    const rows = describeSettings(schemaJson, { ...defaults, units: 'bans' });
    expect(rows.find(row => row.key === 'units')?.value).toBe('bans');
  });

  it('should fall back to the key when a property has no title', () => {
    const rows = describeSettings({ properties: { depth: { type: 'integer' } } }, { depth: 3 });
    expect(rows).toEqual([{ key: 'depth', label: 'depth', value: '3' }]);
  });

  it('should return no rows for a schema without properties', () => {
    expect(describeSettings({}, {})).toEqual([]);
  });
});

describe('DefaultsModel', () => {
  describe('#update', () => {
    it('should store the settings and their rows, and signal once', () => {
      const model = new DefaultsModel();
      let signals = 0;
      model.changed.connect(() => signals++);
      model.update(schemaJson, defaults);
      expect(signals).toBe(1);
      expect(model.settings?.estimator).toBe(defaults.estimator);
      expect(model.rows).toHaveLength(Object.keys(properties).length);
      expect(model.error).toBeNull();
    });

    it('should keep its own copy of the settings', () => {
      const model = new DefaultsModel();
      const settings = { ...defaults };
      model.update(schemaJson, settings);
      settings.rowCap = 5;
      expect(model.settings?.rowCap).toBe(defaults.rowCap);
    });
  });

  describe('#fail', () => {
    it('should clear the settings and keep the message', () => {
      const model = new DefaultsModel();
      model.update(schemaJson, defaults);
      model.fail('Settings could not be loaded.');
      expect(model.settings).toBeNull();
      expect(model.rows).toEqual([]);
      expect(model.error?.message).toBe('Settings could not be loaded.');
    });
  });

  describe('#dispose', () => {
    it('should disconnect listeners', () => {
      const model = new DefaultsModel();
      let signals = 0;
      model.changed.connect(() => signals++);
      model.dispose();
      model.update(schemaJson, defaults);
      expect(model.isDisposed).toBe(true);
      expect(signals).toBe(0);
    });
  });
});
