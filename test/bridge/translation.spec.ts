/**
 * @jest-environment jsdom
 *
 * The kernel bridge given a translator tells its states (what the Dataframe section shows) and
 * its request failures in the translator's language, with the names it quotes kept (under
 * jsdom: JupyterLab's Gettext reads the page's language).
 */
import '../panel/jsdom-shim';

import { KernelBridge } from '../../src/bridge/connector';
import type { BridgeError } from '../../src/bridge/errors';
import { translatorWith } from '../translator';
import { FakeSession } from './fakes';

describe('KernelBridge', () => {
  it('should tell its states and request failures in the translator’s language, the names it quotes kept', async () => {
    const translator = translatorWith({
      'This notebook has no kernel: start one to list its dataframes.': ['Ce notebook n’a pas de noyau.'],
      "Choose at least one column of '%1' to fetch.": ['Choisissez au moins une colonne de « %1 ».']
    });
    const bridge = new KernelBridge({ sessionContext: new FakeSession(null), translator });
    await new Promise(resolve => setTimeout(resolve, 0));
    expect(bridge.status.state).toBe('no-kernel');
    expect(bridge.status.message).toBe('Ce notebook n’a pas de noyau.');
    const refused = await bridge.fetch('df', []).then(
      () => null,
      (error: BridgeError) => error
    );
    expect(refused?.message).toBe('Choisissez au moins une colonne de « df ».');
    expect(refused?.detail.option).toBe('columns');
    bridge.dispose();
  });

  it('should keep its texts as written without a translator', () => {
    const bridge = new KernelBridge({ sessionContext: new FakeSession(null) });
    expect(bridge.status.message).toBe('This notebook has no kernel: start one to list its dataframes.');
    bridge.dispose();
  });
});
