/**
 * Find the import circles of a TypeScript tree (default: src/), type-only imports included.
 *
 * Usage: node scripts/check-imports.mjs [DIR]
 *
 * Reads the static `import … from '…'`, `import '…'` and `export … from '…'` statements of every
 * .ts and .tsx file under DIR (comments and template literals are blanked first, so an import
 * quoted in a comment or a help text does not count), resolves the relative ones to files of
 * the tree (`./x` → x.ts, x.tsx, x.d.ts, x/index.ts; `./x.js` → x.ts), and prints every
 * elementary circle, each from its alphabetically first file, grouped by strongly connected
 * component. Exits 1 when there is a circle, 0 when there is none, 2 on bad usage.
 *
 * A type-only circle costs nothing at run time, but it ties the modules together all the same
 * (DESIGN.md: plugins and views depend on interfaces; no import circle).
 */
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');

/** Most circles listed per component: a dense component can hold very many. */
const MAX_CIRCLES_PER_COMPONENT = 200;

const args = process.argv.slice(2);
if (args.length > 1 || args.some(arg => arg.startsWith('-'))) {
  process.stderr.write('Usage: node scripts/check-imports.mjs [DIR]   (default: src)\n');
  process.exit(2);
}
const tree = resolve(args[0] ?? join(root, 'src'));
if (!existsSync(tree) || !statSync(tree).isDirectory()) {
  process.stderr.write(`check-imports: ${tree} is not a directory.\n`);
  process.exit(2);
}

const files = sourceFiles(tree);
const graph = new Map(files.map(file => [file, new Set()]));
for (const file of files) {
  for (const specifier of importSpecifiers(readFileSync(file, 'utf8'))) {
    const target = resolveImport(file, specifier, graph);
    if (target !== null) {
      graph.get(file).add(target);
    }
  }
}

const show = file => relative(process.cwd(), file).split(sep).join('/');
const components = stronglyConnected(graph).filter(
  component => component.length > 1 || graph.get(component[0]).has(component[0])
);
if (components.length === 0) {
  process.stdout.write(`No import circles in ${show(tree) || '.'} (${files.length} files).\n`);
  process.exit(0);
}
let total = 0;
const lines = [];
for (const component of components) {
  const circles = circlesOf(component, graph);
  total += circles.length;
  const more = circles.length >= MAX_CIRCLES_PER_COMPONENT ? ` (listing stops at ${MAX_CIRCLES_PER_COMPONENT})` : '';
  lines.push(
    component.length === 1
      ? `${show(component[0])} imports itself:`
      : `${component.length} files import one another${more}:`
  );
  for (const circle of circles) {
    lines.push(`  ${[...circle, circle[0]].map(show).join(' → ')}`);
  }
}
process.stdout.write(
  `${total} import circle${total === 1 ? '' : 's'} in ${show(tree) || '.'}:\n${lines.join('\n')}\n`
);
process.exit(1);

/** Every .ts and .tsx file under a directory, sorted (node_modules left out). */
function sourceFiles(dir) {
  const found = [];
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const path = join(dir, entry.name);
    if (entry.isDirectory()) {
      if (entry.name !== 'node_modules') {
        found.push(...sourceFiles(path));
      }
    } else if (/\.tsx?$/.test(entry.name)) {
      found.push(path);
    }
  }
  return found.sort();
}

