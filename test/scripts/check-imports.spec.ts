/**
 * scripts/check-imports.mjs on tiny trees written here: it finds a circle, type-only imports
 * and re-exports included, ignores imports quoted in comments and texts, and passes a tree
 * without one.
 */
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as os from 'os';
import * as path from 'path';

const SCRIPT = path.resolve(__dirname, '..', '..', 'scripts', 'check-imports.mjs');

/** Write files (path → text) into a fresh folder; returns the folder. */
function tree(files: Record<string, string>): string {
  const folder = fs.mkdtempSync(path.join(os.tmpdir(), 'polyadic-imports-'));
  for (const [name, text] of Object.entries(files)) {
    const file = path.join(folder, name);
    fs.mkdirSync(path.dirname(file), { recursive: true });
    fs.writeFileSync(file, text);
  }
  return folder;
}

/** Run the script on a folder from `cwd` (by default the folder itself, so it prints paths relative to it). */
function check(folder: string, cwd = folder): { code: number | null; stdout: string; stderr: string } {
  const run = spawnSync(process.execPath, [SCRIPT, folder], { cwd, encoding: 'utf8' });
  return { code: run.status, stdout: run.stdout, stderr: run.stderr };
}

/** Files that import each other only in one direction, with the traps of a real tree. */
const ACYCLIC = {
  'tokens.ts': "import type { Units } from './engine/types';\nexport interface IModel { units: Units }\n",
  'engine/types.ts': "export type Units = 'bits' | 'nats';\n",
  'engine/index.ts': "export * from './types';\n",
  'panel/model.ts': [
    "import type { IModel } from '../tokens';",
    "import { Signal } from '@lumino/signaling';",
    "import schema from '../../schema/plugin.json';",
    "// import { PanelView } from './view';  (a comment, not an import)",
    '/* export * from "./view"; */',
    'export const HELP = `',
    "import { PanelView } from './view';",
    '`;',
    "export const URL = 'http://example.org/import';",
    'export class PanelModel implements IModel { units = "bits" as const; signal = Signal; schema = schema; }',
    ''
  ].join('\n'),
  'panel/view.ts': [
    'import {',
    '  PanelModel',
    "} from './model';",
    "import { Units } from '../engine';",
    "import '../engine/types.js';",
    'export class PanelView { model?: PanelModel; units?: Units }',
    ''
  ].join('\n')
};

describe('check-imports', () => {
  it('should pass a tree without a circle, whatever comments and texts quote', () => {
    const run = check(tree(ACYCLIC));
    expect(run.stderr).toBe('');
    expect(run.stdout).toBe('No import circles in . (5 files).\n');
    expect(run.code).toBe(0);
  });

  it('should find a circle made of a type-only import, a multi-line import and a re-export', () => {
    const folder = tree({
      ...ACYCLIC,
      // tokens → panel/index → panel/model → tokens
      'tokens.ts': "import type { PanelModel } from './panel';\nexport type IModel = PanelModel;\n",
      'panel/index.ts': "export { PanelModel } from './model';\n"
    });
    const run = check(folder);
    expect(run.code).toBe(1);
    expect(run.stdout).toBe(
      ['1 import circle in .:', '3 files import one another:', '  panel/index.ts → panel/model.ts → tokens.ts → panel/index.ts', ''].join(
        '\n'
      )
    );
  });

  it('should list every circle of a component, and a file that imports itself', () => {
    const folder = tree({
      'a.ts': "import { b } from './b';\nimport { c } from './c.js';\nexport const a = b + c;\n",
      'b.ts': "import { a } from './a';\nexport const b = 1;\nexport const again = a;\n",
      'c.ts': "import type { a } from './a';\nexport const c = 2;\nexport type A = typeof a;\n",
      'd.ts': "import * as self from './d';\nexport const d = self;\n"
    });
    const run = check(folder);
    expect(run.code).toBe(1);
    expect(run.stdout.split('\n')).toEqual([
      '3 import circles in .:',
      '3 files import one another:',
      '  a.ts → b.ts → a.ts',
      '  a.ts → c.ts → a.ts',
      'd.ts imports itself:',
      '  d.ts → d.ts',
      ''
    ]);
  });

  it('should find no import circle in the extension’s own src', () => {
    const root = path.resolve(__dirname, '..', '..');
    const run = check(path.join(root, 'src'), root);
    expect(run.stdout).toMatch(/^No import circles in .*src \(\d+ files\)\.\n$/);
    expect(run.code).toBe(0);
  });

  it('should refuse a folder that does not exist', () => {
    const folder = tree({});
    const run = check(path.join(folder, 'missing'), folder);
    expect(run.code).toBe(2);
    expect(run.stderr).toMatch(/is not a directory/);
  });
});
