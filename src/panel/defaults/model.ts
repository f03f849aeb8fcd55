/**
 * State of the panel's defaults section: the user settings that new analyses start from,
 * described with the titles the settings schema gives them. No JupyterLab imports.
 */
import { ISignal, Signal } from '@lumino/signaling';

import { asPolyadicError, PolyadicError } from '../../engine/errors';
import { formatCount } from '../../engine/text';
import type { IPolyadicSettings } from '../../settings';
import { SignalOwner } from '../disposable';

/** One setting as the defaults section lists it. */
export interface IDefaultRow {
  /** Property name in schema/settings/plugin.json. */
  key: string;
  /** The property's title from the schema. */
  label: string;
  /** The current value, as the user reads it (the title of an enum choice). */
  value: string;
}

/**
 * Describe every property of a settings schema with its current value, in schema order.
 * Titles and choice names come from the schema, so the panel and the Settings Editor
 * use the same words.
 */
export function describeSettings(
  schema: { readonly properties?: unknown },
  values: { readonly [key: string]: unknown }
): IDefaultRow[] {
  const properties = Private.asRecord(schema.properties);
  return Object.keys(properties).map(key => {
    const property = Private.asRecord(properties[key]);
    const label = typeof property.title === 'string' ? property.title : key;
    return { key, label, value: Private.formatValue(property, values[key]) };
  });
}

/** Holds the current settings and signals every change of them. */
export class DefaultsModel extends SignalOwner {
  /** Emitted after the settings, their description or the load error changed. */
  get changed(): ISignal<this, void> {
    return this._changed;
  }

  /** The current settings; `null` until they are loaded or when loading failed. */
  get settings(): IPolyadicSettings | null {
    return this._settings;
  }

  /** The settings described for display, in schema order. */
  get rows(): readonly IDefaultRow[] {
    return this._rows;
  }

  /** Why the settings could not be loaded (its message is what the section shows), or `null`. */
  get error(): PolyadicError | null {
    return this._error;
  }

  /**
   * Take new settings. `schema` is the plugin's settings schema and `settings` the
   * composite values, which the settings registry has already validated against it.
   */
  update(schema: { readonly properties?: unknown }, settings: IPolyadicSettings): void {
    this._settings = { ...settings };
    this._rows = describeSettings(schema, { ...settings });
    this._error = null;
    this._changed.emit();
  }

  /** Record that the settings could not be loaded; the section shows `message` (`cause`: what failed). */
  fail(message: string, cause?: unknown): void {
    this._settings = null;
    this._rows = [];
    const origin = cause === undefined ? null : asPolyadicError(cause);
    this._error = new PolyadicError(origin?.kind ?? 'internal', message, origin?.detail);
    this._changed.emit();
  }

  private _settings: IPolyadicSettings | null = null;
  private _rows: IDefaultRow[] = [];
  private _error: PolyadicError | null = null;
  private _changed = new Signal<this, void>(this);
}

namespace Private {
  /** `value` if it is a plain object, else an empty one. */
  export function asRecord(value: unknown): { readonly [key: string]: unknown } {
    return typeof value === 'object' && value !== null && !Array.isArray(value)
      ? (value as { readonly [key: string]: unknown })
      : {};
  }

  /** A value as the user reads it: an enum choice by its title, integers grouped. */
  export function formatValue(
    property: { readonly [key: string]: unknown },
    value: unknown
  ): string {
    if (Array.isArray(property.oneOf)) {
      for (const choice of property.oneOf) {
        const option = asRecord(choice);
        if (option.const === value && typeof option.title === 'string') {
          return option.title;
        }
      }
    }
    if (typeof value === 'number') {
      return Number.isInteger(value) ? formatCount(value) : String(value);
    }
    if (typeof value === 'string') {
      return value;
    }
    return value === undefined ? '' : JSON.stringify(value);
  }
}
