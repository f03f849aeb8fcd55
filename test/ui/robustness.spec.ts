/**
 * Browser tests of the robustness section of the results view in a real JupyterLab with a real
 * kernel: the fixture notebook robustness.ipynb builds a frame with a planted parity triplet
 * (it holds under the default variants), a relation built on the quartiles of two soil probes
 * (it does not), a redundant humidity pair and a column named with markup. The tests run the
 * analysis with the defaults, check its robustness, read the table, the CSV and the rank chart,
 * see a bad variant named, and verify the saved notebook with `polyadic verify`.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

import { execute, focusResults, openLab, openNotebookAndPanel, polyadicPanel, resultsView } from './helpers';
import { ARTIFACTS, REPO } from './paths';

test.describe.configure({ mode: 'serial' });

const NOTEBOOK = 'robustness.ipynb';
const FRAME = 'robust_frame';
const MARKUP = '<img src=x onerror=alert(1)>';
const TRIPLET = 'valve_command, flowing, leak_alarm';
const QUARTILE_BUILT = 'soil_a_pct, soil_b_pct, drip_alarm';

let page: Page;
let dialogs = 0;

function section(): Locator {
  return resultsView(page).locator('.pd-Robustness');
}

/** The table row of a multiplet, by its name cell. */
function rowOf(name: string): Locator {
  return section().locator('.pd-Robustness-table tbody tr', { has: page.locator('th', { hasText: new RegExp(`^${name}$`) }) });
}

/** A file of the server root as the server reads it from disk (contents API). */
async function serverFile(name: string, format: 'json' | 'base64'): Promise<unknown> {
  const response = await page.request.get(`api/contents/${name}?content=1&type=file&format=${format === 'json' ? 'text' : 'base64'}`);
  expect(response.ok()).toBe(true);
  const content = ((await response.json()) as { content: string }).content;
  return format === 'json' ? JSON.parse(content) : Buffer.from(content, 'base64');
}

test.beforeAll(async ({ browser }) => {
  test.setTimeout(300_000);
  page = await browser.newPage();
  page.on('dialog', dialog => {
    dialogs++;
    void dialog.dismiss();
  });
  await openLab(page, 'robustness');
  await openNotebookAndPanel(page, NOTEBOOK);
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
  await execute(page, 'notebook:run-all-cells');
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption(FRAME);
  await expect(panel.getByRole('checkbox', { name: 'Use column valve_command', exact: true })).toBeVisible({ timeout: 60_000 });
  await expect(panel.getByRole('button', { name: 'Run', exact: true })).toBeEnabled({ timeout: 120_000 });
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done', { timeout: 60_000 });
  await focusResults(page);
});

test.afterAll(async () => {
  await page.close();
});

test('should prefill the default variants of the run, one per line', async () => {
  const variants = section().getByLabel(/^Variants, one per line/);
  await variants.scrollIntoViewIfNeeded();
  const lines = (await variants.inputValue()).split('\n');
  expect(lines).toEqual([
    expect.stringMatching(/^bin\.soil_a_pct=quantile:3;/),
    expect.stringMatching(/^bin\.soil_a_pct=quantile:5;/),
    expect.stringMatching(/^bin\.soil_a_pct=fd;/),
    expect.stringMatching(/^bin\.soil_a_pct=kmeans:4;/),
    // the base is the settings' default estimator, Miller–Madow: the other three
    'estimator=plugin',
    'estimator=chao-shen',
    'estimator=shrinkage'
  ]);
  // the markup column is a binned numeric column: it is named in the text, as text
  expect(lines[0]).toContain(`bin.${MARKUP}=quantile:3`);
  await expect(section().getByRole('button', { name: 'Reset to defaults' })).toBeDisabled();
});

test('should name the line of an unknown binning rule and run nothing', async () => {
  const variants = section().getByLabel(/^Variants, one per line/);
  const defaults = await variants.inputValue();
  await variants.fill(`${defaults}\nbins=octile:3`);
  await section().getByRole('button', { name: 'Check robustness' }).click();
  await expect(section().getByRole('status')).toContainText(`Line 8: Variant 'bins=octile:3'`);
  await expect(section().getByRole('status')).toContainText('"octile" is not a binning method');
  await expect(variants).toHaveAttribute('aria-invalid', 'true');
  await section().getByRole('button', { name: 'Reset to defaults' }).click();
  await expect(variants).toHaveValue(defaults);
});

test('should find the planted triplet robust and the quartile-built relation not robust', async () => {
  await section().getByRole('button', { name: 'Check robustness' }).click();
  await expect(section().getByRole('status')).toContainText('followed multiplets robust across 7 variants', { timeout: 120_000 });
  await expect(section().locator('.pd-Robustness-table tbody tr').first().locator('th')).toHaveText(TRIPLET);
  await expect(rowOf(TRIPLET).locator('td').last()).toHaveText(/^robust: holds in [67] of 7 variants$/);
  await expect(rowOf(QUARTILE_BUILT).locator('td').last()).toHaveText(/^not robust: holds in \d of 7 variants$/);
  await expect(rowOf('humidity_a_pct, humidity_b_pct').locator('td').last()).toHaveText('robust: holds in 7 of 7 variants');
  await expect(section().getByRole('status')).toContainText('Recorded in the notebook');
  await expect(section().locator('.pd-Robustness-pair').first()).toContainText(/^base vs V1: tau -?\d\.\d{3}; shared \d+ of 10 most negative/);
});

