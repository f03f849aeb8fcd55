/**
 * Feeds the user settings of schema/settings/plugin.json into a {@link DefaultsModel} and keeps
 * them current while the user edits them.
 */
import { ISettingRegistry } from '@jupyterlab/settingregistry';

import type { IPolyadicSettings } from '../../settings';
import { DefaultsModel } from './model';

/**
 * Load the settings of `pluginId` into `model`, then follow their changes. A load failure
 * becomes a message in the model, never an exception in the panel.
 */
export async function followSettings(
  registry: ISettingRegistry,
  pluginId: string,
  model: DefaultsModel
): Promise<void> {
  let settings: ISettingRegistry.ISettings;
  try {
    settings = await registry.load(pluginId);
  } catch (reason) {
    model.fail(
      `Polyadic's settings could not be loaded (${Private.describe(reason)}); ` +
        'fix them in the Settings Editor.'
    );
    return;
  }
  const apply = (): void => {
    // The registry validated the composite against the schema, whose properties are
    // exactly the fields of IPolyadicSettings, with a default for each.
    model.update(settings.schema, settings.composite as unknown as IPolyadicSettings);
  };
  settings.changed.connect(apply);
  apply();
}

namespace Private {
  /** The message of an error of any shape. */
  export function describe(reason: unknown): string {
    if (reason instanceof Error) {
      return reason.message;
    }
    return typeof reason === 'string' ? reason : JSON.stringify(reason);
  }
}
