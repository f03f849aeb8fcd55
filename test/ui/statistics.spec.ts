/**
 * Browser test of the evidence against chance in a real JupyterLab with a real kernel: the
 * Statistics section refuses a bad count naming it (as the CLI refuses the flag) and blocks
 * Run; a run with one-sided surrogates gives the synergy table q and p columns, the planted
 * parity triplet first with q ≤ α, a "q ≤ α only" filter that keeps only such rows, and a null
 * band on every order histogram; the saved record holds the settings the engine ran with.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';

import { execute, focusResults, openLab, openNotebookAndPanel, openSection, polyadicPanel, resultsView } from './helpers';
import { ARTIFACTS } from './paths';

test.describe.configure({ mode: 'serial' });

const TRIPLET = ['flowing', 'leak_alarm', 'valve_command'];

let page: Page;

function section(title: string): Locator {
  return polyadicPanel(page).getByRole('region', { name: `${title} Section`, exact: true });
}

function results(): Locator {
  return resultsView(page);
}

test.beforeAll(async ({ browser }) => {
  test.setTimeout(300_000);
  page = await browser.newPage();
  await openLab(page, 'statistics');
  await openNotebookAndPanel(page, 'results.ipynb');
  // the notebook's kernel may still hold the frame from another test file: run the cells either way
  await expect(page.locator('.jp-Notebook-ExecutionIndicator[data-status="idle"]').first()).toBeVisible({ timeout: 90_000 }).catch(() => undefined);
  await execute(page, 'notebook:run-all-cells');
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption('results_frame', { timeout: 120_000 });
  await expect(panel.getByRole('button', { name: 'Run', exact: true })).toBeEnabled({ timeout: 120_000 });
});

test.afterAll(async () => {
  await page.close();
});

test('should start from the settings’ surrogates and refuse a count that is not a number, blocking Run', async () => {
  const statistics = section('Statistics');
  await openSection(page, 'Statistics');
  const surrogates = statistics.getByRole('textbox', { name: 'Surrogates', exact: true });
  // the settings' default (schema/settings/plugin.json)
  await expect(surrogates).toHaveValue('100');
  await expect(statistics.locator('.pd-Statistics-estimate')).toContainText('rough estimate');
  await surrogates.fill('ten');
  await expect(statistics.getByRole('alert')).toHaveText("The number of surrogates must be a number, not 'ten'.");
  await expect(surrogates).toHaveAttribute('aria-invalid', 'true');
  await expect(polyadicPanel(page).getByRole('button', { name: 'Run', exact: true })).toBeDisabled();
  await expect(polyadicPanel(page).locator('.pd-Run-hint')).toContainText('Statistics:');
  await surrogates.fill('499');
  await statistics.getByRole('combobox', { name: 'Tail', exact: true }).selectOption('synergy');
  await statistics.getByRole('textbox', { name: 'Seed', exact: true }).fill('5');
  await expect(statistics.getByRole('alert')).toBeHidden();
  await expect(surrogates).toHaveAttribute('aria-invalid', 'false');
});

test('should run with surrogates: q and p in the synergy table, the triplet first with q ≤ α, a null band per order', async () => {
  const panel = polyadicPanel(page);
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done', { timeout: 120_000 });
  await focusResults(page);
  const synergy = results().locator('.pd-ResultsTable-synergy');
  // the compact columns carry q and p; every measure (the null's mean among them) one tick away
  // the view fills its tables in slices after the run is done: poll until the columns are there
  await expect
    .poll(() => synergy.locator('thead th').allTextContents(), { timeout: 60_000 })
    .toEqual(expect.arrayContaining(['Co-information', 'q', 'p']));
  await synergy.getByRole('checkbox', { name: 'Every measure', exact: true }).check();
  await expect(synergy.locator('thead th', { hasText: 'Null mean' })).toHaveCount(1);
  const headers = await synergy.locator('thead th').allTextContents();
  const qColumn = headers.indexOf('q');
  const first = synergy.locator('tbody tr').first();
  expect((await first.locator('.pd-ResultsTable-name').allTextContents()).sort()).toEqual(TRIPLET);
  const q = Number(await first.locator('td').nth(qColumn).textContent());
  expect(q).toBeGreaterThan(0);
  expect(q).toBeLessThanOrEqual(0.05);
  // p of a one-sided test cannot go below 1/(N + 1)
  const p = Number(await first.locator('td').nth(headers.indexOf('p')).textContent());
  expect(p).toBeGreaterThanOrEqual(1 / 500 - 1e-9);
  await expect(results().getByRole('note').first()).toContainText('Benjamini–Hochberg over 120 multiplets of orders 2–7');
  await expect(results().getByRole('note').first()).toContainText('one-sided (synergy side)');

  // the "q ≤ α only" filter keeps only rows whose q is at most 0.05, the triplet among them
  const status = synergy.locator('.pd-ResultsTable-status');
  const before = await status.textContent();
  await synergy.getByRole('checkbox', { name: /Only q ≤ α \(0\.05\)/ }).check();
  await expect(status).not.toHaveText(before ?? '');
  await expect(status).toContainText('filtered from');
  const qs = await synergy.locator(`tbody tr td:nth-child(${qColumn + 1})`).allTextContents();
  expect(qs.length).toBeGreaterThan(0);
  for (const text of qs) {
    expect(Number(text)).toBeLessThanOrEqual(0.05);
  }

  const histograms = results().locator('.pd-Histogram');
  await expect(histograms).toHaveCount(6);
  for (let i = 0; i < 6; i++) {
    await expect(histograms.nth(i).locator('.pd-Histogram-convention')).toContainText('Grey band: where 95 % of the independence surrogates fall');
  }
  await expect(histograms.first().locator('text', { hasText: 'null 95 %' }).first()).toBeAttached();
  await page.screenshot({ path: `${ARTIFACTS}/statistics-results.png`, fullPage: true });
});

test('should record the settings the engine ran with, in the notebook’s metadata', async () => {
  const record = await page.evaluate(() => {
    type Doc = { content?: { model?: { getMetadata(key: string): unknown } } };
    // the notebook, wherever the focus is (the results view beside it takes it when clicked)
    const shell = (window as unknown as { jupyterapp: { shell: { widgets(area: string): Iterable<Doc> } } }).jupyterapp.shell;
    const notebook = [...shell.widgets('main')].find(widget => widget.content?.model?.getMetadata !== undefined);
    return notebook?.content?.model?.getMetadata('polyadic') as
      | { version: number; analyses: { statistics?: Record<string, unknown>; summary: { synergy: Record<string, unknown>[] } }[] }
      | undefined;
  });
  expect(record?.version).toBe(2);
  const last = record!.analyses[record!.analyses.length - 1];
  expect(last.statistics).toEqual({ surrogates: 499, seed: 5, bootstrap: 0, tail: 'synergy', alpha: 0.05, beyond_pairs: 0, fit_draws: 0, sharpen: 0 });
  expect(typeof last.summary.synergy[0].q_value).toBe('number');
});