/** The module specifiers of a file's static import and re-export statements. */
function importSpecifiers(text) {
  const code = blankCommentsAndTemplates(text);
  const specifiers = [];
  // `import x from`, `import type { A } from`, `import * as ns from`, `export { a } from`,
  // `export * from`, `export type { A } from`: the clause holds no quote, semicolon or bracket.
  const fromClause = /(?<![\w$.])(?:import|export)\s+[\w$*{},\s]*?\s*from\s*(['"])([^'"\n]+)\1/g;
  const bare = /(?<![\w$.])import\s*(['"])([^'"\n]+)\1/g;
  for (const pattern of [fromClause, bare]) {
    for (const match of code.matchAll(pattern)) {
      specifiers.push(match[2]);
    }
  }
  return specifiers;
}

/**
 * The text with comments and template literals replaced by spaces (line breaks kept), string
 * literals left as they are: what remains of `import` is code.
 */
function blankCommentsAndTemplates(text) {
  let out = '';
  let i = 0;
  const blank = chunk => chunk.replace(/[^\n]/g, ' ');
  while (i < text.length) {
    const c = text[i];
    const next = text[i + 1];
    if (c === '/' && next === '/') {
      const end = text.indexOf('\n', i);
      const stop = end === -1 ? text.length : end;
      out += blank(text.slice(i, stop));
      i = stop;
    } else if (c === '/' && next === '*') {
      const end = text.indexOf('*/', i + 2);
      const stop = end === -1 ? text.length : end + 2;
      out += blank(text.slice(i, stop));
      i = stop;
    } else if (c === "'" || c === '"') {
      let j = i + 1;
      while (j < text.length && text[j] !== c && text[j] !== '\n') {
        j += text[j] === '\\' ? 2 : 1;
      }
      out += text.slice(i, j + 1);
      i = j + 1;
    } else if (c === '`') {
      let j = i + 1;
      while (j < text.length && text[j] !== '`') {
        j += text[j] === '\\' ? 2 : 1;
      }
      out += blank(text.slice(i, j + 1));
      i = j + 1;
    } else {
      out += c;
      i += 1;
    }
  }
  return out;
}

/** The file of the tree a relative specifier names, or null (packages, JSON, files outside). */
function resolveImport(from, specifier, known) {
  if (!specifier.startsWith('./') && !specifier.startsWith('../') && specifier !== '.' && specifier !== '..') {
    return null;
  }
  const base = resolve(dirname(from), specifier);
  const stem = base.replace(/\.(m|c)?jsx?$/, '');
  const candidates = [
    base,
    `${stem}.ts`,
    `${stem}.tsx`,
    `${stem}.d.ts`,
    join(base, 'index.ts'),
    join(base, 'index.tsx')
  ];
  return candidates.find(candidate => known.has(candidate)) ?? null;
}

/** Tarjan's strongly connected components, each sorted, in a fixed order. */
function stronglyConnected(edges) {
  const index = new Map();
  const low = new Map();
  const onStack = new Set();
  const stack = [];
  const components = [];
  let counter = 0;
  for (const start of edges.keys()) {
    if (index.has(start)) {
      continue;
    }
    // Iterative depth-first walk: [node, iterator over its successors].
    const work = [[start, edges.get(start)[Symbol.iterator]()]];
    index.set(start, counter);
    low.set(start, counter++);
    stack.push(start);
    onStack.add(start);
    while (work.length > 0) {
      const [node, successors] = work[work.length - 1];
      const step = successors.next();
      if (!step.done) {
        const next = step.value;
        if (!index.has(next)) {
          index.set(next, counter);
          low.set(next, counter++);
          stack.push(next);
          onStack.add(next);
          work.push([next, edges.get(next)[Symbol.iterator]()]);
        } else if (onStack.has(next)) {
          low.set(node, Math.min(low.get(node), index.get(next)));
        }
        continue;
      }
      work.pop();
      if (work.length > 0) {
        const parent = work[work.length - 1][0];
        low.set(parent, Math.min(low.get(parent), low.get(node)));
      }
      if (low.get(node) === index.get(node)) {
        const component = [];
        let member;
        do {
          member = stack.pop();
          onStack.delete(member);
          component.push(member);
        } while (member !== node);
        components.push(component.sort());
      }
    }
  }
  return components.sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0));
}

/**
 * The elementary circles inside one component, each listed once from its alphabetically first
 * file: a depth-first search from each file through later files only (Johnson's idea, without
 * his blocking sets, which only speed it up), shortest circles first.
 */
function circlesOf(component, edges) {
  const members = new Set(component);
  const circles = [];
  for (let s = 0; s < component.length && circles.length < MAX_CIRCLES_PER_COMPONENT; s++) {
    const start = component[s];
    const allowed = new Set(component.slice(s));
    const path = [start];
    const onPath = new Set([start]);
    const walk = node => {
      for (const next of [...edges.get(node)].sort()) {
        if (circles.length >= MAX_CIRCLES_PER_COMPONENT || !members.has(next) || !allowed.has(next)) {
          continue;
        }
        if (next === start) {
          circles.push([...path]);
        } else if (!onPath.has(next)) {
          path.push(next);
          onPath.add(next);
          walk(next);
          onPath.delete(next);
          path.pop();
        }
      }
    };
    walk(start);
  }
  return circles.sort((a, b) => a.length - b.length || (a.join('\0') < b.join('\0') ? -1 : 1));
}
