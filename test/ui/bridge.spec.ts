/**
 * Browser test of the kernel bridge in a real JupyterLab with a real kernel: the fixture
 * notebook bridge.ipynb builds a pandas frame with missing values planted at known rows,
 * without importing polyadic; the panel imports it silently, lists the frame, shows the
 * planted missing counts, runs, and sends the multiplet table back, which the notebook's
 * second cell reads with `polyadic.results()`.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';

import { execute, openLab, openNotebookAndPanel, polyadicPanel, resultsView } from './helpers';

test.describe.configure({ mode: 'serial' });

/** Rows of the fixture frame: one day of 10-minute rows. */
const ROWS = 144;
/** Missing values planted per column in bridge.ipynb (the index lists written there). */
const PLANTED_MISSING: Record<string, number> = {
  soil_moisture_pct: 3,
  door_openings: 2,
  bed_zone: 1,
  sensor_note: 4
};
/** The three columns the test analyses; the planted gaps fall on 6 different rows. */
const SELECTED = ['soil_moisture_pct', 'door_openings', 'bed_zone'];
const ROWS_WITH_A_GAP = 6;

let page: Page;

/** The code cells of the open notebook, in order. */
function codeCells(): Locator {
  return page.locator('.jp-NotebookPanel .jp-CodeCell');
}

test.beforeAll(async ({ browser }) => {
  page = await browser.newPage();
  await openLab(page, 'bridge');
  await openNotebookAndPanel(page, 'bridge.ipynb');
  // The bridge is ready (polyadic imported silently) once the panel says the kernel has no frame.
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
});

test.afterAll(async () => {
  await page.close();
});

test('should list a frame made by a cell that does not import polyadic', async () => {
  await codeCells().first().click();
  await execute(page, 'notebook:run-cell');
  await expect(codeCells().first().locator('.jp-InputPrompt')).toHaveText('[1]:', { timeout: 60_000 });
  const picker = polyadicPanel(page).getByRole('combobox', { name: 'Dataframe', exact: true });
  await expect(picker).toBeVisible({ timeout: 60_000 });
  await expect(picker.locator('option', { hasText: 'log_gaps' })).toHaveText(
    `log_gaps (${ROWS} rows × 4 columns, pandas)`
  );
});

test('should show the planted missing counts and the source types of the columns', async () => {
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption('log_gaps');
  for (const [name, missing] of Object.entries(PLANTED_MISSING)) {
    const row = panel.locator('.pd-Data-row', { has: page.getByRole('checkbox', { name: `Use column ${name}`, exact: true }) });
    // Columns of the row: use, name, type, distinct, missing.
    await expect(row.locator('td').nth(4)).toHaveText(String(missing), { timeout: 30_000 });
  }
  const typeOf = (name: string) =>
    panel.locator('.pd-Data-row', { has: page.getByRole('checkbox', { name: `Use column ${name}`, exact: true }) }).locator('td').nth(2);
  await expect(typeOf('soil_moisture_pct')).toHaveText('float64 (numeric)');
  await expect(typeOf('door_openings')).toHaveText('Int64 (numeric)');
  await expect(typeOf('bed_zone')).toHaveText('category (categorical)');
  await expect(typeOf('sensor_note')).toContainText('(string)');
  // 3 categories planted, none of them missing.
  await expect(
    panel.locator('.pd-Data-row', { has: page.getByRole('checkbox', { name: 'Use column bed_zone', exact: true }) }).locator('td').nth(3)
  ).toHaveText('3');
});

test('should run on three columns with the defaults', async () => {
  const panel = polyadicPanel(page);
  for (const name of Object.keys(PLANTED_MISSING)) {
    const box = panel.getByRole('checkbox', { name: `Use column ${name}`, exact: true });
    await box.setChecked(SELECTED.includes(name));
  }
  // 3 columns: 2^3 − 1 multiplets.
  await expect(panel.getByText('7 multiplets of order 1 to 3 among 3 columns.')).toBeVisible();
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.getByText(new RegExp(`^7 multiplets computed from ${ROWS} rows of log_gaps`))).toBeVisible({
    timeout: 60_000
  });
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done');
  // The default missing-value policy drops a row with a gap in any selected column.
  await expect(resultsView(page).getByText(`${ROWS - ROWS_WITH_A_GAP} rows used of ${ROWS}`, { exact: false })).toBeVisible();
});

test('should hand the multiplet table to the kernel and leave the history alone', async () => {
  const cell = codeCells().nth(1);
  await cell.click();
  await execute(page, 'notebook:run-cell');
  const output = cell.locator('.jp-OutputArea-output');
  await expect(output).toContainText('rows:', { timeout: 60_000 });
  // The user's two cells are In[1] and In[2]: the silent import took no execution count.
  await expect(codeCells().first().locator('.jp-InputPrompt')).toHaveText('[1]:');
  await expect(cell.locator('.jp-InputPrompt')).toHaveText('[2]:');
  const text = (await output.allInnerTexts()).join('\n');
  expect(text).toContain('bound: False loaded: True history: 2');
  // The multiplet fields of polyadic/_results.py (MULTIPLET_FIELDS) lead the table.
  const columns = /columns: \[(.*)\]/.exec(text);
  expect(columns).not.toBeNull();
  const names = columns![1].split(', ').map(name => name.replace(/^'|'$/g, ''));
  expect(names.slice(0, 8)).toEqual([
    'columns',
    'order',
    'entropy',
    'co_information',
    'total_correlation',
    'dual_total_correlation',
    'o_information',
    's_information'
  ]);
  expect(text).toContain('rows: 7');
  expect(text).toContain('orders: [(1, 3), (2, 3), (3, 1)]');
});
