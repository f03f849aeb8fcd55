/**
 * The seam between plugins and the panel's models (src/tokens.ts): the tokens name interfaces,
 * never a model class, and the records plugin's helpers take those interfaces.
 */
import * as fs from 'fs';
import * as path from 'path';

const SRC = path.resolve(__dirname, '..', 'src');

/** The `import … from '…'` statements of a TypeScript file (comments blanked first). */
function importsOf(file: string): { typeOnly: boolean; specifier: string }[] {
  const text = fs.readFileSync(file, 'utf8').replace(/\/\*[\s\S]*?\*\//g, '').replace(/\/\/[^\n]*/g, '');
  const found: { typeOnly: boolean; specifier: string }[] = [];
  for (const match of text.matchAll(/^\s*(import|export)\s+(type\s+)?[^'";]*?from\s+'([^']+)'/gm)) {
    found.push({ typeOnly: match[2] !== undefined, specifier: match[3] });
  }
  return found;
}

/** The file a relative specifier of `from` names. */
function resolveLocal(from: string, specifier: string): string {
  const base = path.resolve(path.dirname(from), specifier);
  for (const candidate of [`${base}.ts`, path.join(base, 'index.ts')]) {
    if (fs.existsSync(candidate)) {
      return candidate;
    }
  }
  throw new Error(`${specifier} (imported by ${from}) names no file`);
}

describe('src/tokens.ts', () => {
  const tokens = path.join(SRC, 'tokens.ts');
  const local = importsOf(tokens).filter(entry => entry.specifier.startsWith('.'));

  it('should import from the project only types', () => {
    expect(local.length).toBeGreaterThan(0);
    expect(local.filter(entry => !entry.typeOnly).map(entry => entry.specifier)).toEqual([]);
  });

  it('should import from no module that defines a class (a concrete model)', () => {
    const withClass = local
      .map(entry => resolveLocal(tokens, entry.specifier))
      .filter(file => /^\s*export\s+(abstract\s+)?class\s/m.test(fs.readFileSync(file, 'utf8')))
      .map(file => path.relative(SRC, file));
    expect(withClass).toEqual([]);
  });
});

describe('the records plugin', () => {
  // What src/index.ts hands the records plugin's helpers comes from the token's interfaces.
  it.each(['panel/records/connect.ts', 'panel/records/restore.ts', 'panel/records/tracker.ts'])(
    'should see in %s no model class of the panel',
    file => {
      const full = path.join(SRC, file);
      const models = importsOf(full)
        .filter(entry => entry.specifier.startsWith('.'))
        .map(entry => path.relative(SRC, resolveLocal(full, entry.specifier)))
        .filter(target => target.startsWith('panel/') && target.endsWith('model.ts'));
      expect(models).toEqual([]);
    }
  );
});
