/**
 * @jest-environment jsdom
 *
 * A section given a translator shows the translated strings of its bundle: JupyterLab's own
 * Gettext reads a small catalogue of the extension's domain (in the Jed JSON layout that
 * JupyterLab's language packs serve), and the view asks for it by domain.
 */
import './jsdom-shim';

import { SourceModel } from '../../src/panel/source/model';

import { SourceView } from '../../src/panel/source/view';
import { TRANSLATION_DOMAIN } from '../../src/translation';
import { translatorWith } from '../translator';

describe('SourceView', () => {
  it('should show the empty state in the translator’s language', () => {
    const translator = translatorWith({
      Notebook: ['Notebook (fr)'],
      'No notebook is open': ['Aucun notebook n’est ouvert'],
      'New notebook': ['Nouveau notebook']
    });
    const view = new SourceView({ model: new SourceModel(), onNewNotebook: () => undefined, translator });
    expect(translator.domains).toContain(TRANSLATION_DOMAIN);
    expect(view.title.label).toBe('Notebook (fr)');
    expect(view.node.querySelector('.pd-EmptyState-title')?.textContent).toBe('Aucun notebook n’est ouvert');
    expect(view.node.querySelector('button')?.textContent).toBe('Nouveau notebook');
    // a string the catalogue lacks stays as written
    expect(view.node.querySelector('.pd-EmptyState-text')?.textContent).toMatch(/^Polyadic works on a dataframe/);
    view.dispose();
  });

  it('should show the strings as written without a translator', () => {
    const view = new SourceView({ model: new SourceModel() });
    expect(view.title.label).toBe('Notebook');
    expect(view.node.querySelector('.pd-EmptyState-title')?.textContent).toBe('No notebook is open');
    view.dispose();
  });
});

describe('Gettext', () => {
  // the plural rule of the catalogue picks the form; %2 is the formatted count (%1 is n itself)
  it('should pick the plural form of the catalogue for trans._n', () => {
    const trans = translatorWith({ '%2 row': ['%2 ligne', '%2 lignes'] }).load(TRANSLATION_DOMAIN);
    expect(trans._n('%2 row', '%2 rows', 1, '1')).toBe('1 ligne');
    expect(trans._n('%2 row', '%2 rows', 1200, '1,200')).toBe('1,200 lignes');
  });
});

