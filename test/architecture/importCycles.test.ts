/**
 * No import cycles in src/: every module can be read, tested and replaced from the bottom up
 * (a second store backend, incremental outputs). Type-only imports count too: a cycle of types
 * is a cycle of concepts. Strongly connected components by Tarjan (1972), "Depth-first search
 * and linear graph algorithms", SIAM J Comput 1(2):146-160.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const SRC = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../src');

/** Relative specifiers of `import ... from`, `export ... from` and `import('...')` in a module's text (comments left out). */
export function relativeImports(text: string): string[] {
  const code = text.replace(/\/\*[\s\S]*?\*\//g, '').replace(/^\s*\/\/.*$/gm, '');
  const found: string[] = [];
  const pattern = /(?:import|export)\s[^;]*?from\s+'(\.[^']+)'|import\(\s*'(\.[^']+)'\s*\)/g;
  for (const match of code.matchAll(pattern)) found.push((match[1] ?? match[2])!);
  return found;
}

/** The components of more than one node (or a node importing itself) of a directed graph. */
export function cycles(graph: ReadonlyMap<string, readonly string[]>): string[][] {
  const index = new Map<string, number>();
  const low = new Map<string, number>();
  const stack: string[] = [];
  const onStack = new Set<string>();
  const found: string[][] = [];
  let next = 0;
  const visit = (node: string): void => {
    index.set(node, next);
    low.set(node, next);
    next++;
    stack.push(node);
    onStack.add(node);
    for (const to of graph.get(node) ?? []) {
      if (!graph.has(to)) continue;
      if (!index.has(to)) {
        visit(to);
        low.set(node, Math.min(low.get(node)!, low.get(to)!));
      } else if (onStack.has(to)) low.set(node, Math.min(low.get(node)!, index.get(to)!));
    }
    if (low.get(node) === index.get(node)) {
      const component: string[] = [];
      let member: string;
      do {
        member = stack.pop()!;
        onStack.delete(member);
        component.push(member);
      } while (member !== node);
      if (component.length > 1 || (graph.get(node) ?? []).includes(node)) found.push(component.sort());
    }
  };
  for (const node of graph.keys()) if (!index.has(node)) visit(node);
  return found;
}

function sourceGraph(): Map<string, string[]> {
  const graph = new Map<string, string[]>();
  const walk = (dir: string): void => {
    for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else if (entry.name.endsWith('.ts')) {
        const targets = relativeImports(fs.readFileSync(full, 'utf8')).map((specifier) =>
          path.resolve(dir, specifier).replace(/\.js$/, '.ts'),
        );
        graph.set(full, targets);
      }
    }
  };
  walk(SRC);
  return graph;
}

describe('the import graph of src/', () => {
  it('finds a cycle where there is one, type-only and dynamic imports included (hand-made graphs)', () => {
    expect(
      relativeImports(
        "import type { A } from './a.js';\nexport { B } from './b.js';\nconst c = await import('./c.js');\nimport fs from 'node:fs';\n/** runs `await import('./d.js')` */\n// import { e } from './e.js';",
      ),
    ).toEqual(['./a.js', './b.js', './c.js']);
    expect(
      cycles(
        new Map([
          ['a', ['b']],
          ['b', ['c']],
          ['c', ['a']],
          ['d', ['a']],
        ]),
      ),
    ).toEqual([['a', 'b', 'c']]);
    expect(
      cycles(
        new Map([
          ['a', ['b']],
          ['b', []],
        ]),
      ),
    ).toEqual([]);
    expect(cycles(new Map([['a', ['a']]]))).toEqual([['a']]);
  });

  it('has no cycle', () => {
    const graph = sourceGraph();
    expect(graph.size).toBeGreaterThan(100);
    expect(cycles(graph).map((component) => component.map((file) => path.relative(SRC, file)))).toEqual([]);
  });
});
