/**
 * The layering of server/src, read from the imports themselves: every folder is one stage, a
 * file imports only its own stage or earlier ones, there is no import cycle, and only lsp/
 * imports the language-server libraries. shared-math imports nothing with I/O.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const ROOT = path.resolve(__dirname, '../..');
const SRC = path.join(ROOT, 'server/src');

/** Bottom to top. A file may import from its own stage or any stage before it. */
export const STAGES = [
  'base',
  'parse',
  'fields',
  'consumers',
  'setup',
  'analysis',
  'rules',
  'fix',
  'engine',
  'views',
  'workspace',
  'lsp',
  'cli',
] as const;

/** Imports that run against the order on purpose, each explained in ARCHITECTURE.md. */
const ALLOWED_AGAINST_ORDER: ReadonlyArray<readonly [string, string]> = [];

const LSP_LIBRARIES = /^vscode-languageserver(?:-[a-z]+)?(?:\/|$)|^vscode-jsonrpc(?:\/|$)/;
const IO_MODULES = /^(?:node:)?(?:fs|fs\/promises|net|http|https|child_process|worker_threads|dgram|tls|os|readline)$/;

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...sourceFiles(full));
    else if (/\.ts$/.test(entry.name) && !entry.name.endsWith('.d.ts')) out.push(full);
  }
  return out;
}

/** Module specifiers of static imports, re-exports and dynamic imports (comments stripped). */
export function importsOf(text: string): string[] {
  const code = text.replace(/\/\*[\s\S]*?\*\//g, '').replace(/(^|[^:'"`])\/\/.*$/gm, '$1');
  const specs: string[] = [];
  const re = /(?:^|[\s;])(?:import|export)\s+(?:type\s+)?(?:[^'";]*?\sfrom\s+)?['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g;
  for (let m = re.exec(code); m; m = re.exec(code)) specs.push((m[1] ?? m[2])!);
  return specs;
}

function resolveLocal(from: string, spec: string): string | null {
  const base = path.resolve(path.dirname(from), spec);
  for (const candidate of [base + '.ts', path.join(base, 'index.ts'), base]) {
    if (fs.existsSync(candidate) && fs.statSync(candidate).isFile()) return candidate;
  }
  return null;
}

function stageOf(file: string): string {
  return path.relative(SRC, file).split(path.sep)[0]!;
}

const files = sourceFiles(SRC);
const graph = new Map<string, string[]>();
const external = new Map<string, string[]>();
for (const file of files) {
  const local: string[] = [];
  const outside: string[] = [];
  for (const spec of importsOf(fs.readFileSync(file, 'utf8'))) {
    if (spec.startsWith('.')) {
      const target = resolveLocal(file, spec);
      if (target && target.startsWith(SRC)) local.push(target);
    } else outside.push(spec);
  }
  graph.set(file, local);
  external.set(file, outside);
}
const rel = (f: string) => path.relative(SRC, f);

describe('server/src layering', () => {
  it('reads a real import graph (guards the reader of this test)', () => {
    expect(files.length).toBeGreaterThan(50);
    expect(importsOf("import { a } from './x';\nexport * from \"../y\";\n// import z from './no'\nconst m = import('./lazy');")).toEqual([
      './x',
      '../y',
      './lazy',
    ]);
    const edges = [...graph.values()].reduce((n, list) => n + list.length, 0);
    expect(edges).toBeGreaterThan(100);
  });

  it('puts every file in a known stage folder', () => {
    const unknown = files.filter((f) => !(STAGES as readonly string[]).includes(stageOf(f))).map(rel);
    expect(unknown).toEqual([]);
  });

  it('imports only the same or an earlier stage', () => {
    const against: string[] = [];
    for (const [file, targets] of graph) {
      const from = STAGES.indexOf(stageOf(file) as (typeof STAGES)[number]);
      for (const target of targets) {
        const to = STAGES.indexOf(stageOf(target) as (typeof STAGES)[number]);
        if (to <= from) continue;
        const pair = [stageOf(file), stageOf(target)] as const;
        if (ALLOWED_AGAINST_ORDER.some(([a, b]) => a === pair[0] && b === pair[1])) continue;
        against.push(`${rel(file)} -> ${rel(target)}`);
      }
    }
    expect(against).toEqual([]);
  });

  it('has no import cycle between files', () => {
    const state = new Map<string, 1 | 2>();
    const cycles: string[] = [];
    const stack: string[] = [];
    const visit = (file: string) => {
      state.set(file, 1);
      stack.push(file);
      for (const next of graph.get(file) ?? []) {
        const s = state.get(next);
        if (s === 1) cycles.push([...stack.slice(stack.indexOf(next)), next].map(rel).join(' -> '));
        else if (s === undefined) visit(next);
      }
      stack.pop();
      state.set(file, 2);
    };
    for (const file of files) if (!state.has(file)) visit(file);
    expect(cycles).toEqual([]);
  });

  it('lets only lsp/ import the language-server libraries', () => {
    const offenders = [...external]
      .filter(([file]) => stageOf(file) !== 'lsp')
      .flatMap(([file, specs]) => specs.filter((s) => LSP_LIBRARIES.test(s)).map((s) => `${rel(file)} imports ${s}`));
    expect(offenders).toEqual([]);
  });

  it('keeps I/O out of every stage below workspace/', () => {
    const ioFree = STAGES.slice(0, STAGES.indexOf('workspace'));
    const offenders = [...external]
      .filter(([file]) => (ioFree as readonly string[]).includes(stageOf(file)))
      .flatMap(([file, specs]) => specs.filter((s) => IO_MODULES.test(s)).map((s) => `${rel(file)} imports ${s}`));
    expect(offenders).toEqual([]);
  });

  it('keeps shared-math free of imports from outside it', () => {
    const mathFiles = sourceFiles(path.join(ROOT, 'shared-math/src'));
    expect(mathFiles.length).toBeGreaterThan(3);
    const offenders = mathFiles.flatMap((file) =>
      importsOf(fs.readFileSync(file, 'utf8'))
        .filter((s) => !s.startsWith('./'))
        .map((s) => `${path.relative(ROOT, file)} imports ${s}`),
    );
    expect(offenders).toEqual([]);
  });
});
