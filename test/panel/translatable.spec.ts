/**
 * User-facing text of the views goes through the translation bundle: a string literal set as
 * an element's text, title or placeholder, given to textElement as its text, to setAttribute as
 * an accessible name, to a labelled select as its label, or to a chart or section as its label or
 * titles, must be the argument of `trans.__`/`trans._n`. Data (column names, values, messages the
 * engine wrote) are expressions, not literals, and pass as they are. A plain read of the source,
 * not a parser: it looks at the start of each right-hand side and of each branch of a `?:`.
 */
import * as fs from 'fs';
import * as path from 'path';

const SRC = path.resolve(__dirname, '..', '..', 'src');

/** Folders whose files draw what people read. */
const VIEW_FOLDERS = ['panel', 'cells'];

/**
 * Models and stores hold tables of labels ({ label: 'Adequacy', title: '…' }) as data; the views
 * pass each through the bundle when they show it (`trans.__(column.label)`).
 */
const MODEL_FILE = /(^|-)model\.ts$|^(store|stats)\.ts$/;

/** Literals that are not words: empty text, punctuation and signs used as data. */
const NOT_WORDS = /^[\s\d.,:;·•–—−+×()[\]%…→←↑↓*#/|'"-]*$/;

/** Every .ts file under a folder. */
function sourceFiles(folder: string): string[] {
  return fs.readdirSync(folder, { withFileTypes: true }).flatMap(entry => {
    const full = path.join(folder, entry.name);
    return entry.isDirectory() ? sourceFiles(full) : entry.name.endsWith('.ts') && !entry.name.endsWith('.d.ts') ? [full] : [];
  });
}

/** Comments blanked (keeping line breaks), so quoted examples in them do not count. */
function withoutComments(text: string): string {
  return text.replace(/\/\*[\s\S]*?\*\//g, block => block.replace(/[^\n]/g, ' ')).replace(/(^|[^:'"`\\])\/\/[^\n]*/g, '$1');
}

/** A string or template literal at the start of `text` that holds a word, or null. */
function leadingWords(text: string): string | null {
  const match = /^\s*(['"`])((?:\\.|(?!\1)[^\\])*)\1/.exec(text);
  if (match === null) {
    return null;
  }
  // interpolations are data; escapes of signs (\u26a0, \\) are not words
  // nor are markup tags and plotly's %{…} placeholders (a hover label of data only passes)
  const body = match[2]
    .replace(/\$\{(?:[^{}]|\{[^{}]*\})*\}/g, '')
    .replace(/\\u[0-9a-fA-F]{4}|\\\\/g, '')
    .replace(/<[^>]*>|%\{[^}]*\}/g, '');
  return NOT_WORDS.test(body) ? null : match[0].trim();
}

/** The untranslated literals of one file, each as `file:line: literal`. */
function untranslated(file: string, text: string): string[] {
  const source = withoutComments(text);
  const found: string[] = [];
  const report = (index: number, literal: string): void => {
    const line = source.slice(0, index).split('\n').length;
    found.push(`${path.relative(SRC, file)}:${line}: ${literal.slice(0, 70)}`);
  };
  // node.textContent = '…', node.title = '…', input.placeholder = '…', x.title.label = '…'
  for (const match of source.matchAll(/\.(textContent|title|placeholder|label|caption)\s*=(?!=)/g)) {
    const rest = source.slice(match.index! + match[0].length);
    const end = rest.search(/;\s*(\n|$)/);
    const statement = end < 0 ? rest : rest.slice(0, end + 1);
    for (const branch of statement.split(/\?\?|\|\||\?|:(?![^(]*\))/)) {
      const literal = leadingWords(branch);
      if (literal !== null) {
        report(match.index!, literal);
      }
    }
  }
  const calls = [
    /textElement\(\s*'[^']*'\s*,\s*(?:'[^']*'|`[^`]*`|[\w.]+)\s*,/g,
    /setAttribute\(\s*'(?:aria-label|title|placeholder)'\s*,/g,
    /labelledSelect\(/g,
    ...(MODEL_FILE.test(path.basename(file)) ? [] : [/\b(?:label|title|subtitle|xTitle|yTitle|caption|text|hovertemplate):/g])
  ];
  for (const pattern of calls) {
    for (const match of source.matchAll(pattern)) {
      const literal = leadingWords(source.slice(match.index! + match[0].length));
      if (literal !== null) {
        report(match.index!, literal);
      }
    }
  }
  return found;
}

describe('untranslated', () => {
  const file = path.join(SRC, 'panel', 'example.ts');

  it('should find a literal set as text, title, placeholder, accessible name, chart label or hover label', () => {
    const text = [
      "node.textContent = 'Pick a dataframe';",
      'node.title = `Rows of ${name}`;',
      "input.placeholder = ready ? trans.__('auto') : 'automatic';",
      "const p = textElement('p', 'pd-Note', 'No notebook is open');",
      "box.setAttribute('aria-label', 'Recorded analyses');",
      "const chart = new ChartView({ label: 'Binning preview', height: 130 });",
      "const units = labelledSelect('Units', choices, onChange);",
      "const bar = { hovertemplate: '%{x}<br>%{y} rows<extra></extra>', colorbar: { title: { text: 'rows' } } };"
    ].join('\n');
    expect(untranslated(file, text).sort()).toEqual([
      "panel/example.ts:1: 'Pick a dataframe'",
      'panel/example.ts:2: `Rows of ${name}`',
      "panel/example.ts:3: 'automatic'",
      "panel/example.ts:4: 'No notebook is open'",
      "panel/example.ts:5: 'Recorded analyses'",
      "panel/example.ts:6: 'Binning preview'",
      "panel/example.ts:7: 'Units'",
      "panel/example.ts:8: '%{x}<br>%{y} rows<extra></extra>'",
      "panel/example.ts:8: 'rows'"
    ]);
  });

  it('should let translated text, data and signs pass', () => {
    const text = [
      "node.textContent = trans.__('Pick a dataframe');",
      "node.textContent = this.trans._n('%2 row', '%2 rows', n, formatCount(n));",
      'node.textContent = column.name;',
      "node.textContent = '';",
      "cell.textContent = value === null ? '–' : formatValue(value);",
      "const p = textElement('td', 'pd-Number', formatCount(rows));",
      "const flag = textElement('span', 'pd-Flag', '\\u26a0 ');",
      "// node.textContent = 'a comment';",
      "const bar = { hovertemplate: `${trans.__('%{x}<br>%{y} rows')}<extra></extra>`, texttemplate: '%{z}' };"
    ].join('\n');
    expect(untranslated(file, text)).toEqual([]);
    // a model's table of labels is data, shown through the bundle by its view
    expect(untranslated(path.join(SRC, 'panel', 'results', 'store.ts'), "{ key: 'order', label: 'Order' }")).toEqual([]);
  });
});

describe('the views', () => {
  it('should show no untranslated literal', () => {
    const files = VIEW_FOLDERS.flatMap(folder => sourceFiles(path.join(SRC, folder)));
    expect(files.length).toBeGreaterThan(10);
    const found = files.flatMap(file => untranslated(file, fs.readFileSync(file, 'utf8')));
    expect(found).toEqual([]);
  });
});
