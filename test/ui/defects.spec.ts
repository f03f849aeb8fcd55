/**
 * Browser tests of defects found by trying the panel as a new user, in a real JupyterLab with
 * real kernels: integer-coded columns keep their values under the default binning (and a spec
 * that merges them says so in the column's row), the "Polyadic cell" toolbar button leaves the
 * keyboard to the notebook, a refused Run looks disabled and says the count with grouped digits,
 * the highest order stays with its notebook and a lowered one is said, and the "data changed"
 * banner shows as soon as a run reads changed data. Fixtures: defects.ipynb, defects-other.ipynb.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';
import path from 'node:path';

import { execute, openLab, openNotebookAndPanel, polyadicPanel, resultsView, runNotebookCells } from './helpers';
import { ARTIFACTS } from './paths';

test.describe.configure({ mode: 'serial' });

let page: Page;

/** The part of the exposed application a test uses to run code in the current notebook's kernel. */
interface IShellWithKernel {
  shell: {
    currentWidget: {
      sessionContext: { session: { kernel: { requestExecute(content: { code: string }): { done: Promise<unknown> } } } };
    };
  };
}

/** Run `code` in the current notebook's kernel, as a cell would, and wait until it has run. */
async function runInKernel(code: string): Promise<void> {
  await page.evaluate(async source => {
    const app = window.jupyterapp as unknown as IShellWithKernel;
    await app.shell.currentWidget.sessionContext.session.kernel.requestExecute({ code: source }).done;
  }, code);
}

/** Pick a frame in the Dataframe section and wait until its columns have loaded. */
async function pickFrame(name: string, firstColumn: string): Promise<void> {
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption(name);
  await expect(panel.getByRole('checkbox', { name: `Use column ${firstColumn}`, exact: true })).toBeVisible({ timeout: 60_000 });
  await expect(panel.getByRole('button', { name: 'Run', exact: true })).toBeEnabled({ timeout: 60_000 });
}

/** Press Run and wait until the run has ended and been recorded. */
async function run(): Promise<void> {
  const panel = polyadicPanel(page);
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done', { timeout: 60_000 });
}

/** The Binning row of a column. */
function binningRow(column: string): Locator {
  return polyadicPanel(page).locator('.pd-Binning-row', { has: page.getByLabel(`Binning of column ${column}`, { exact: true }) });
}

test.beforeAll(async ({ browser }) => {
  page = await browser.newPage();
  await openLab(page, 'defects');
  await openNotebookAndPanel(page, 'defects.ipynb');
  await runNotebookCells(page);
  await expect(polyadicPanel(page).getByRole('combobox', { name: 'Dataframe', exact: true })).toBeVisible({ timeout: 60_000 });
});

test.afterAll(async () => {
  await page.close();
});

test('should keep 0/1 and 0/1/2 integer columns as categories by default and find their planted XOR', async () => {
  await pickFrame('spikes', 'spike_a');
  for (const column of ['spike_a', 'spike_b', 'spike_c']) {
    await expect(binningRow(column).locator('.pd-Binning-result')).toHaveText('→ 2 categories (each value kept)');
    await expect(binningRow(column).locator('.pd-Binning-rowWarning')).toHaveCount(0);
  }
  await expect(binningRow('genotype').locator('.pd-Binning-result')).toHaveText('→ 3 categories (each value kept)');
  await run();
  // the results view fills its tables in slices after the run is done: poll until the first row is there
  const first = resultsView(page).locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').first();
  await expect
    .poll(async () => (await first.locator('.pd-ResultsTable-name').allTextContents()).sort(), { timeout: 60_000 })
    .toEqual(['spike_a', 'spike_b', 'spike_c']);

  // an explicit spec that merges the values of such a column says so in the column's row
  const input = polyadicPanel(page).getByLabel('Binning of column spike_a', { exact: true });
  await input.fill('quantile:4');
  await expect(binningRow('spike_a').locator('.pd-Binning-result')).toHaveText('→ 1 bin');
  const warning = binningRow('spike_a').locator('.pd-Binning-rowWarning').first();
  await expect(warning).toContainText("Column 'spike_a' has only 2 distinct values, and quantile:4 merges them into 1 bin");
  // where the person looks: in the column's row, on screen once the section is scrolled to it
  await warning.scrollIntoViewIfNeeded();
  await expect(warning).toBeInViewport();
  await polyadicPanel(page).locator('.pd-Binning').screenshot({ path: path.join(ARTIFACTS, 'binning-merged-row.png') });
  await input.fill('auto');
  await expect(binningRow('spike_a').locator('.pd-Binning-rowWarning')).toHaveCount(0);
});

test('should mark the Binning row whose edges leave values outside, and keep it marked after the run they refuse', async () => {
  const panel = polyadicPanel(page);
  const input = panel.getByLabel('Binning of column genotype', { exact: true });
  const row = binningRow('genotype');
  await expect(row).not.toHaveClass(/pd-mod-fault/);
  // well-formed edges, so Run is not blocked by the text; the genotypes 0, 1, 2 all lie outside them
  await input.fill('edges:5,6');
  await expect(row).toHaveClass(/pd-mod-fault/);
  await expect(input).toHaveAttribute('aria-invalid', 'true');
  await expect(row.locator('.pd-Binning-problem')).toContainText("Column 'genotype' has the value");
  await expect(row.locator('.pd-Binning-problem')).toContainText('outside the edges 5 … 6');
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'error', { timeout: 60_000 });
  await expect(panel.locator('.pd-Run-status')).toContainText("Column 'genotype'");
  // with another row focused, the row at fault stays marked; the other rows are not
  await panel.getByLabel('Binning of column spike_a', { exact: true }).focus();
  await expect(row).toHaveClass(/pd-mod-fault/);
  await expect(binningRow('spike_a')).not.toHaveClass(/pd-mod-fault/);
  await polyadicPanel(page).locator('.pd-Binning').screenshot({ path: path.join(ARTIFACTS, 'binning-row-at-fault.png') });
  await input.fill('auto');
  await expect(row).not.toHaveClass(/pd-mod-fault/);
  await expect(input).toHaveAttribute('aria-invalid', 'false');
  await run();
});

