/**
 * Shared helpers for the adversarial, load and safety tests: a forced GC for heap measurements,
 * the bundled CLI (built on demand, once, under a lock), and a bounded CLI runner.
 */
import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import type { FileReading, FileResult } from '../../server/src/engine/api';
import type { LocatedNode } from '../../server/src/parse/types';

/** The repository root (NOISELINT_REPO overrides it for bundled copies of these helpers). */
export const REPO = process.env.NOISELINT_REPO ?? fileURLToPath(new URL('../..', import.meta.url)).replace(/\/$/, '');
export const CLI = join(REPO, 'server/dist/noiselint.js');

// ------------------------------------------------------------------ memory

let gcFn: (() => void) | undefined;

/** A real `gc()` in this process (V8 flag set at run time), or undefined if V8 refuses. */
export function forcedGc(): (() => void) | undefined {
  if (gcFn) return gcFn;
  const g = (globalThis as { gc?: () => void }).gc;
  if (typeof g === 'function') return (gcFn = g);
  try {
    setFlagsFromString('--expose-gc');
    gcFn = runInNewContext('gc') as () => void;
  } catch {
    gcFn = undefined;
  }
  return gcFn;
}

function settledHeap(): number {
  const gc = forcedGc();
  if (gc) {
    gc();
    gc();
  }
  return process.memoryUsage().heapUsed;
}

/**
 * Heap growth kept alive by `fn`'s result (measured after a forced GC, result still referenced).
 * A parser that materialised an alias bomb or a 1e12-step schedule would show up here; peak
 * memory is bounded separately by running the CLI under --max-old-space-size.
 */
export function retainedHeapGrowth<T>(fn: () => T): { result: T; growthBytes: number; gcExposed: boolean } {
  const before = settledHeap();
  const result = fn();
  const after = settledHeap();
  return { result, growthBytes: after - before, gcExposed: forcedGc() !== undefined };
}

export const MB = 1024 * 1024;

/**
 * A flat copy of `s`. Strings built by concatenation are V8 "cons" trees; the first reader
 * flattens them, which would count a copy of the input as the reader's own growth.
 */
export function flat(s: string): string {
  return Buffer.from(s, 'utf8').toString('utf8');
}

// ------------------------------------------------------------------ located tree

/** Depth and node count of a located tree, and every scalar value's JS type. */
export function treeStats(root: LocatedNode | null): { depth: number; nodes: number; types: Set<string>; longestList: number } {
  const types = new Set<string>();
  let nodes = 0;
  let depth = 0;
  let longestList = 0;
  const stack: [LocatedNode, number][] = root ? [[root, 1]] : [];
  while (stack.length) {
    const [n, d] = stack.pop()!;
    nodes++;
    depth = Math.max(depth, d);
    if (n.kind === 'scalar') {
      types.add(n.value === null ? 'null' : typeof n.value);
    } else if (n.kind === 'list') {
      longestList = Math.max(longestList, n.items.length);
      for (const item of n.items) stack.push([item, d + 1]);
    } else {
      for (const e of n.entries) if (e.value) stack.push([e.value, d + 1]);
    }
  }
  return { depth, nodes, types, longestList };
}

/** Everything the file reports: parse problem codes/messages, setup problems, findings. */
export function reportText(file: FileResult | FileReading): string {
  const lines = file.parsed.problems.map((p) => `problem ${p.code}: ${p.message}`);
  for (const d of file.documents) for (const p of d.setup.problems) lines.push(`setup ${p.kind}: ${p.message}`);
  if ('findings' in file) for (const f of file.findings) lines.push(`finding ${f.rule}: ${f.message}`);
  return lines.join('\n');
}

export function expectSpansInside(file: FileResult, text: string): void {
  const bad = [
    ...file.parsed.problems.map((p) => ({ what: `problem ${p.code}`, span: p.span })),
    ...file.findings.map((f) => ({ what: `finding ${f.rule}`, span: f.span })),
  ].filter(({ span }) => !(span.start >= 0 && span.start <= span.end && span.end <= text.length));
  if (bad.length) throw new Error(`spans outside the text (length ${text.length}): ${JSON.stringify(bad.slice(0, 5))}`);
}

