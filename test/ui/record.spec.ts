/**
 * Browser test of the record in a real JupyterLab with a real kernel: run an analysis, save,
 * read the .ipynb the server wrote and validate its record against src/record/record.schema.json,
 * reopen the notebook and restore the settings, insert a analysis cell and see it drawn
 * (with the Markdown fallback saved beside it), then run `polyadic verify` on the saved
 * notebook with the frame's Parquet file: it passes, and fails on a copy with one value changed.
 */
import { expect, type Locator, type Page, test } from '@playwright/test';
import Ajv2020 from 'ajv/dist/2020';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

import { execute, openLab, openNotebookAndPanel, polyadicPanel } from './helpers';
import { ARTIFACTS, REPO } from './paths';

test.describe.configure({ mode: 'serial' });

const NOTEBOOK = 'record.ipynb';
const FRAME = 'record_frame';
const MIME = 'application/vnd.polyadic.analysis+json';

let page: Page;
let recordId = '';
let recorded: { estimator: string; max_order: number; columns: string[] } | null = null;

function recordsSection(): Locator {
  return polyadicPanel(page).locator('.pd-Records');
}

/** A file of the server root as the server reads it from disk (contents API). */
async function serverFile(name: string, format: 'json' | 'base64'): Promise<unknown> {
  const response = await page.request.get(
    `api/contents/${name}?content=1&type=file&format=${format === 'json' ? 'text' : 'base64'}`
  );
  expect(response.ok()).toBe(true);
  const content = ((await response.json()) as { content: string }).content;
  return format === 'json' ? JSON.parse(content) : Buffer.from(content, 'base64');
}

/** Save the current notebook and wait until it is clean. */
async function save(): Promise<void> {
  await execute(page, 'docmanager:save');
  await expect(page.locator('.jp-NotebookPanel .jp-mod-dirty')).toHaveCount(0);
  await expect(page.locator('.lm-DockPanel-tabBar .lm-TabBar-tab.jp-mod-current.jp-mod-dirty')).toHaveCount(0);
}

test.beforeAll(async ({ browser }) => {
  page = await browser.newPage();
  await openLab(page, 'record');
  await openNotebookAndPanel(page, NOTEBOOK);
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
  await execute(page, 'notebook:run-all-cells');
});

test.afterAll(async () => {
  await page.close();
});

test('should record a completed run in the notebook and save a record that validates', async () => {
  const panel = polyadicPanel(page);
  await panel.getByRole('combobox', { name: 'Dataframe', exact: true }).selectOption(FRAME);
  await expect(panel.getByRole('checkbox', { name: 'Use column valve_command', exact: true })).toBeVisible({
    timeout: 60_000
  });
  await panel.getByRole('button', { name: 'Run', exact: true }).click();
  await expect(panel.locator('.pd-Run')).toHaveAttribute('data-state', 'done', { timeout: 60_000 });

  const item = recordsSection().locator('.pd-Records-item');
  await expect(item).toHaveCount(1);
  await expect(item.locator('.pd-Records-label')).toContainText(FRAME);
  recordId = (await item.getAttribute('data-record-id')) ?? '';
  expect(recordId).toMatch(/^pd-[0-9a-z]{8,32}$/);
  // recording is an edit: the notebook must be dirty until saved
  await expect(page.locator('.lm-DockPanel-tabBar .lm-TabBar-tab.jp-mod-current.jp-mod-dirty')).toHaveCount(1);

  await save();
  const notebook = (await serverFile(NOTEBOOK, 'json')) as { metadata: Record<string, unknown> };
  const record = notebook.metadata.polyadic as { version: number; analyses: { id: string; estimator: string; max_order: number; columns: string[]; summary: { synergy: { columns: string[] }[] } }[] };
  const schema = JSON.parse(readFileSync(path.join(REPO, 'src', 'record', 'record.schema.json'), 'utf8')) as object;
  const ajv = new Ajv2020({ allErrors: true, strict: false });
  ajv.addFormat('date-time', true);
  const validate = ajv.compile(schema);
  expect(validate(record) ? [] : validate.errors).toEqual([]);
  expect(record.analyses.map(analysis => analysis.id)).toEqual([recordId]);
  // the planted parity triplet leads the synergy side
  expect([...record.analyses[0].summary.synergy[0].columns].sort()).toEqual(['flowing', 'leak_alarm', 'valve_command']);
  expect(Object.keys(notebook.metadata).sort()).toEqual(['kernelspec', 'language_info', 'polyadic']);
  recorded = record.analyses[0];
});

