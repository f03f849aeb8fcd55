/**
 * Browser tests of the analysis sections (dataframe, binning, estimator and order, run) in a
 * real JupyterLab with a real kernel: the fixture notebook analysis.ipynb builds the frames.
 * Latencies are measured in the page and reported as annotations, never asserted.
 */
import { expect, type Page, test } from '@playwright/test';
import path from 'node:path';

import { execute, openLab, openNotebookAndPanel, polyadicPanel, sectionTitle } from './helpers';
import { ARTIFACTS } from './paths';

declare global {
  interface Window {
    pdDialogs?: number;
  }
}

test.describe.configure({ mode: 'serial' });

let page: Page;
let dialogs = 0;

/** Pick a frame in the Dataframe section and wait for its checklist. */
async function pickFrame(name: string, firstColumn: string): Promise<void> {
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption(name);
  await expect(panel.getByRole('checkbox', { name: `Use column ${firstColumn}`, exact: true })).toBeVisible();
}

test.beforeAll(async ({ browser }) => {
  page = await browser.newPage();
  page.on('dialog', dialog => {
    dialogs++;
    void dialog.dismiss();
  });
  await openLab(page, 'analysis');
  await openNotebookAndPanel(page, 'analysis.ipynb');
  // The kernel must be up before the cell runs; the panel says so once the bridge is ready.
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
  await execute(page, 'notebook:run-all-cells');
  await expect(polyadicPanel(page).getByRole('combobox', { name: 'Dataframe', exact: true })).toBeVisible({ timeout: 60_000 });
});

test.afterAll(async () => {
  await page.close();
});

test('should pick the greenhouse frame and show its columns with their facts', async () => {
  await pickFrame('greenhouse', 'humidity_a_pct');
  const panel = polyadicPanel(page);
  const row = panel.locator('.pd-Data-row', { hasText: 'visitor_zone' });
  // 4 zones, none missing (the fixture draws from four names).
  await expect(row.locator('td').nth(3)).toHaveText('4');
  await expect(row.locator('td').nth(4)).toHaveText('0');
  await expect(panel.getByRole('checkbox', { name: 'Use column leak_alarm', exact: true })).toBeChecked();
  // 9 columns, all orders: 2^9 − 1 multiplets.
  await expect(panel.getByText('511 multiplets of order 1 to 9 among 9 columns.')).toBeVisible();
  // The estimator starts from the user settings (the schema's default).
  await expect(panel.getByRole('combobox', { name: 'Estimator', exact: true })).toHaveValue('miller-madow');
});

test('should redraw the preview when one column’s binning changes', async ({}, testInfo) => {
  const panel = polyadicPanel(page);
  const input = panel.getByLabel('Binning of column humidity_a_pct', { exact: true });
  await input.focus();
  const figure = panel.locator('.pd-Binning-preview');
  await expect(figure).toHaveAttribute('data-column', 'humidity_a_pct');
  await expect(figure.locator('.pd-Binning-caption').first()).toContainText('→ 4 bins');
  // the bin edges as drawn: one line shape of the chart per edge
  await expect(figure.locator('.pd-Binning-chart .shapelayer path')).toHaveCount(5);
  // Time from the input event to the redrawn preview, measured in the page.
  const latencies: number[] = [];
  for (const spec of ['quantile:8', 'width:6', 'quantile:4']) {
    latencies.push(
      await page.evaluate(spec => {
        const node = document.querySelector<HTMLInputElement>('input[aria-label="Binning of column humidity_a_pct"]')!;
        const target = document.querySelector('.pd-Binning-preview')!;
        return new Promise<number>(resolve => {
          const start = performance.now();
          const observer = new MutationObserver(() => {
            if (target.querySelector('.pd-Binning-chart .main-svg') && target.textContent!.includes(`: ${spec} →`)) {
              observer.disconnect();
              resolve(performance.now() - start);
            }
          });
          observer.observe(target, { childList: true, subtree: true, characterData: true });
          node.value = spec;
          node.dispatchEvent(new Event('input', { bubbles: true }));
        });
      }, spec)
    );
  }
  testInfo.annotations.push({ type: 'preview latency (ms)', description: latencies.map(ms => ms.toFixed(0)).join(', ') });
  console.log(`preview latency ms: ${latencies.map(ms => ms.toFixed(1)).join(', ')}`);
  await input.fill('quantile:8');
  await expect(figure.locator('.pd-Binning-caption').first()).toContainText('→ 8 bins');
  await expect(figure.locator('.pd-Binning-chart .shapelayer path')).toHaveCount(9);
  await expect(figure.locator('.pd-Binning-counts tbody tr')).toHaveCount(8);
  await input.fill('quantile:4');
  await expect(figure.locator('.pd-Binning-caption').first()).toContainText('→ 4 bins');
});