// ------------------------------------------------------------------ the bundled CLI

const SOURCE_DIRS = ['server/src', 'shared-math/src'].map((d) => join(REPO, d));

function newestMtime(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    if (entry.isDirectory()) newest = Math.max(newest, newestMtime(p));
    else if (entry.isFile()) newest = Math.max(newest, statSync(p).mtimeMs);
  }
  return newest;
}

function distIsFresh(): boolean {
  if (!existsSync(CLI)) return false;
  const built = statSync(CLI).mtimeMs;
  return SOURCE_DIRS.every((d) => !existsSync(d) || newestMtime(d) <= built);
}

const sleep = (ms: number) => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);

/**
 * Builds server/dist when it is missing or older than the sources. Test files run in parallel
 * workers, so the build is serialised with a lock folder (mkdir is atomic).
 */
export function ensureCliBuilt(): void {
  if (distIsFresh()) return;
  const lock = join(REPO, 'build', '.noiselint-test-build.lock');
  mkdirSync(join(REPO, 'build'), { recursive: true });
  for (let waited = 0; ; waited += 200) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      // Another worker builds; a lock older than two minutes is stale.
      try {
        if (Date.now() - statSync(lock).mtimeMs > 120_000) rmSync(lock, { recursive: true, force: true });
      } catch {
        /* gone already */
      }
      sleep(200);
      if (waited > 180_000) throw new Error('timed out waiting for another test worker to build server/dist');
    }
  }
  try {
    if (distIsFresh()) return;
    const r = spawnSync(process.execPath, ['scripts/build.mjs'], { cwd: REPO, encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`node scripts/build.mjs failed:\n${r.stderr}`);
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

export interface CliRun {
  status: number | null;
  signal: NodeJS.Signals | null;
  stdout: string;
  stderr: string;
}

/**
 * Runs `node [nodeArgs] server/dist/noiselint.js args` with a hang guard (a kill after
 * `killAfterMs` counts as a failure, not a measurement) and a bounded old-space heap.
 */
export function runCli(
  args: string[],
  opts: { cwd?: string; heapMb?: number; nodeArgs?: string[]; killAfterMs?: number; input?: string } = {},
): CliRun {
  const nodeArgs = [`--max-old-space-size=${opts.heapMb ?? 256}`, ...(opts.nodeArgs ?? [])];
  const r: SpawnSyncReturns<string> = spawnSync(process.execPath, [...nodeArgs, CLI, ...args], {
    cwd: opts.cwd ?? REPO,
    encoding: 'utf8',
    timeout: opts.killAfterMs ?? 60_000,
    killSignal: 'SIGKILL',
    input: opts.input,
    maxBuffer: 64 * MB,
    env: { ...process.env, NO_COLOR: '1' },
  });
  return { status: r.status, signal: r.signal, stdout: r.stdout ?? '', stderr: r.stderr ?? '' };
}

/** A CLI run that ended by itself, without a crash: no signal, no stack trace, no V8 OOM. */
export function describeCrash(r: CliRun): string | null {
  if (r.signal) return `killed by ${r.signal} (hang or out of memory)`;
  const all = r.stdout + r.stderr;
  if (/JavaScript heap out of memory|FATAL ERROR|Allocation failed/.test(all)) return 'V8 ran out of memory';
  if (/^\s+at .+\(.+:\d+:\d+\)$/m.test(all) || /\n\s+at [\w.<>]+ \(/.test(all)) return `printed a stack trace:\n${all.slice(0, 2000)}`;
  if (r.status !== 0 && r.status !== 1 && r.status !== 2) return `exit code ${r.status}`;
  return null;
}

const madeDirs: string[] = [];

/** A fresh folder under the system temp folder (removed by removeTempDirs). */
export function tempDir(prefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), `noiselint-${prefix}-`));
  madeDirs.push(dir);
  return dir;
}

/** Removes the folders tempDir made (test files call it in afterAll); NOISELINT_KEEP_TEMP keeps them. */
export function removeTempDirs(): void {
  if (process.env.NOISELINT_KEEP_TEMP) return;
  for (const d of madeDirs.splice(0)) rmSync(d, { recursive: true, force: true });
}