test('should list the record after reopening and restore its settings', async () => {
  expect(recorded).not.toBeNull();
  await execute(page, 'application:close-all');
  await expect(page.locator('.jp-NotebookPanel')).toHaveCount(0);
  await expect(recordsSection().locator('.pd-Records-item')).toHaveCount(0);
  await execute(page, 'docmanager:open', { path: NOTEBOOK });
  const item = recordsSection().locator(`.pd-Records-item[data-record-id="${recordId}"]`);
  await expect(item).toBeVisible({ timeout: 60_000 });

  const panel = polyadicPanel(page);
  // move the settings away from the record, so the restore has something to do
  await expect(panel.getByRole('combobox', { name: 'Estimator', exact: true })).toBeVisible({ timeout: 60_000 });
  const otherEstimator = recorded!.estimator === 'plugin' ? 'miller-madow' : 'plugin';
  await panel.getByRole('combobox', { name: 'Estimator', exact: true }).selectOption(otherEstimator);
  await panel.getByLabel('Maximum order', { exact: true }).fill('2');

  await item.locator('.pd-Records-label').click();
  await item.getByRole('button', { name: 'Restore settings' }).click();
  await expect(panel.getByRole('combobox', { name: 'Dataframe', exact: true })).toHaveValue(FRAME, { timeout: 60_000 });
  await expect(panel.getByRole('combobox', { name: 'Estimator', exact: true })).toHaveValue(recorded!.estimator);
  await expect(panel.getByLabel('Maximum order', { exact: true })).toHaveValue(String(recorded!.max_order));
  for (const name of recorded!.columns) {
    await expect(panel.getByRole('checkbox', { name: `Use column ${name}`, exact: true })).toBeChecked();
  }
  // the loaded frame is the recorded data: no "data changed" banner
  await expect(item.locator('.pd-Records-banner')).toHaveCount(0);
  await polyadicPanel(page).screenshot({ path: path.join(ARTIFACTS, 'records-restored.png') });
});

test('should insert an analysis cell, draw it, and save the Markdown fallback', async () => {
  await execute(page, 'polyadic:insert-analysis-cell');
  const cell = page.locator('.jp-Notebook .jp-Cell.jp-mod-active');
  await expect(cell.locator('.jp-InputArea-editor')).toContainText(`polyadic.show("${recordId}")`);
  await execute(page, 'notebook:run-cell');
  const output = cell.locator('.pd-AnalysisCell');
  await expect(output).toBeVisible({ timeout: 60_000 });
  await expect(output.locator('.pd-AnalysisCell-plot').first()).toBeVisible();
  await expect(output.locator('.pd-AnalysisCell-table').first()).toContainText('leak_alarm');
  await output.screenshot({ path: path.join(ARTIFACTS, 'analysis-cell.png') });

  await save();
  const notebook = (await serverFile(NOTEBOOK, 'json')) as {
    cells: { cell_type: string; outputs?: { data?: Record<string, unknown> }[] }[];
  };
  const outputs = notebook.cells.flatMap(c => c.outputs ?? []).filter(o => o.data?.[MIME] !== undefined);
  expect(outputs).toHaveLength(1);
  expect(outputs[0].data![MIME]).toMatchObject({ record_id: recordId });
  const markdown = outputs[0].data!['text/markdown'];
  expect(Array.isArray(markdown) ? markdown.join('') : markdown).toContain(`Polyadic analysis ${recordId.replace(/-/g, '\\-')}`);
});

test('should verify the saved notebook with its data and fail after one value changes', async () => {
  const folder = mkdtempSync(path.join(os.tmpdir(), 'polyadic-ui-verify-'));
  const notebookPath = path.join(folder, NOTEBOOK);
  const dataPath = path.join(folder, `${FRAME}.parquet`);
  const changedPath = path.join(folder, `${FRAME}_changed.parquet`);
  writeFileSync(notebookPath, JSON.stringify(await serverFile(NOTEBOOK, 'json')));
  // both files were written by the fixture's kernel: the frame, and the frame with one value changed
  writeFileSync(dataPath, (await serverFile(`${FRAME}.parquet`, 'base64')) as Buffer);
  writeFileSync(changedPath, (await serverFile(`${FRAME}_changed.parquet`, 'base64')) as Buffer);
  const cli = path.join(REPO, 'bin', 'polyadic.cjs');
  const same = spawnSync(process.execPath, [cli, 'verify', notebookPath, '--data', `${FRAME}=${dataPath}`], { encoding: 'utf8' });
  expect(same.stderr).toBe('');
  expect(same.stdout).toContain(recordId);
  // the output goes with the code so a failure shows which value differed
  expect({ status: same.status, stdout: same.stdout }).toEqual({ status: 0, stdout: expect.stringContaining('1 of 1 analyses reproduce') });

  const changed = spawnSync(process.execPath, [cli, 'verify', notebookPath, '--data', `${FRAME}=${changedPath}`], {
    encoding: 'utf8'
  });
  expect(changed.status).toBe(1);
  expect(changed.stdout).toMatch(/DATA CHANGED/);
  expect(changed.stdout).toContain('air_temp_c');
});
