/**
 * Browser tests of the Results section in a real JupyterLab with a real kernel: the fixture
 * notebook results.ipynb builds a frame with a planted parity triplet, a redundant humidity
 * pair and a column named with markup; the tests run it with the defaults and read the
 * histograms, tables, CSV export and chain.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

import { execute, focusResults, openLab, openNotebookAndPanel, polyadicPanel, resultsView } from './helpers';
import { ARTIFACTS, REPO } from './paths';

test.describe.configure({ mode: 'serial' });

const MARKUP = '<img src=x onerror=alert(1)>';
const TRIPLET = ['flowing', 'leak_alarm', 'valve_command'];
const PAIR = ['humidity_a_pct', 'humidity_b_pct'];

let page: Page;
let dialogs = 0;

function results(): Locator {
  return resultsView(page);
}

/** Member names of the first row of a table, sorted. */
async function firstRowNames(side: 'synergy' | 'redundancy'): Promise<string[]> {
  const row = results().locator(`.pd-ResultsTable-${side} tbody tr`).first();
  return (await row.locator('.pd-ResultsTable-name').allTextContents()).sort();
}

test.beforeAll(async ({ browser }) => {
  // Kernel start, the frame's fetch and the run each wait up to a minute on a loaded machine.
  test.setTimeout(300_000);
  page = await browser.newPage();
  page.on('dialog', dialog => {
    dialogs++;
    void dialog.dismiss();
  });
  await openLab(page, 'results');
  await openNotebookAndPanel(page, 'results.ipynb');
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
  await execute(page, 'notebook:run-all-cells');
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption('results_frame');
  await expect(panel.getByRole('checkbox', { name: 'Use column valve_command', exact: true })).toBeVisible({
    timeout: 60_000
  });
  // The checklist shows the listing's columns at once; Run opens once the fetch has selected them.
  await expect(panel.getByRole('button', { name: 'Run', exact: true })).toBeEnabled({ timeout: 120_000 });
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done', { timeout: 60_000 });
  // Room for the results: a wider sidebar, and every other section folded.
  await focusResults(page);
});

test.afterAll(async () => {
  await page.close();
});

test('should draw one order histogram per order with the sign convention beside it', async () => {
  const histograms = results().locator('.pd-Histogram');
  // 7 columns, all orders: histograms for orders 2 … 7.
  await expect(histograms).toHaveCount(6);
  for (let i = 0; i < 6; i++) {
    const histogram = histograms.nth(i);
    await expect(histogram.locator('.pd-Histogram-title')).toHaveText(new RegExp(`^Order ${i + 2}: `));
    await expect(histogram.locator('.pd-Histogram-convention')).toContainText('negative, synergy-dominated');
    await expect(histogram.locator('.pd-Histogram-convention')).toContainText('Bell 2003');
    await expect(histogram.locator('svg.main-svg').first()).toBeVisible();
  }
  await expect(results().getByRole('note').first()).toContainText('by chance alone');
});

test('should rank the planted triplet first for synergy and the pair first for redundancy', async () => {
  expect(await firstRowNames('synergy')).toEqual(TRIPLET);
  expect(await firstRowNames('redundancy')).toEqual(PAIR);
});

test('should show a markup column name as text and run nothing', async () => {
  const names = results().locator('.pd-ResultsTable-name', { hasText: MARKUP });
  await expect(names.first()).toBeVisible();
  expect(await names.first().textContent()).toBe(MARKUP);
  await expect(results().locator('img')).toHaveCount(0);
  expect(dialogs).toBe(0);
});

test('should filter both tables by a column name', async () => {
  await results().getByLabel('Column name', { exact: true }).fill('humidity_b');
  const rows = results().locator('.pd-ResultsTable-redundancy tbody tr');
  await expect(results().locator('.pd-ResultsTable-redundancy .pd-ResultsTable-status')).toContainText('filtered from');
  const count = await rows.count();
  expect(count).toBeGreaterThan(0);
  for (const side of ['synergy', 'redundancy']) {
    const sideRows = results().locator(`.pd-ResultsTable-${side} tbody tr.pd-ResultsTable-row`);
    for (let i = 0; i < (await sideRows.count()); i++) {
      expect(await sideRows.nth(i).locator('.pd-ResultsTable-name').allTextContents()).toContain('humidity_b_pct');
    }
  }
  expect(await firstRowNames('redundancy')).toEqual(PAIR);
});

