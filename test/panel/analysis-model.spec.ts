/**
 * The analysis model that ties the sections together: choices that belong to one notebook,
 * the highest order lowered to the selected columns (and said so).
 */
import * as fs from 'fs';
import * as path from 'path';

import type { IAnalyzeOptions } from '../../src/engine/types';
import { AnalysisModel, type IEngineRunner } from '../../src/panel/analysis/model';
import { EstimatorModel } from '../../src/panel/estimator/model';
import type { IPolyadicSettings } from '../../src/tokens';

/** The settings as the Settings Editor gives them with nothing changed: the schema's defaults. */
function defaultSettings(): IPolyadicSettings {
  const schema = JSON.parse(fs.readFileSync(path.join(__dirname, '..', '..', 'schema', 'settings', 'plugin.json'), 'utf8')) as {
    properties: Record<string, { default: unknown }>;
  };
  return Object.fromEntries(Object.entries(schema.properties).map(([key, property]) => [key, property.default])) as unknown as IPolyadicSettings;
}

/** An engine that is never asked to run here. */
const idleEngine: IEngineRunner = {
  analyze: (_columns, _options: IAnalyzeOptions) => Promise.reject(new Error('not in this test')),
  preview: () => Promise.reject(new Error('not in this test')),
  cancel: () => undefined
};

describe('AnalysisModel', () => {
  describe('#setNotebook', () => {
    it('should keep each notebook’s estimator, units and maximum order with that notebook', () => {
      const model = new AnalysisModel({ engine: idleEngine });
      const settings = defaultSettings();
      model.applySettings(settings);
      model.setNotebook('notebook-a');
      model.estimator.maxOrder = 18;
      model.estimator.estimator = 'plugin';
      model.estimator.units = 'nats';

      // another notebook starts from the settings, not from the first notebook's choices
      model.setNotebook('notebook-b');
      expect(model.estimator.choices).toEqual({ estimator: settings.estimator, units: settings.units, maxOrder: null });
      model.estimator.maxOrder = 4;

      model.setNotebook('notebook-a');
      expect(model.estimator.choices).toEqual({ estimator: 'plugin', units: 'nats', maxOrder: 18 });
      model.setNotebook('notebook-b');
      expect(model.estimator.maxOrder).toBe(4);
      model.dispose();
    });

    it('should let a notebook whose choices were never touched follow new settings', () => {
      const model = new AnalysisModel({ engine: idleEngine });
      model.applySettings(defaultSettings());
      model.setNotebook('notebook-a');
      model.setNotebook('notebook-b');
      model.applySettings({ ...defaultSettings(), estimator: 'shrinkage' });
      expect(model.estimator.estimator).toBe('shrinkage');
      model.setNotebook('notebook-a');
      expect(model.estimator.estimator).toBe('shrinkage');
      model.dispose();
    });
  });
});

describe('EstimatorModel', () => {
  describe('#orderClamp', () => {
    it('should say when the order asked for is above the selected columns', () => {
      const model = new EstimatorModel();
      expect(model.orderClamp(16)).toBeNull();
      model.maxOrder = 17;
      expect(model.effectiveMaxOrder(16)).toBe(16);
      expect(model.orderClamp(16)).toEqual({ asked: 17, used: 16, source: 'choice' });
      expect(model.orderClamp(17)).toBeNull();
      model.maxOrder = null;
      model.setRule('fixed', 5);
      expect(model.orderClamp(3)).toEqual({ asked: 5, used: 3, source: 'settings' });
      // the automatic rule never asks for more than there is
      model.setRule('auto', 3);
      expect(model.orderClamp(2)).toBeNull();
    });
  });
});
