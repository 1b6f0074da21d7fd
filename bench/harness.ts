/**
 * What bench/run.mjs measures, bundled with esbuild so that it runs on the same code the CLI
 * bundle runs. Each pass walks the corpus from scratch (discovery included) so that the compared
 * figures do the same I/O.
 */
import { join } from 'node:path';
import Ajv from 'ajv';
import { parse as parseJsonc } from 'jsonc-parser';
import { parse as parseYaml } from 'yaml';
import { check, parseCheckArgs } from '../server/src/cli/commands/check';
import type { CliIO } from '../server/src/cli/io';
import { analyzeText } from '../server/src/engine/api';
import { formatFromPath, parseText } from '../server/src/parse';
import type { SourceFormat } from '../server/src/parse/types';
import { discoverFiles } from '../server/src/workspace/discover';
import { nodeFs, readTextFile } from '../server/src/workspace/fs';
import { clearProjectCache, loadProject } from '../server/src/workspace/projectFile';

export { writeCorpus, writeMonorepo } from '../test/load/corpus';
export { LspTestClient } from '../test/load/lspClient';
export { configText } from '../test/load/texts';

function discover(dir: string): string[] {
  const found = discoverFiles([dir], dir);
  if (found.errors.length) throw new Error(found.errors[0]);
  return found.files;
}

const formatOf = (path: string): SourceFormat => formatFromPath(path) ?? 'yaml';

/**
 * The baseline: discover, read and parse every file to plain data with the standard libraries
 * (`yaml.parse`, `JSON.parse`, jsonc-parser's `parse`), which is the schema validator's own parse.
 */
export function plainParse(dir: string): { files: number; failed: number } {
  let failed = 0;
  const files = discover(dir);
  for (const file of files) {
    const read = readTextFile(nodeFs, file);
    if (!read.ok) continue;
    if (parsePlain(read.text, formatOf(file)) === FAILED) failed++;
  }
  return { files: files.length, failed };
}

const FAILED = Symbol('failed');
function parsePlain(text: string, format: SourceFormat): unknown {
  try {
    return format === 'yaml' ? parseYaml(text) : format === 'json' ? JSON.parse(text) : parseJsonc(text);
  } catch {
    return FAILED;
  }
}

/** Discover, read and parse every file into our located tree (no setup, no rules). */
export function parseOnly(dir: string): { files: number; problems: number } {
  let problems = 0;
  const files = discover(dir);
  for (const file of files) {
    const read = readTextFile(nodeFs, file);
    if (!read.ok) continue;
    problems += parseText(read.text, formatOf(file)).problems.length;
  }
  return { files: files.length, problems };
}

/** The core `check` runs per file: discover, project file, read, analyzeText (no pairing, no output). */
export function coreCheck(dir: string): { files: number; findings: number } {
  clearProjectCache();
  let findings = 0;
  const files = discover(dir);
  for (const file of files) {
    const project = loadProject(file);
    const read = readTextFile(nodeFs, file, project.limits.maxFileBytes);
    if (!read.ok) continue;
    findings += analyzeText(read.text, { path: file, project }).findings.length;
  }
  return { files: files.length, findings };
}

export interface CommandResult {
  code: number;
  /** Bytes of the JSON report (UTF-8). */
  outputBytes: number;
  /** The report's own summary: every finding, pairing findings included. */
  summary: Record<string, number>;
}

/** The whole `check` command in process (pairing, JSON report), output discarded. */
export async function checkCommand(dir: string, extraArgs: string[] = []): Promise<CommandResult> {
  clearProjectCache();
  let outputBytes = 0;
  let tail = '';
  const io: CliIO = {
    cwd: dir,
    stdout: (t) => {
      outputBytes += Buffer.byteLength(t);
      tail = (tail + t).slice(-4096);
    },
    stderr: () => undefined,
    isTTY: false,
    env: {},
    // The CLI build's worker entry (bench/run.mjs builds it first).
    workerScript: join(process.env.NOISELINT_REPO ?? process.cwd(), 'server/dist/checkWorker.js'),
  };
  const code = await check({ ...parseCheckArgs(['.', '--format', 'json', ...extraArgs]) }, io);
  return { code, outputBytes, summary: reportSummary(tail) };
}

/** The `summary` object at the end of a JSON report. */
export function reportSummary(tail: string): Record<string, number> {
  const at = tail.lastIndexOf('"summary"');
  const end = tail.lastIndexOf('}');
  if (at < 0 || end < 0) throw new Error(`no summary at the end of the JSON report: ${tail.slice(-200)}`);
  const body = tail.slice(tail.indexOf(':', at) + 1, end);
  const summary = JSON.parse(body) as Record<string, unknown>;
  return Object.fromEntries(Object.entries(summary).filter(([, v]) => typeof v === 'number')) as Record<string, number>;
}

/** Total findings of a report summary. */
export const findingsIn = (s: Record<string, number>): number => (s.errors ?? 0) + (s.warnings ?? 0) + (s.infos ?? 0) + (s.hints ?? 0);

/** Baseline 2: discover, read, parse to plain data (yaml / JSON / jsonc-parser), validate with ajv. */
export function schemaValidator(schema: object): (dir: string) => { files: number; invalid: number } {
  const ajv = new Ajv({ allErrors: true, strict: false });
  const validate = ajv.compile(schema);
  return (dir) => {
    let invalid = 0;
    const files = discover(dir);
    for (const file of files) {
      const read = readTextFile(nodeFs, file);
      if (!read.ok) continue;
      const data = parsePlain(read.text, formatOf(file));
      if (data === FAILED || !validate(data)) invalid++;
    }
    return { files: files.length, invalid };
  };
}

/** Parse-only time of one text, repeated: milliseconds per run. */
export function parseTimes(text: string, format: SourceFormat, runs: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    parseText(text, format);
    out.push(performance.now() - t0);
  }
  return out;
}

/**
 * CPU time (user + system, ms) of analyzeText on one text, per run: compared with the server's
 * CPU time per change, so that waiting for a core on a shared machine counts on neither side.
 */
export function analyzeCpuMs(text: string, path: string, runs: number): number {
  analyzeText(text, { path });
  const t0 = process.cpuUsage();
  for (let i = 0; i < runs; i++) analyzeText(text, { path });
  const d = process.cpuUsage(t0);
  return (d.user + d.system) / 1000 / runs;
}

/**
 * CPU milliseconds per text of `analyzeText` over `measured`, after one unmeasured pass over
 * `warm`: the same texts, in the same order, that the language server is sent in bench (b), so
 * both sides see the same JIT warm-up and the same schedule caches.
 */
export function analyzeSequenceCpuMs(warm: readonly string[], measured: readonly string[], path: string): number {
  for (const text of warm) analyzeText(text, { path });
  const t0 = process.cpuUsage();
  for (const text of measured) analyzeText(text, { path });
  const d = process.cpuUsage(t0);
  return (d.user + d.system) / 1000 / measured.length;
}

/** analyzeText time of one text, repeated (the in-process part of a diagnostics round trip). */
export function analyzeTimes(text: string, path: string, runs: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    analyzeText(text, { path });
    out.push(performance.now() - t0);
  }
  return out;
}