test('should export the filtered table as CSV with the CLI header, an adequacy column and its provenance', async () => {
  const downloadEvent = page.waitForEvent('download');
  await results().getByRole('button', { name: 'Export the redundancy table as CSV' }).click();
  const download = await downloadEvent;
  expect(download.suggestedFilename()).toMatch(/^polyadic-[A-Za-z0-9_]+-pd-[0-9a-z]{8,32}-redundancy\.csv$/);
  const file = await download.path();
  const all = readFileSync(file, 'utf8').split('\n');
  const comments = all.filter(line => line.startsWith('# '));
  for (const key of ['frame', 'record', 'estimator', 'units', 'binning', 'filter']) {
    expect(comments.some(line => line.startsWith(`# ${key}: `))).toBe(true);
  }
  expect(comments.find(line => line.startsWith('# filter: '))).toContain('"humidity_b"');
  const lines = all.slice(comments.length);
  // The CLI's own header, from the built CLI on a two-column file.
  const dir = mkdtempSync(path.join(os.tmpdir(), 'pd-results-'));
  const input = path.join(dir, 'tiny.csv');
  writeFileSync(input, 'a,b\n1,2\n2,1\n1,1\n');
  const cli = execFileSync(process.execPath, [path.join(REPO, 'bin', 'polyadic.cjs'), 'analyze', input, '--format', 'csv', '--bins', 'categorical'], {
    encoding: 'utf8'
  });
  // The CLI's CSV carries the adequacy column itself (after the measures): the export's header is the CLI's.
  expect(cli.split('\n')[0].split(',')).toEqual([
    'columns',
    'order',
    'entropy',
    'co_information',
    'total_correlation',
    'dual_total_correlation',
    'o_information',
    's_information',
    'adequacy'
  ]);
  // The panel ran with the settings' surrogates, so its header is the CLI's with surrogates: the
  // measures, adequacy, then the evidence fields, in the CLI's order.
  const input3 = path.join(dir, 'tiny3.csv');
  writeFileSync(input3, 'a,b,c\n1,2,1\n2,1,2\n1,1,2\n2,2,1\n');
  const cliWithEvidence = execFileSync(
    process.execPath,
    [path.join(REPO, 'bin', 'polyadic.cjs'), 'analyze', input3, '--format', 'csv', '--bins', 'categorical', '--surrogates', '9'],
    { encoding: 'utf8' }
  );
  expect(cliWithEvidence.split('\n')[0].startsWith(`${cli.split('\n')[0]},p_value,q_value`)).toBe(true);
  expect(lines[0]).toBe(cliWithEvidence.split('\n')[0]);
  const status = await results().locator('.pd-ResultsTable-redundancy .pd-ResultsTable-status').textContent();
  const total = Number(/of ([\d,]+)/.exec(status ?? '')![1].replace(/,/g, ''));
  expect(lines.filter(line => line !== '').length - 1).toBe(total);
  for (const line of lines.slice(1).filter(l => l !== '')) {
    expect(line.split(',')[0]).toContain('humidity_b_pct');
  }
  await results().getByLabel('Column name', { exact: true }).fill('');
  await expect(results().locator('.pd-ResultsTable-redundancy .pd-ResultsTable-status')).not.toContainText('filtered from');
});

