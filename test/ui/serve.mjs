/**
 * Start the JupyterLab server the browser tests talk to, in a throw-away root.
 *
 * Run by Playwright's webServer (see playwright.config.ts) with PD_UI_PORT set. Creates a
 * temporary directory holding the server root (a copy of ./fixtures) and private Jupyter
 * config, data, runtime, settings and workspace directories, so the tests never read or
 * change the user's own Jupyter state. When Playwright stops the server (SIGTERM to the
 * process group) this script waits for JupyterLab to shut down, then deletes the directory.
 */
import { spawn } from 'node:child_process';
import {
  cpSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  openSync,
  readFileSync,
  rmSync,
  writeFileSync
} from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const here = path.dirname(fileURLToPath(import.meta.url));
const repo = path.resolve(here, '..', '..');
const jupyter = path.join(repo, '.venv', 'bin', 'jupyter');
const port = process.env.PD_UI_PORT;

if (!port) {
  console.error('serve.mjs: PD_UI_PORT is not set; run the browser tests through Playwright.');
  process.exit(2);
}
if (!existsSync(jupyter)) {
  console.error(`serve.mjs: ${jupyter} is missing; run \`make install\` first.`);
  process.exit(2);
}

const top = mkdtempSync(path.join(tmpdir(), 'polyadic-ui-'));
const root = path.join(top, 'root');
const home = path.join(top, 'home');
cpSync(path.join(here, 'fixtures'), root, { recursive: true });
// demo.spec.ts runs the real demo notebook. Its kernel starts in the notebook's folder,
// imports generate.py from there and writes data/greenhouse.csv there when it is missing,
// so the two files are copied side by side and the data is generated afresh from the seed.
for (const name of ['greenhouse.ipynb', 'generate.py']) {
  cpSync(path.join(repo, 'demo', name), path.join(root, 'demo', name));
}
for (const dir of ['config', 'data', 'runtime', 'ipython', 'settings', 'workspaces']) {
  mkdirSync(path.join(home, dir), { recursive: true });
}
// PD_UI_NO_ROUTE=1 (bench/bridge/browser.mjs --comm) turns the polyadic server extension off,
// as on a server where it is not installed: fetches then travel over the comm alone.
if (process.env.PD_UI_NO_ROUTE === '1') {
  writeFileSync(
    path.join(home, 'config', 'jupyter_server_config.json'),
    JSON.stringify({ ServerApp: { jpserver_extensions: { polyadic: false } } })
  );
}
// Answer JupyterLab's news and update questions in advance: no toast over the panel in the
// screenshots, and no request to the internet.
const notificationSettings = path.join(home, 'settings', '@jupyterlab', 'apputils-extension');
mkdirSync(notificationSettings, { recursive: true });
writeFileSync(
  path.join(notificationSettings, 'notification.jupyterlab-settings'),
  JSON.stringify({ fetchNews: 'false', checkForUpdates: false })
);

const args = [
  'lab',
  '--no-browser',
  '--ServerApp.ip=127.0.0.1',
  `--ServerApp.port=${port}`,
  '--ServerApp.port_retries=0',
  // No token and no password: the server listens on 127.0.0.1 only and lives for one run.
  '--IdentityProvider.token=',
  '--ServerApp.password=',
  `--ServerApp.root_dir=${root}`,
  `--LabApp.user_settings_dir=${path.join(home, 'settings')}`,
  `--LabApp.workspaces_dir=${path.join(home, 'workspaces')}`,
  // Lets the tests reach the application object as window.jupyterapp.
  '--LabApp.expose_app_in_browser=True',
  // CI runs as root in a throw-away machine.
  '--allow-root',
  // The extension manager would query the Python package index when its panel opens.
  '--LabApp.extension_manager=readonly',
  '--ServerApp.terminals_enabled=False'
];

// The server's log goes to a file beside the other artifacts; it is printed only when the
// server stops on its own, which is when someone needs to read it.
const logDir = path.join(repo, 'artifacts', 'ui');
mkdirSync(logDir, { recursive: true });
const logPath = path.join(logDir, 'jupyter-server.log');
const log = openSync(logPath, 'w');

const server = spawn(jupyter, args, {
  cwd: root,
  stdio: ['ignore', log, log],
  env: {
    ...process.env,
    JUPYTER_CONFIG_DIR: path.join(home, 'config'),
    JUPYTER_DATA_DIR: path.join(home, 'data'),
    JUPYTER_RUNTIME_DIR: path.join(home, 'runtime'),
    IPYTHONDIR: path.join(home, 'ipython'),
    JUPYTER_PLATFORM_DIRS: '1'
  }
});

let stopping = false;
const stop = signal => {
  // Playwright signals the whole process group, so JupyterLab got the signal too; forward
  // it anyway in case only this script was signalled, then wait for the exit below.
  if (!stopping) {
    stopping = true;
    server.kill(signal);
  }
};
process.on('SIGTERM', () => stop('SIGTERM'));
process.on('SIGINT', () => stop('SIGINT'));

server.on('exit', (code, signal) => {
  rmSync(top, { recursive: true, force: true });
  if (stopping) {
    process.exit(0);
  }
  const lines = readFileSync(logPath, 'utf8').trimEnd().split('\n');
  console.error(`JupyterLab stopped unexpectedly (${signal ?? `exit ${code}`}); end of ${logPath}:`);
  console.error(lines.slice(-40).join('\n'));
  process.exit(code || 1);
});
