/**
 * Browser tests of the results view in the main area, in a real JupyterLab with a real kernel at
 * 1440×900: Run opens the view beside the notebook; the table headers all fit without horizontal
 * scrolling; the planted parity triplet of results.ipynb is the top synergy row and visible in its
 * order's histogram; a row selects its bar and the detail view, whose conditional tables of the
 * triplet flip; the waterfall's steps add up to the multiplet's co-information; a reload restores
 * the view (the detail then says what its tables need); dark screenshots of the whole window.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';
import path from 'node:path';

import { execute, openLab, openNotebookAndPanel, polyadicPanel, resultsView, sectionTitle, shutDownKernels } from './helpers';
import { ARTIFACTS } from './paths';

test.describe.configure({ mode: 'serial' });

const TRIPLET = ['flowing', 'leak_alarm', 'valve_command'];
const WORKSPACE = 'main-area';

let page: Page;

function results(): Locator {
  return resultsView(page);
}

test.beforeAll(async ({ browser }) => {
  test.setTimeout(300_000);
  page = await browser.newPage({ viewport: { width: 1440, height: 900 } });
  await openLab(page, WORKSPACE);
  await openNotebookAndPanel(page, 'results.ipynb');
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
  await execute(page, 'notebook:run-all-cells');
  await expect(polyadicPanel(page).getByRole('combobox', { name: 'Dataframe', exact: true }).locator('option[value="wide_frame"]')).toBeAttached({
    timeout: 90_000
  });
});

test.afterAll(async () => {
  // results.spec opens the same notebook and expects a kernel without its frames
  await shutDownKernels(page);
  await page.close();
});

test('should keep every set-up section open at its own height, ten columns readable at once', async () => {
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption('wide_frame');
  await expect(panel.getByRole('checkbox', { name: 'Use column bench_13_temp_c', exact: true })).toBeVisible({ timeout: 60_000 });
  for (const title of ['Notebook', 'Dataframe', 'Binning', 'Estimator and order', 'Statistics', 'Run']) {
    await expect(sectionTitle(page, title)).toHaveAttribute('aria-expanded', 'true');
  }
  const height = page.viewportSize()!.height;
  // A section is as tall as its content: scrolled to the top of a list, its first ten rows are
  // all on screen at once (the Dataframe checklist, then the Binning rows).
  for (const [list, row] of [
    ['.pd-Data-columns', 'tr'],
    ['.pd-Binning-rows', '.pd-Binning-row']
  ] as const) {
    const node = panel.locator(list);
    await node.evaluate(element => element.scrollIntoView({ block: 'start' }));
    const bottoms = await node.locator(row).evaluateAll(rows => rows.map(r => r.getBoundingClientRect().bottom));
    expect(bottoms.length).toBeGreaterThanOrEqual(10);
    expect(bottoms[9]).toBeLessThanOrEqual(height);
  }
  // Folding a section hides its body and says so to assistive technology.
  const title = sectionTitle(page, 'Notebook');
  await title.click();
  await expect(title).toHaveAttribute('aria-expanded', 'false');
  await expect(panel.getByRole('region', { name: 'Notebook Section', exact: true })).toBeHidden();
  await title.click();
  await expect(title).toHaveAttribute('aria-expanded', 'true');
});

test('should run and open the results view beside the notebook, titled with the frame', async () => {
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption('results_frame');
  await expect(panel.getByRole('checkbox', { name: 'Use column valve_command', exact: true })).toBeVisible({ timeout: 60_000 });
  await expect(panel.getByRole('button', { name: 'Run', exact: true })).toBeEnabled({ timeout: 120_000 });
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done', { timeout: 60_000 });
  await expect(results()).toBeVisible();
  const notebook = await page.locator('.jp-NotebookPanel:visible').boundingBox();
  const view = await page.locator('.pd-ResultsDocument:visible').boundingBox();
  expect(notebook).not.toBeNull();
  expect(view).not.toBeNull();
  // side by side: the view starts right of the notebook and both are on screen
  expect(view!.x).toBeGreaterThanOrEqual(notebook!.x + notebook!.width - 2);
  await expect(page.locator('.lm-TabBar-tab.lm-mod-current', { hasText: 'Results: results_frame' })).toBeVisible();
  // the sidebar no longer holds results
  await expect(polyadicPanel(page).locator('.pd-Results')).toHaveCount(0);
});

test('should show every table column header without horizontal scrolling', async () => {
  for (const side of ['synergy', 'redundancy']) {
    const scroll = results().locator(`.pd-ResultsTable-${side} .pd-ResultsTable-scroll`);
    const [scrollWidth, clientWidth] = await scroll.evaluate(node => [node.scrollWidth, node.clientWidth]);
    expect(scrollWidth).toBeLessThanOrEqual(clientWidth);
    const viewBox = (await results().boundingBox())!;
    for (const head of await results().locator(`.pd-ResultsTable-${side} .pd-ResultsTable-head`).all()) {
      const box = (await head.boundingBox())!;
      expect(box.x + box.width).toBeLessThanOrEqual(viewBox.x + viewBox.width + 1);
    }
  }
});

test('should rank the planted triplet first and show it in its order histogram', async () => {
  const first = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').first();
  expect((await first.locator('.pd-ResultsTable-name').allTextContents()).sort()).toEqual(TRIPLET);
  // the order-3 histogram: its strip of extreme multiplets has ticks, and a click on the row
  // outlines the row's bar and tick
  const order3 = results().locator('.pd-Histogram').nth(1);
  await expect(order3.locator('.pd-Histogram-title')).toHaveText(/^Order 3: /);
  await expect(order3.locator('.scatterlayer .point').first()).toBeAttached();
  await first.click();
  await expect(first).toHaveAttribute('aria-selected', 'true');
  await expect(order3).not.toHaveAttribute('data-marked-bar', '-1');
  await expect(order3).toHaveAttribute('data-marked-bar', /^\d+$/);
  // the bar it marks has the row's value inside its edges: one tall bar would hide it without the log axis
  const marked = Number(await order3.getAttribute('data-marked-bar'));
  const option = order3.locator('.pd-Histogram-pickerSelect option').nth(marked + 1);
  await expect(option).toHaveText(/\(1\)$|\(\d+\)$/);
  // keyboard: arrow down moves the selection to the next row
  await first.press('ArrowDown');
  const second = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').nth(1);
  await expect(second).toHaveAttribute('aria-selected', 'true');
  await expect(second).toBeFocused();
  await second.press('ArrowUp');
  await expect(first).toHaveAttribute('aria-selected', 'true');
});

test('should draw the chain as a waterfall whose steps add up to the co-information', async () => {
  const first = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').first();
  await first.click();
  const value = Number(await first.locator('.pd-ResultsTable-cell.pd-mod-co_information').getAttribute('data-value'));
  const chain = results().locator('.pd-Chain');
  const items = chain.locator('.pd-Chain-item');
  await expect(items).toHaveCount(2);
  const start = Number(await items.nth(0).getAttribute('data-value'));
  const steps = await items.evaluateAll(nodes => nodes.slice(1).map(node => Number((node as HTMLElement).dataset.step)));
  expect(Math.abs(start + steps.reduce((a, b) => a + b, 0) - value)).toBeLessThan(1e-12);
  await expect(chain.locator('.pd-Plot svg.main-svg').first()).toBeVisible();
  // the greedy growth says what it grows from
  await chain.getByRole('button', { name: 'Grow from the most synergistic triplet' }).click();
  await expect(chain.locator('.pd-Chain-message')).toContainText('most synergistic triplet');
  const grown = (await chain.locator('.pd-Chain-item .pd-Chain-name').allTextContents()).join(' ');
  for (const name of TRIPLET) {
    expect(grown).toContain(name);
  }
  await chain.getByRole('button', { name: 'Grow from the most redundant pair' }).click();
  await expect(chain.locator('.pd-Chain-message')).toContainText('most redundant pair');
});

test('should show the planted triplet in the detail view: its measures and conditional tables that flip', async () => {
  const first = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').first();
  await first.click();
  const value = Number(await first.locator('.pd-ResultsTable-cell.pd-mod-co_information').getAttribute('data-value'));
  const detail = results().getByRole('region', { name: 'Multiplet detail', exact: true });
  await expect(detail.getByRole('heading', { name: 'Multiplet detail', exact: true })).toBeVisible();
  await expect(detail.locator('.pd-Detail-subject')).toContainText('(order 3)');
  for (const name of TRIPLET) {
    await expect(detail.locator('.pd-Detail-subject')).toContainText(name);
  }
  // every measure, labelled, with units; the co-information is the row's
  for (const label of ['Co-information', 'O-information', 'Total correlation', 'Dual total correlation', 'S-information', 'Joint entropy', 'Adequacy']) {
    await expect(detail.locator('.pd-Detail-term', { hasText: new RegExp(`^${label}$`) })).toBeVisible();
  }
  const coinformation = detail.locator('.pd-Detail-value[data-key="co_information"]');
  expect(Number(await coinformation.getAttribute('data-value'))).toBe(value);
  await expect(coinformation).toHaveText(/ bits$/);
  // the tables within each level of the default conditioning column, and why it is the default
  const picker = detail.getByRole('combobox', { name: 'Condition on', exact: true });
  await expect(picker).toBeVisible();
  const conditioning = await picker.inputValue();
  expect(TRIPLET).toContain(conditioning);
  await expect(detail.locator('.pd-Detail-reason')).toContainText(`Conditioned on ${conditioning} by default`);
  await expect(detail.locator('.pd-Detail-level')).toHaveCount(2);
  await expect(detail.locator('.pd-Detail-verdict')).toContainText('The tables flip');
  await expect(detail.locator('.pd-Plot g.hm')).toHaveCount(2);
  // the counts as text: two levels and the pooled table; parity flips the diagonal between levels
  await detail.locator('.pd-Detail-textSummary').click();
  const tables = detail.locator('table.pd-Detail-table');
  await expect(tables).toHaveCount(3);
  const counts = async (n: number): Promise<number[][]> =>
    tables.nth(n).locator('tbody tr').evaluateAll(rows =>
      rows.map(row => Array.from(row.querySelectorAll('td')).slice(0, -1).map(cell => Number((cell.textContent ?? '').replace(/,/g, ''))))
    );
  const [a, b, pooled] = [await counts(0), await counts(1), await counts(2)];
  const diagonalWins = (t: number[][]): boolean => t[0][0] + t[1][1] > t[0][1] + t[1][0];
  expect(diagonalWins(a)).not.toBe(diagonalWins(b));
  expect(a[0][0] + b[0][0]).toBe(pooled[0][0]);
  expect(pooled.flat().reduce((x, y) => x + y, 0)).toBe(2000);
  // another conditioning column: the tables split by it, and XOR flips whichever column conditions
  const other = TRIPLET.find(name => name !== conditioning)!;
  await picker.selectOption(other);
  await expect(detail.locator('.pd-Detail-reason')).toContainText(`Conditioned on ${other}, as picked`);
  await expect(detail.locator('.pd-Detail-level').first()).toContainText(`${other} = `);
  await expect(detail.locator('.pd-Detail-verdict')).toContainText('The tables flip');
  // the detail follows the keyboard selection
  await first.focus();
  await first.press('ArrowDown');
  const second = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').nth(1);
  await expect(second).toHaveAttribute('aria-selected', 'true');
  const names = (await second.locator('.pd-ResultsTable-name').allTextContents()).join(', ');
  await expect(detail.locator('.pd-Detail-subject')).toContainText(names);
  await second.press('ArrowUp');
  await expect(first).toHaveAttribute('aria-selected', 'true');
  await expect(detail.locator('.pd-Detail-subject')).toHaveText(`${(await first.locator('.pd-ResultsTable-name').allTextContents()).join(', ')} (order 3)`);
  // a pair: the humidity sensors' joint table, one heat map, most rows on the diagonal of their quartiles
  await results().locator('.pd-ResultsTable-redundancy tbody tr.pd-ResultsTable-row').first().click();
  await expect(detail.locator('.pd-Detail-subtitle', { hasText: 'Joint contingency table' })).toBeVisible();
  await expect(detail.locator('.pd-Plot g.hm')).toHaveCount(1);
  await expect(tables).toHaveCount(1);
  const joint = await counts(0);
  const all = joint.flat().reduce((x, y) => x + y, 0);
  expect(joint.reduce((sum, row, i) => sum + row[i], 0) / all).toBeGreaterThan(0.9);
  // a multiplet of order 4: its eleven sub-multiplets by order, charted and listed
  const order = results().locator('.pd-Results-filterSelect');
  await order.selectOption('4');
  await results().locator('.pd-ResultsTable tbody tr.pd-ResultsTable-row').first().click();
  await expect(detail.locator('.pd-Detail-subject')).toContainText('(order 4)');
  await expect(detail.locator('.pd-Detail-orderTitle')).toHaveText([/^Order 2: 6 sub-multiplets/, /^Order 3: 4 sub-multiplets/, /^Order 4: 1 sub-multiplet$/]);
  await expect(detail.locator('.pd-Detail-sub')).toHaveCount(11);
  await expect(detail.locator('.pd-Plot .scatterlayer .point')).toHaveCount(11);
  await order.selectOption('');
});

test('should filter the tables from a histogram bar', async () => {
  const order3 = results().locator('.pd-Histogram').nth(1);
  const picker = order3.locator('.pd-Histogram-pickerSelect');
  await picker.selectOption({ index: 1 });
  await expect(results().locator('.pd-Results-bar')).toHaveText(/order-3 multiplet/);
  await results().getByRole('button', { name: 'Show all bars' }).click();
  await expect(results().locator('.pd-Results-bar')).toHaveText('');
});

test('should keep dark-theme screenshots of the whole window', async () => {
  await execute(page, 'apputils:change-theme', { theme: 'JupyterLab Dark' });
  await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'false');
  await results().locator('.pd-Results-summary').evaluate(node => node.scrollIntoView({ block: 'start' }));
  await page.screenshot({ path: path.join(ARTIFACTS, 'main-area-dark-1440x900.png') });
  await page.setViewportSize({ width: 1920, height: 1080 });
  await page.screenshot({ path: path.join(ARTIFACTS, 'main-area-dark-1920x1080.png') });
  await results().locator('.pd-Results-filters').evaluate(node => node.scrollIntoView({ block: 'start' }));
  await page.screenshot({ path: path.join(ARTIFACTS, 'main-area-dark-tables-1920x1080.png') });
  await page.setViewportSize({ width: 1440, height: 900 });
  await execute(page, 'apputils:change-theme', { theme: 'JupyterLab Light' });
  await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'true');
});

test('should restore the view on reload from the notebook’s record', async () => {
  // the record is written with the notebook: save, wait for the layout to be stored, reload
  await page.locator('.lm-TabBar-tab', { hasText: 'results.ipynb' }).click();
  await expect(page.locator('.jp-NotebookPanel:visible')).toBeVisible();
  await execute(page, 'docmanager:save');
  await expect(page.locator('.lm-TabBar-tab.jp-mod-dirty', { hasText: 'results.ipynb' })).toHaveCount(0);
  await expect
    .poll(
      () =>
        page.evaluate(async name => {
          const reply = await fetch(`/lab/api/workspaces/${name}`);
          return JSON.stringify(await reply.json()).includes('polyadic-results');
        }, WORKSPACE),
      { timeout: 30_000 }
    )
    .toBe(true);
  await page.reload();
  await expect(results()).toBeVisible({ timeout: 90_000 });
  await expect(results().locator('.pd-Results-restored')).toContainText('Restored from the notebook');
  const first = results().locator('.pd-ResultsTable-synergy tbody tr.pd-ResultsTable-row').first();
  await expect(first).toBeVisible({ timeout: 60_000 });
  expect((await first.locator('.pd-ResultsTable-name').allTextContents()).sort()).toEqual(TRIPLET);
  await expect(results().locator('.pd-Histogram')).not.toHaveCount(0);
  // the restored view has no data: the detail keeps the measures and says what the tables need
  await first.click();
  const detail = results().getByRole('region', { name: 'Multiplet detail', exact: true });
  await expect(detail.locator('.pd-Detail-value[data-key="co_information"]')).toBeVisible();
  await expect(detail.locator('.pd-Detail-message')).toContainText('need the data and the run');
  await expect(detail.locator('table.pd-Detail-table')).toHaveCount(0);
});
