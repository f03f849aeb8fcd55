/**
 * Set-up steps the browser tests share: open JupyterLab in a workspace of its own, run its
 * commands, open a fixture notebook beside the Polyadic panel and find that panel.
 */
import { expect, type Locator, type Page } from '@playwright/test';

/** The part of JupyterLab's application object the tests use (`--expose-app-in-browser`). */
export interface IExposedApp {
  /** Resolves once the application has started. */
  started: Promise<void>;
  /** Resolves once the application has restored its layout. */
  restored: Promise<void>;
  /** The command registry. */
  commands: { execute(id: string, args?: Record<string, unknown>): Promise<unknown> };
  /** The server's services. */
  serviceManager: { sessions: { shutdownAll(): Promise<void> } };
}

declare global {
  interface Window {
    jupyterapp?: IExposedApp;
  }
}

/**
 * Open JupyterLab in workspace `workspace` (so no layout is left over from another test) and
 * wait until the application has started and restored its layout.
 */
export async function openLab(page: Page, workspace: string): Promise<void> {
  await page.goto(`lab/workspaces/${workspace}`);
  await page.waitForFunction(() => window.jupyterapp !== undefined);
  await page.evaluate(async () => {
    await window.jupyterapp!.started;
    await window.jupyterapp!.restored;
  });
}

/**
 * Shut down every kernel session of the server: a later spec that opens the same fixture
 * notebook then starts from a fresh kernel, as its set-up expects.
 */
export async function shutDownKernels(page: Page): Promise<void> {
  await page.evaluate(() => window.jupyterapp!.serviceManager.sessions.shutdownAll());
}

/** Run JupyterLab command `id` with `args` in the page and wait for it to finish. */
export async function execute(page: Page, id: string, args?: Record<string, unknown>): Promise<void> {
  await page.evaluate(
    ([command, options]) => window.jupyterapp!.commands.execute(command as string, options as Record<string, unknown>),
    [id, args ?? {}] as const
  );
}

/** The Polyadic panel, found by its accessible name. */
export function polyadicPanel(page: Page): Locator {
  return page.getByRole('region', { name: 'Polyadic', exact: true });
}

/** Open the notebook at `notebook` (server path), then the Polyadic panel, and wait for both to show. */
export async function openNotebookAndPanel(page: Page, notebook: string): Promise<void> {
  await execute(page, 'docmanager:open', { path: notebook });
  await expect(page.locator('.jp-NotebookPanel')).toBeVisible();
  await execute(page, 'polyadic:open-panel');
  await expect(polyadicPanel(page)).toBeVisible();
}

/** The results view on show in the main area (the front tab of the results documents). */
export function resultsView(page: Page): Locator {
  return page.locator('.pd-ResultsDocument:visible .pd-Results');
}

/** Wait for the results view of a run to show beside the notebook. */
export async function focusResults(page: Page): Promise<void> {
  await expect(resultsView(page)).toBeVisible({ timeout: 60_000 });
}

/** The header button of the side panel's section `title` (a foldable section of the set-up form). */
export function sectionTitle(page: Page, title: string): Locator {
  return polyadicPanel(page).locator('.pd-Fold-title', { hasText: new RegExp(`^${title}$`, 'i') });
}

/** Open the side panel's section `title` if it is folded. */
export async function openSection(page: Page, title: string): Promise<void> {
  const header = sectionTitle(page, title);
  if ((await header.getAttribute('aria-expanded')) !== 'true') {
    await header.click();
  }
}

/**
 * Wait until the current notebook's kernel is up (the panel says it holds no dataframe yet),
 * then run all its cells.
 */
export async function runNotebookCells(page: Page): Promise<void> {
  await expect(polyadicPanel(page).getByText('No dataframe in this notebook’s kernel yet', { exact: false })).toBeVisible({
    timeout: 90_000
  });
  await execute(page, 'notebook:run-all-cells');
}
