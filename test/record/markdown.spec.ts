/**
 * The text/markdown fallback of a analysis cell: untrusted column names and labels must
 * render as their literal text in one table cell. Checked by rendering with marked, the GFM
 * parser JupyterLab's own Markdown renderer uses (@jupyterlab/markedparser-extension).
 */
import * as fs from 'fs';
import * as path from 'path';

import type { marked as Marked } from 'marked';

import { escapeMarkdown, formatValue, markdownSummary, multipletTable } from '../../src/record/markdown';
import type { IMultipletSummary, IRecordDocument } from '../../src/record/types';
import { clone } from './helpers';

// marked ships ES modules to jest's resolver; its UMD build loads as CommonJS
// eslint-disable-next-line @typescript-eslint/no-require-imports
const { marked } = require(path.join(path.dirname(require.resolve('marked/package.json')), 'lib', 'marked.umd.js')) as {
  marked: typeof Marked;
};

const valid = JSON.parse(
  fs.readFileSync(path.join(__dirname, 'fixtures', 'valid-record.json'), 'utf8')
) as IRecordDocument;

/** The text content of the cells of the first body row of rendered HTML. */
function firstRowCells(html: string): string[] {
  const body = html.split('<tbody>')[1] ?? '';
  const row = body.split('</tr>')[0];
  return [...row.matchAll(/<td[^>]*>([\s\S]*?)<\/td>/g)].map(m => m[1]);
}

function decode(html: string): string {
  return html
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, '&');
}

const multiplet = (columns: string[]): IMultipletSummary => ({
  columns,
  order: columns.length,
  entropy: 2,
  co_information: -0.25,
  total_correlation: 0.5,
  dual_total_correlation: 1.25,
  o_information: -0.75
});

describe('markdown fallback', () => {
  describe('#escapeMarkdown', () => {
    it.each([
      ['a|b', 'a|b'],
      ['<img src=x onerror=alert(1)>', '<img src=x onerror=alert(1)>'],
      ['*bold* _it_ `code` [link](http://x)', '*bold* _it_ `code` [link](http://x)'],
      ['$x^2$ \\ back', '$x^2$ \\ back'],
      ['&amp; # heading', '&amp; # heading'],
      ['soil_moisture_bed1_pct', 'soil_moisture_bed1_pct']
    ])('should render %j as its literal text in one cell', (name, literal) => {
      const table = multipletTable('Synergy', [multiplet([name, 'flow'])]).join('\n');
      const cells = firstRowCells(marked.parse(table, { async: false, gfm: true }) as string);
      expect(cells).toHaveLength(6);
      expect(decode(cells[0])).toBe(`${literal} · flow`);
      expect(cells[0]).not.toMatch(/<(?!\/?td)[a-z]/i);
    });

    it('should escape the dollar signs that JupyterLab would render as math', () => {
      // JupyterLab removes $…$ for MathJax before marked sees the text; a backslash keeps it literal
      expect(escapeMarkdown('$x^2$')).toBe('\\$x\\^2\\$');
    });

    it('should turn line breaks and control characters into spaces', () => {
      expect(escapeMarkdown('a\nb\r\u0007c\u2028d')).toBe('a b  c d');
    });
  });

  describe('#formatValue', () => {
    it('should print four decimals with a true minus sign', () => {
      expect(formatValue(-0.98532)).toBe('−0.9853');
      expect(formatValue(1.5)).toBe('1.5000');
    });
  });

  describe('#markdownSummary', () => {
    it('should list the synergy and redundancy tables of a record', () => {
      const analysis = valid.analyses[0];
      const text = markdownSummary(analysis);
      const html = marked.parse(text, { async: false, gfm: true }) as string;
      expect(html.match(/<table>/g)).toHaveLength(2);
      expect(text).toContain(`**Polyadic analysis pd\\-0fixture01: Drip line\\, quartiles**`);
      const top = analysis.summary.synergy[0];
      expect(text).toContain(`| ${formatValue(top.co_information)} | ${formatValue(top.o_information)} |`);
    });

    it('should say when a side has no multiplet', () => {
      const analysis = clone(valid.analyses[1]);
      analysis.summary.redundancy = [];
      expect(markdownSummary(analysis)).toContain('*Redundancy (most positive co-information): none.*');
    });
  });
});