test('should run with the defaults and report the result', async () => {
  const panel = polyadicPanel(page);
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.getByText(/^511 multiplets computed from 3,000 rows of greenhouse/)).toBeVisible({ timeout: 60_000 });
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done');
});

test('should keep a dark-theme screenshot of the analysis sections', async ({}, testInfo) => {
  const lightFill = await polyadicPanel(page)
    .locator('.pd-Binning-chart .bars .point path')
    .first()
    .evaluate(node => getComputedStyle(node).fill);
  await execute(page, 'apputils:change-theme', { theme: 'JupyterLab Dark' });
  await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'false');
  // The preview's bars take the distribution colour of the theme: the chart redraws on the change.
  const barFill = (): Promise<string> =>
    polyadicPanel(page)
      .locator('.pd-Binning-chart .bars .point path')
      .first()
      .evaluate(node => getComputedStyle(node).fill);
  await expect.poll(barFill).not.toBe(lightFill);
  expect(await barFill()).toMatch(/^rgb/);
  // Room for the analysis sections: the notebook and settings sections shut.
  for (const title of ['Notebook', 'Defaults', 'Records']) {
    const header = sectionTitle(page, title);
    if ((await header.count()) === 1 && (await header.getAttribute('aria-expanded')) === 'true') {
      await header.click();
    }
  }
  const screenshot = path.join(ARTIFACTS, 'panel-analysis-dark.png');
  await page.screenshot({ path: screenshot });
  await testInfo.attach('panel-analysis-dark', { path: screenshot, contentType: 'image/png' });
  await execute(page, 'apputils:change-theme', { theme: 'JupyterLab Light' });
  await expect(page.locator('body')).toHaveAttribute('data-jp-theme-light', 'true');
});

test('should show a column named like markup as text and run nothing', async () => {
  const name = '<img src=x onerror=alert(1)>';
  await pickFrame('odd_names', name);
  const panel = polyadicPanel(page);
  await expect(panel.locator('.pd-Data-columnName', { hasText: name })).toHaveText(name);
  await expect(panel.locator('.pd-Binning-name', { hasText: name })).toHaveText(name);
  await expect(panel.locator('img')).toHaveCount(0);
  expect(dialogs).toBe(0);
});

test('should cancel a long run within a second', async ({}, testInfo) => {
  await pickFrame('wide', 'noise_00');
  const panel = polyadicPanel(page);
  await panel.getByLabel('Maximum order', { exact: true }).fill('22');
  await expect(panel.getByText('4,194,303 multiplets of order 1 to 22 among 22 columns.')).toBeVisible();
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'running', { timeout: 30_000 });
  await expect(panel.locator('.pd-Run-progressText')).toContainText('% done');
  const elapsed = await page.evaluate(() => {
    const section = document.querySelector<HTMLElement>('.pd-Run')!;
    const button = section.querySelector<HTMLButtonElement>('.pd-Run-cancel')!;
    return new Promise<number>(resolve => {
      const start = performance.now();
      const observer = new MutationObserver(() => {
        if (section.dataset.state === 'cancelled') {
          observer.disconnect();
          resolve(performance.now() - start);
        }
      });
      observer.observe(section, { attributes: true });
      button.click();
    });
  });
  testInfo.annotations.push({ type: 'cancel latency (ms)', description: elapsed.toFixed(0) });
  console.log(`cancel latency ms: ${elapsed.toFixed(1)}`);
  expect(elapsed).toBeLessThan(1000);
  await expect(panel.getByText('Cancelled. Nothing was computed')).toBeVisible();
  await expect(panel.getByRole('button', { name: 'Run', exact: true })).toBeEnabled();
});