test('should filter the tables to a histogram bar when the bar is clicked', async () => {
  const order3 = results().locator('.pd-Histogram').nth(1);
  // The leftmost bar of order 3 holds the most negative triplet, the planted one. On a log axis
  // a bar's path reaches far below the plot (its base, a count of 0, is clipped): click just
  // under its top, where the bar shows.
  await order3.locator('.bars .point path').first().click({ force: true, position: { x: 10, y: 4 } });
  // one multiplet or more, the noun agreeing with the count
  await expect(results().locator('.pd-Results-bar')).toHaveText(/^Tables show the (1 order-3 multiplet|(?!1 )[\d,]+ order-3 multiplets) of one histogram bar\.$/);
  expect(await firstRowNames('synergy')).toEqual(TRIPLET);
  const synergyRows = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row');
  for (let i = 0; i < (await synergyRows.count()); i++) {
    await expect(synergyRows.nth(i).locator('.pd-mod-order')).toHaveText('3');
  }
  await results().getByRole('button', { name: 'Show all bars' }).click();
  await expect(results().locator('.pd-Results-bar')).toHaveText('');
});

test('should chart the conditioning chain of a selected multiplet and export charts', async () => {
  await results().locator('.pd-ResultsTable-synergy tbody tr').first().click();
  const chain = results().locator('.pd-Chain');
  await expect(chain.locator('.pd-Chain-item')).toHaveCount(2);
  await expect(chain.locator('svg.main-svg').first()).toBeVisible();
  const downloadEvent = page.waitForEvent('download');
  await chain.getByRole('button', { name: 'Save Conditioning chain waterfall as SVG' }).click();
  const download = await downloadEvent;
  expect(download.suggestedFilename()).toMatch(/^polyadic-.+-pd-[0-9a-z]{8,32}-conditioning-chain\.svg$/);
  expect(readFileSync(await download.path(), 'utf8')).toMatch(/^<svg/);
  const png = page.waitForEvent('download');
  await results()
    .locator('.pd-Histogram')
    .first()
    .getByRole('button', { name: 'Save Order 2 histogram of co-information as PNG' })
    .click();
  const pngDownload = await png;
  expect(pngDownload.suggestedFilename()).toMatch(/^polyadic-.+-pd-[0-9a-z]{8,32}-order-2-histogram\.png$/);
  await pngDownload.saveAs(path.join(ARTIFACTS, 'histogram-export.png'));
  const pngFile = readFileSync(await pngDownload.path());
  // PNG signature (PNG specification, section 5.2).
  expect(pngFile.subarray(0, 8).toString('hex')).toBe('89504e470d0a1a0a');
  // IHDR width and height, big-endian at bytes 16–23 (section 11.2.2): print size, not the panel's
  expect([pngFile.readUInt32BE(16), pngFile.readUInt32BE(20)]).toEqual([2400, 1440]);
});

test('should keep a dark-theme screenshot of the results', async () => {
  await execute(page, 'apputils:change-theme', { theme: 'JupyterLab Dark' });
  await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'false');
  // Plot backgrounds follow the theme: the histogram's paper takes --jp-layout-color1.
  const layout = await page.evaluate(() => getComputedStyle(document.body).getPropertyValue('--jp-layout-color1').trim());
  await expect
    .poll(async () =>
      (
        await results()
          .locator('.pd-Histogram svg.main-svg')
          .first()
          .evaluate(node => (node as SVGElement).style.background)
      ).replace(/\s/g, '')
    )
    .toBe(Private.rgb(layout));
  await results().locator('.pd-Results-summary').evaluate(node => node.scrollIntoView({ block: 'start' }));
  await page.screenshot({ path: path.join(ARTIFACTS, 'results-dark.png') });
  await results().locator('.pd-Results-filters').evaluate(node => node.scrollIntoView({ block: 'start' }));
  await page.screenshot({ path: path.join(ARTIFACTS, 'results-dark-tables.png') });
  await execute(page, 'apputils:change-theme', { theme: 'JupyterLab Light' });
  await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'true');
});

namespace Private {
  /** A CSS hex colour as the rgb(…) text a browser reports, without spaces. */
  export function rgb(color: string): string {
    const hex = color.replace('#', '');
    if (!/^[0-9a-f]{6}$/i.test(hex)) {
      return color.replace(/\s/g, '');
    }
    const [r, g, b] = [0, 2, 4].map(i => parseInt(hex.slice(i, i + 2), 16));
    return `rgb(${r},${g},${b})`;
  }
}
