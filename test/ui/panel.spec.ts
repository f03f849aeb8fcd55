/**
 * Browser tests of the Polyadic side panel in a real JupyterLab (see playwright.config.ts).
 */
import { expect, type Locator, type Page, test } from '@playwright/test';
import path from 'node:path';

import { execute, openLab, polyadicPanel } from './helpers';
import { ARTIFACTS } from './paths';

/**
 * Open JupyterLab in a workspace of its own (no notebook left open by another test), wait
 * until the application has started and restored its layout, and until its launcher has the focus.
 */
async function openLabAtLauncher(page: Page, workspace: string): Promise<void> {
  await openLab(page, workspace);
  await expect(page.locator('#jp-main-dock-panel')).toBeVisible();
  // A new workspace opens a launcher, which takes the focus just after the layout is
  // restored; a palette opened before that would close again at once.
  await expect(page.locator('.jp-Launcher')).toBeFocused();
}

/** Run a command the way a user does: Ctrl+Shift+C, type, pick the item. */
async function runFromPalette(page: Page, label: string): Promise<void> {
  const palette = page.locator('#modal-command-palette');
  const search = palette.getByRole('textbox');
  // The modal palette closes when it loses the focus; open it again if a widget that was
  // still settling took the focus away.
  await expect(async () => {
    if (await palette.isHidden()) {
      await page.keyboard.press('Control+Shift+C');
    }
    await expect(search).toBeFocused({ timeout: 2_000 });
  }).toPass({ timeout: 20_000 });
  await search.fill(label);
  // Items are menuitem or, for toggles such as themes, menuitemcheckbox; the label element
  // is the common ground.
  await palette
    .locator('.lm-CommandPalette-itemLabel')
    .getByText(label, { exact: true })
    .first()
    .click();
  await expect(palette).toBeHidden();
}

/** One accordion section of the panel, named after its title ("Notebook" → "Notebook Section"). */
function section(page: Page, title: string): Locator {
  return polyadicPanel(page).getByRole('region', { name: `${title} Section`, exact: true });
}

/**
 * Collect console errors and warnings, and uncaught page errors, that come from the
 * extension (its message or stack names it; its code is served under
 * /lab/extensions/jupyterlab-polyadic/). JupyterLab's own noise is not ours to fail on.
 */
function watchConsole(page: Page): string[] {
  const problems: string[] = [];
  page.on('console', message => {
    const where = `${message.text()} ${message.location().url}`;
    if (['error', 'warning'].includes(message.type()) && /polyadic/i.test(where)) {
      problems.push(`${message.type()}: ${message.text()}`);
    }
  });
  page.on('pageerror', error => {
    if (/polyadic/i.test(`${error.message}\n${error.stack ?? ''}`)) {
      problems.push(`page error: ${error.message}`);
    }
  });
  return problems;
}

test.describe('Polyadic panel', () => {
  test('should open from the command palette, show an empty state and follow the dark theme', async ({
    page
  }, testInfo) => {
    const problems = watchConsole(page);
    await openLabAtLauncher(page, 'panel-dark');

    await runFromPalette(page, 'Open Polyadic panel');
    const panel = polyadicPanel(page);
    await expect(panel).toBeVisible();
    await expect(panel.getByRole('heading', { name: 'Polyadic' })).toBeVisible();

    // No notebook is open in this workspace: the data section says what to do.
    const data = section(page, 'Notebook');
    await expect(data.getByRole('status')).toContainText('No notebook is open');
    await expect(data.getByRole('button', { name: 'New notebook' })).toBeVisible();
    // The defaults section lists the settings in the schema's words.
    const defaults = section(page, 'Defaults');
    await expect(defaults.getByText('Row cap', { exact: true })).toBeAttached();
    await expect(defaults.getByText('2,000,000', { exact: true })).toBeAttached();

    const lightBackground = await panel.evaluate(node => getComputedStyle(node).backgroundColor);
    await runFromPalette(page, 'Use Theme: JupyterLab Dark');
    await expect(page.locator('body')).toHaveAttribute('data-jp-theme-name', 'JupyterLab Dark');
    await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'false');
    // The panel's colours come from the theme variables, so they must change with it.
    await expect
      .poll(() => panel.evaluate(node => getComputedStyle(node).backgroundColor))
      .not.toBe(lightBackground);

    const screenshot = path.join(ARTIFACTS, 'panel-dark.png');
    await page.screenshot({ path: screenshot });
    await testInfo.attach('panel-dark', { path: screenshot, contentType: 'image/png' });

    // Back to the light theme, so later tests start from JupyterLab's default.
    await runFromPalette(page, 'Use Theme: JupyterLab Light');
    await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'true');
    expect(problems).toEqual([]);
  });

  test('should follow the open notebook and return to the empty state when it closes', async ({
    page
  }) => {
    const problems = watchConsole(page);
    await openLabAtLauncher(page, 'panel-notebook');
    await runFromPalette(page, 'Open Polyadic panel');
    const data = section(page, 'Notebook');
    await expect(data.getByRole('status')).toContainText('No notebook is open');

    await execute(page, 'docmanager:open', { path: 'followed.ipynb' });
    await expect(data.getByText('followed.ipynb', { exact: true })).toBeVisible();
    await expect(data.getByText(/Python 3 \(ipykernel\) \((idle|busy|starting)\)/)).toBeVisible({
      timeout: 60_000
    });
    await expect(data.getByRole('status')).toHaveCount(0);

    await execute(page, 'application:close-all');
    // The kernel filled in the notebook's language metadata, so JupyterLab asks to save.
    await page.getByRole('dialog').getByRole('button', { name: 'Discard' }).click();
    await expect(data.getByRole('status')).toContainText('No notebook is open');
    expect(problems).toEqual([]);
  });

  test('should show its sections expanded after a reload in which it was never opened', async ({
    page
  }) => {
    const workspace = 'panel-reload';
    await openLabAtLauncher(page, workspace);
    // Wait until JupyterLab has saved the layout with the panel closed in the right sidebar.
    await expect
      .poll(
        () =>
          page.evaluate(async name => {
            const reply = await fetch(`/lab/api/workspaces/${name}`);
            return JSON.stringify(await reply.json()).includes('pd-polyadic-panel');
          }, workspace),
        { timeout: 30_000 }
      )
      .toBe(true);

    await openLabAtLauncher(page, workspace);
    await runFromPalette(page, 'Open Polyadic panel');
    const titles = polyadicPanel(page).locator('.pd-Fold-title');
    await expect(titles.first()).toBeVisible();
    for (const title of await titles.all()) {
      await expect(title).toHaveAttribute('aria-expanded', 'true');
    }
    await expect(section(page, 'Notebook').getByRole('status')).toContainText('No notebook is open');
  });

  test('should list its settings in the Settings Editor', async ({ page }) => {
    const problems = watchConsole(page);
    await openLabAtLauncher(page, 'panel-settings');
    await runFromPalette(page, 'Open Polyadic panel');

    await section(page, 'Defaults').getByRole('button', { name: 'Edit settings' }).click();
    const editor = page.locator('.jp-SettingsPanel, .jp-SettingsEditor').first();
    await expect(editor).toBeVisible();
    const entry = page.locator('.jp-PluginList').getByText('Polyadic', { exact: true });
    await expect(entry).toBeVisible();
    await entry.click();
    await expect(page.getByText('Row cap', { exact: true }).last()).toBeVisible();
    await expect(page.getByText('Entropy estimator', { exact: true }).last()).toBeVisible();
    expect(problems).toEqual([]);
  });
});
