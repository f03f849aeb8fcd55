/**
 * The text domain of Polyadic's user-facing strings and the bundle a widget or model reads them
 * from. Without a translator (unit tests, a JupyterLab without the translation plugin) the
 * strings stay as written.
 */
import { nullTranslator, type ITranslator, type TranslationBundle } from '@jupyterlab/translation';

/** The gettext domain of the extension's strings (the Python package's name). */
export const TRANSLATION_DOMAIN = 'jupyterlab_polyadic';

/** The bundle of Polyadic's strings in `translator`, or the strings as written without one. */
export function translationBundle(translator?: ITranslator | null): TranslationBundle {
  return (translator ?? nullTranslator).load(TRANSLATION_DOMAIN);
}

export type { ITranslator, TranslationBundle };