test('should show a markup column name as text in the table and the chart', async () => {
  const names = section().locator('.pd-Robustness-multiplet', { hasText: MARKUP });
  await expect(names.first()).toBeVisible();
  expect(await names.first().textContent()).toContain(MARKUP);
  await expect(resultsView(page).locator('img')).toHaveCount(0);
  expect(dialogs).toBe(0);
});

test('should draw the rank chart with one line per followed multiplet and export it', async () => {
  const chart = section().locator('.pd-Plot');
  await chart.scrollIntoViewIfNeeded();
  await expect(chart.locator('svg.main-svg').first()).toBeVisible();
  const rows = await section().locator('.pd-Robustness-table tbody tr').count();
  await expect(chart.locator('.scatterlayer .trace')).toHaveCount(rows);
  const downloadEvent = page.waitForEvent('download');
  await chart.getByRole('button', { name: /as SVG$/ }).click();
  const download = await downloadEvent;
  expect(download.suggestedFilename()).toMatch(/^polyadic-robust_frame-pd-[0-9a-z]{8,32}-robustness\.svg$/);
  await page.screenshot({ path: path.join(ARTIFACTS, 'robustness.png'), fullPage: false });
});

test('should export the table as CSV with its provenance and one rank column per variant', async () => {
  const downloadEvent = page.waitForEvent('download');
  await section().getByRole('button', { name: 'Export the robustness table as CSV', exact: true }).click();
  const download = await downloadEvent;
  expect(download.suggestedFilename()).toMatch(/^polyadic-robust_frame-pd-[0-9a-z]{8,32}-robustness\.csv$/);
  const all = readFileSync(await download.path(), 'utf8').split('\n');
  const comments = all.filter(line => line.startsWith('# '));
  for (const key of ['frame', 'record', 'estimator', 'table', 'rule', 'variant 1']) {
    expect(comments.some(line => line.startsWith(`# ${key}: `))).toBe(true);
  }
  const header = all[comments.length].split(',');
  expect(header.slice(0, 4)).toEqual(['columns', 'table', 'co_information[base]', 'rank[base]']);
  expect(header.filter(field => field.startsWith('rank['))).toHaveLength(8);
  expect(all[comments.length + 1]).toMatch(/^valve_command\|flowing\|leak_alarm,synergy,-/);
});

test('should save the robustness block and verify it from the data', async () => {
  // the clicks above left the focus in the results view: back to the notebook, then save it
  await page.locator('.lm-DockPanel-tabBar .lm-TabBar-tab', { hasText: NOTEBOOK }).click();
  await execute(page, 'docmanager:save');
  await expect(page.locator('.lm-DockPanel-tabBar .lm-TabBar-tab.jp-mod-dirty', { hasText: NOTEBOOK })).toHaveCount(0);
  const notebook = (await serverFile(NOTEBOOK, 'json')) as { metadata: { polyadic: { analyses: { id: string; robustness?: { settings: { top: number; variants: string[] } } }[] } } };
  const [analysis] = notebook.metadata.polyadic.analyses;
  expect(analysis.robustness?.settings.top).toBe(10);
  expect(analysis.robustness?.settings.variants).toHaveLength(7);
  const folder = mkdtempSync(path.join(os.tmpdir(), 'polyadic-ui-robustness-'));
  const notebookPath = path.join(folder, NOTEBOOK);
  const dataPath = path.join(folder, `${FRAME}.parquet`);
  writeFileSync(notebookPath, JSON.stringify(notebook));
  writeFileSync(dataPath, (await serverFile(`${FRAME}.parquet`, 'base64')) as Buffer);
  const cli = path.join(REPO, 'bin', 'polyadic.cjs');
  const same = spawnSync(process.execPath, [cli, 'verify', notebookPath, '--data', `${FRAME}=${dataPath}`], { encoding: 'utf8' });
  expect({ status: same.status, stdout: same.stdout }).toEqual({ status: 0, stdout: expect.stringContaining('1 of 1 analyses reproduce') });
  // one verdict flipped: verify names it
  const tampered = JSON.parse(JSON.stringify(notebook)) as { metadata: { polyadic: { analyses: { robustness: { results: { verdicts: { robust: boolean }[] } } }[] } } };
  const verdict = tampered.metadata.polyadic.analyses[0].robustness.results.verdicts[0];
  verdict.robust = !verdict.robust;
  writeFileSync(notebookPath, JSON.stringify(tampered));
  const changed = spawnSync(process.execPath, [cli, 'verify', notebookPath, '--data', `${FRAME}=${dataPath}`], { encoding: 'utf8' });
  expect(changed.status).toBe(1);
  expect(changed.stdout).toContain('robustness.verdicts[0].robust');
});
