/**
 * The text/markdown fallback of a analysis cell: untrusted column names and labels must
 * render as their literal text in one table cell. Checked by rendering with marked, the GFM
 * parser JupyterLab's own Markdown renderer uses (@jupyterlab/markedparser-extension).
 */
import * as fs from 'fs';
import * as path from 'path';

import type { marked as Marked } from 'marked';

import {
  escapeMarkdown,
  formatProbability,
  formatValue,
  markdownBody,
  markdownSummary,
  multipletTable
} from '../../src/record/markdown';
import type { IMultipletSummary, IRecordDocument, IResultSummary } from '../../src/record/types';
import { runPython, tempFolder } from '../bridge/helpers';
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

/** The Markdown body polyadic/show.py writes for each summary (run at test time). */
function pythonBodies(summaries: IResultSummary[]): string[][] {
  const file = path.join(tempFolder('markdown'), 'summaries.json');
  fs.writeFileSync(file, JSON.stringify(summaries));
  const code = [
    'import json, sys',
    'from polyadic.show import markdown_body',
    'print(json.dumps([markdown_body(s) for s in json.load(open(sys.argv[1], encoding="utf-8"))]))'
  ].join('\n');
  return JSON.parse(runPython(code, [file])) as string[][];
}

describe('markdown fallback with evidence', () => {
  const tested = valid.analyses[1];

  it('should show q and p beside co-information, what was tested and the null band', () => {
    const text = markdownSummary(tested);
    const top = tested.summary.synergy[0];
    expect(text).toContain('| Synergy (most negative co-information) | order | co-information | q | p | O-information |');
    // q 0.01 and p 1/501 in significant digits
    expect(text).toContain(`| ${formatValue(top.co_information)} | 0.01000 | 0.001996 | ${formatValue(top.o_information)} |`);
    expect(text).toContain(
      'Benjamini–Hochberg q over 10 multiplets of orders 2–3; q controls the expected share of false discoveries ' +
        'among those called, not the chance that any one is false.'
    );
    expect(text).toContain('Null band of co-information (2.5–97.5 % of surrogates): order 2 −0.0010 to 0.0020.');
    expect(text).toContain('p from 500 surrogates (each column shuffled on its own, which destroys all dependence), seed 42, two-sided.');
    const html = marked.parse(text, { async: false, gfm: true }) as string;
    expect(firstRowCells(html)).toHaveLength(8);
  });

  it('should show a dash for a q that was not computed and mark adequacy below 1', () => {
    const analysis = clone(tested);
    analysis.summary.redundancy[0].adequacy = 0.5;
    analysis.summary.redundancy[0].q_value = null;
    analysis.summary.inadequate_count = 1;
    const text = markdownSummary(analysis);
    const names = analysis.summary.redundancy[0].columns.map(escapeMarkdown).join(' · ');
    expect(text).toContain(`| ${names} † | 2 | ${formatValue(analysis.summary.redundancy[0].co_information)} | — |`);
    expect(text).toContain('† adequacy below 1: fewer rows than possible joint cells, so the estimates are biased');
    expect(text).toContain('In all, 1 multiplet of order 2 and above has adequacy below 1.');
    expect(formatProbability(undefined)).toBe('—');
  });

  it('should keep the tables of a record without statistics as they were', () => {
    const text = markdownSummary(valid.analyses[0]);
    expect(text).not.toContain('| q | p |');
    expect(text).not.toContain('Benjamini–Hochberg');
    expect(text).not.toContain('†');
  });

  it("should write the same body as polyadic/show.py for the same summary, character for character", () => {
    const ties = clone(tested.summary);
    // halves that JavaScript rounds up and Python's format to even; a tiny p; −0; a gap in the orders
    ties.synergy[0].p_value = 0.015625;
    ties.synergy[0].q_value = 1e-5;
    ties.synergy[0].co_information = -0.03125;
    ties.synergy[0].o_information = -0;
    ties.synergy[0].adequacy = 0.75;
    ties.evidence!.families.co_information = { orders: [2, 4], count: 1140 };
    ties.evidence!.null_bands.push({ order: 4, low: -0.00005, high: 0.00015, mean: 0, values: 10 });
    ties.inadequate_count = 3;
    const plain = clone(valid.analyses[0].summary);
    const summaries = [tested.summary, ties, plain, { ...plain, synergy: [], redundancy: [] }];
    const python = pythonBodies(summaries);
    summaries.forEach((summary, i) => {
      expect([i, python[i]]).toEqual([i, markdownBody(summary)]);
    });
    // the cases above reached the lines they are there for
    expect(markdownBody(ties).join('\n')).toContain('| −0.0313 | 1.000e-5 | 0.01563 | 0.0000 |');
    expect(markdownBody(ties).join('\n')).toContain('1,140 multiplets of orders 2, 4');
  });
});
