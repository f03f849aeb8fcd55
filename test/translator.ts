/**
 * A translator for specs: JupyterLab's own Gettext over a small catalogue of the extension's
 * domain (in the Jed JSON layout that JupyterLab's language packs serve).
 */
import { Gettext, type ITranslator } from '@jupyterlab/translation';

import { TRANSLATION_DOMAIN } from '../src/translation';

/** A translator of one language holding one catalogue, for the extension's domain only. */
export function translatorWith(messages: Record<string, string[]>): ITranslator & { domains: string[] } {
  const bundle = new Gettext({ domain: TRANSLATION_DOMAIN, locale: 'fr' });
  bundle.loadJSON(
    { '': { language: 'fr', domain: TRANSLATION_DOMAIN, pluralForms: 'nplurals=2; plural=(n > 1);' }, ...messages },
    TRANSLATION_DOMAIN
  );
  const domains: string[] = [];
  return {
    languageCode: 'fr',
    domains,
    load: (domain: string) => {
      domains.push(domain);
      if (domain !== TRANSLATION_DOMAIN) {
        throw new Error(`no catalogue for ${domain}`);
      }
      return bundle;
    }
  };
}