test('should leave the keyboard to the notebook after the Polyadic cell toolbar button', async () => {
  // The results views of the runs above share the main area with the notebook, whose toolbar
  // then folds its last buttons into its overflow menu: close them, the notebook takes the width.
  const resultTabs = page.locator('.lm-DockPanel-tabBar .lm-TabBar-tab', { hasText: 'Results: ' });
  while ((await resultTabs.count()) > 0) {
    await resultTabs.first().locator('.lm-TabBar-tabCloseIcon').click();
  }
  const cells = page.locator('.jp-NotebookPanel .jp-Notebook .jp-Cell');
  const before = await cells.count();
  await cells.first().click();
  const button = page.locator('.jp-NotebookPanel-toolbar').getByRole('button', { name: 'Polyadic cell' });
  await expect(button).toBeEnabled();
  await button.click();
  await expect(cells).toHaveCount(before + 1);
  const inserted = cells.nth(1);
  await expect(inserted.locator('.jp-InputArea-editor')).toContainText('polyadic.show("pd-');
  expect(await button.evaluate(node => node.contains(document.activeElement))).toBe(false);
  await page.keyboard.press('Shift+Enter');
  // the new cell ran (its output is the analysis, drawn by the extension); no other cell came
  await expect(inserted.locator('.pd-AnalysisCell')).toBeVisible({ timeout: 60_000 });
  await expect(cells).toHaveCount(before + 1);
});

test('should raise the data changed banner of the chosen record as soon as a run reads changed data', async () => {
  await pickFrame('drift', 'x');
  await run();
  const records = polyadicPanel(page).locator('.pd-Records');
  const chosen = records.locator('.pd-Records-item.jp-mod-selected');
  const first = (await chosen.getAttribute('data-record-id')) ?? '';
  expect(first).toMatch(/^pd-/);
  await expect(chosen.locator('.pd-Records-banner')).toHaveCount(0);

  await runInKernel('shift_drift()');
  await run();
  // the record read before the change says so at once, without picking the frame again
  const before = records.locator(`.pd-Records-item[data-record-id="${first}"]`);
  await expect(before.locator('.pd-Records-banner')).toHaveText("The data of 'drift' changed since this analysis was recorded (column 'x').");
  // the new run's record is chosen and is the data: no banner on it
  const now = records.locator('.pd-Records-item.jp-mod-selected');
  await expect(now).not.toHaveAttribute('data-record-id', first);
  await expect(now.locator('.pd-Records-banner')).toHaveCount(0);
});

test('should show a refused Run as disabled and give the multiplet count with grouped digits', async () => {
  await pickFrame('wide', 'flag_00');
  const panel = polyadicPanel(page);
  await panel.getByLabel('Maximum order', { exact: true }).fill('40');
  await expect(panel.getByText('1,099,511,627,775 multiplets of order 1 to 40 among 40 columns.')).toBeVisible();
  const button = panel.getByRole('button', { name: 'Run', exact: true });
  await expect(button).toBeDisabled();
  await expect(panel.locator('.pd-Run-hint')).toHaveText(
    '1,099,511,627,775 multiplets exceed the limit of 16,777,216 in the settings; lower the maximum order or select fewer columns.'
  );
  // JupyterLab's disabled look (its dialog buttons fade to 0.6) and cursor, not the pressable one
  const look = await button.evaluate(node => {
    const style = getComputedStyle(node);
    return { opacity: style.opacity, cursor: style.cursor };
  });
  expect(look).toEqual({ opacity: '0.6', cursor: 'not-allowed' });
  await panel.locator('.pd-Run').screenshot({ path: path.join(ARTIFACTS, 'run-refused.png') });
});

test('should keep the highest order with its notebook and say when an order is lowered', async () => {
  const panel = polyadicPanel(page);
  const order = panel.getByLabel('Maximum order', { exact: true });
  await order.fill('18');
  await expect(panel.getByText('of order 1 to 18 among 40 columns.', { exact: false })).toBeVisible();

  await execute(page, 'docmanager:open', { path: 'defects-other.ipynb' });
  // the shell's current document (a results view may hold the other tab bar's current tab)
  await expect(page.locator('.lm-DockPanel-tabBar .lm-TabBar-tab.jp-mod-current')).toContainText('defects-other.ipynb');
  await runNotebookCells(page);
  // the lone frame is picked by itself; the order is this notebook's own, from the settings
  await expect(panel.getByRole('checkbox', { name: 'Use column sensor_00', exact: true })).toBeVisible({ timeout: 60_000 });
  await expect(panel.getByText('696 multiplets of order 1 to 3 among 16 columns.')).toBeVisible();
  await expect(order).toHaveValue('');
  await order.fill('17');
  await expect(panel.locator('.pd-Estimator-clamp')).toHaveText(
    'Maximum order 17 is above the 16 selected columns, so order 16 is the highest computed.'
  );
  await expect(panel.getByText('65,535 multiplets of order 1 to 16 among 16 columns.')).toBeVisible();

  await execute(page, 'docmanager:open', { path: 'defects.ipynb' });
  await expect(order).toHaveValue('18');
  await execute(page, 'docmanager:open', { path: 'defects-other.ipynb' });
  await expect(order).toHaveValue('17');
});
