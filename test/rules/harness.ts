/**
 * Data-driven rule fixtures: test/rules/fixtures/<rule-id>/<name>.(yaml|yml|json|jsonc) with a
 * sibling <name>.expected.json. Each fixture runs with only its rule enabled. Strict: a fixture
 * without expectations, an expectation without a fixture, an unexpected or missing finding or
 * fix, an unreferenced "after" file and a duplicated fixture name all fail.
 */
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { basename, extname, join } from 'node:path';
import { readFile } from '../../server/src/engine/api';
import { runRules } from '../../server/src/engine/engine';
import { FIX_EFFECTS, type Finding, type FixEffect, type Severity } from '../../server/src/base/findings';
import { applyEdits } from '../../server/src/fix';
import type { SourceFormat } from '../../server/src/parse/types';
import type { PartnerDocument } from '../../server/src/rules/types';
import type { ResolvedProject } from '../../server/src/workspace/types';

export const FIXTURE_ROOT = join(__dirname, 'fixtures');
const INPUT_EXTENSIONS: Record<string, SourceFormat> = { '.yaml': 'yaml', '.yml': 'yaml', '.json': 'json', '.jsonc': 'jsonc', '.toml': 'toml' };
/** Expected text after a fix: <name>.after-<k>.<ext>; partner files live in partners/. */
const AFTER_FILE = /\.after-\d+\.(yaml|yml|json|jsonc|toml)$/;

/** A message expectation: plain text, or a number-bearing substring with its source. */
export type MessagePart = string | { text: string; source: string };

export interface ExpectedFix {
  title: string;
  effect: FixEffect;
  /** True when the fix replaces or deletes part of a comment (absent: false). */
  touchesComment?: boolean;
  preferred: boolean;
  /** File (beside the fixture) holding the whole text after applying this fix. */
  after: string;
}

export interface ExpectedFinding {
  rule: string;
  severity: Severity;
  /** Document index (default 0). */
  document?: number;
  /** Exact flagged text: the slice of the finding's span. */
  text: string;
  message: MessagePart[];
  related?: { path?: string; text: string }[];
  fixes: ExpectedFix[];
}

export interface FixtureExpectation {
  /** One line: what the fixture checks. */
  about: string;
  options?: Record<string, number | string | boolean>;
  severity?: Severity | 'off';
  latentSpace?: boolean;
  /** Paired training file (relative to the rule's folder), for train-sample-mismatch. */
  partner?: string;
  pairRole?: 'training' | 'sampling';
  findings: ExpectedFinding[];
}

export interface Fixture {
  rule: string;
  name: string;
  dir: string;
  inputFile: string;
  format: SourceFormat;
  expectedFile: string;
}

const EXPECTATION_KEYS = new Set(['about', 'options', 'severity', 'latentSpace', 'partner', 'pairRole', 'findings']);
const FINDING_KEYS = new Set(['rule', 'severity', 'document', 'text', 'message', 'related', 'fixes']);
const FIX_KEYS = new Set(['title', 'effect', 'touchesComment', 'preferred', 'after']);

/** Every fixture folder and its problems of layout (missing or orphaned files, duplicates). */
export function collectFixtures(): { fixtures: Fixture[]; layoutProblems: string[] } {
  const fixtures: Fixture[] = [];
  const layoutProblems: string[] = [];
  if (!existsSync(FIXTURE_ROOT)) return { fixtures, layoutProblems: ['no fixtures folder'] };
  for (const rule of readdirSync(FIXTURE_ROOT).sort()) {
    const dir = join(FIXTURE_ROOT, rule);
    if (!statSync(dir).isDirectory()) continue;
    const files = readdirSync(dir).filter((f) => statSync(join(dir, f)).isFile());
    const names = new Map<string, string>();
    const referencedAfter = new Set<string>();
    for (const file of files.sort()) {
      if (file.endsWith('.expected.json')) {
        const name = file.slice(0, -'.expected.json'.length);
        if (!files.some((f) => !AFTER_FILE.test(f) && !f.endsWith('.expected.json') && stem(f) === name)) {
          layoutProblems.push(`${rule}/${file}: no fixture named ${name}`);
        }
        continue;
      }
      if (AFTER_FILE.test(file)) continue;
      const ext = extname(file);
      const format = INPUT_EXTENSIONS[ext];
      if (!format) {
        layoutProblems.push(`${rule}/${file}: not a fixture, an expectation or an after-file`);
        continue;
      }
      const name = stem(file);
      if (names.has(name)) {
        layoutProblems.push(`${rule}: duplicated fixture name ${name} (${names.get(name)} and ${file})`);
        continue;
      }
      names.set(name, file);
      const expectedFile = join(dir, `${name}.expected.json`);
      if (!existsSync(expectedFile)) {
        layoutProblems.push(`${rule}/${file}: no ${name}.expected.json`);
        continue;
      }
      fixtures.push({ rule, name, dir, inputFile: join(dir, file), format, expectedFile });
      try {
        const expectation = JSON.parse(readFileSync(expectedFile, 'utf8')) as FixtureExpectation;
        for (const f of expectation.findings ?? []) for (const fix of f.fixes ?? []) referencedAfter.add(fix.after);
      } catch {
        // Reported by the fixture's own test.
      }
    }
    for (const file of files) {
      if (AFTER_FILE.test(file) && !referencedAfter.has(file)) layoutProblems.push(`${rule}/${file}: after-file referenced by no fix`);
    }
  }
  return { fixtures, layoutProblems };
}

function stem(file: string): string {
  return basename(file, extname(file));
}

/** Shape checks of an expectation file; returns problems (empty when fine). */
export function validateExpectation(rule: string, e: FixtureExpectation): string[] {
  const problems: string[] = [];
  for (const k of Object.keys(e)) if (!EXPECTATION_KEYS.has(k)) problems.push(`unknown key "${k}"`);
  if (typeof e.about !== 'string' || e.about.length < 5) problems.push('"about" must say what the fixture checks');
  if (!Array.isArray(e.findings)) problems.push('"findings" must be a list (empty for an OK fixture)');
  for (const [i, f] of (e.findings ?? []).entries()) {
    for (const k of Object.keys(f)) if (!FINDING_KEYS.has(k)) problems.push(`finding ${i}: unknown key "${k}"`);
    if (f.rule !== rule) problems.push(`finding ${i}: rule must be ${rule}`);
    if (typeof f.text !== 'string' || f.text.length === 0) problems.push(`finding ${i}: "text" (the flagged text) is required`);
    if (!Array.isArray(f.message) || f.message.length === 0) problems.push(`finding ${i}: "message" substrings are required`);
    for (const part of f.message ?? []) {
      if (typeof part === 'string') {
        if (/\d/.test(part)) problems.push(`finding ${i}: message part "${part}" has a number: give it as { text, source }`);
      } else if (!part || typeof part.text !== 'string' || typeof part.source !== 'string' || part.source.length < 5) {
        problems.push(`finding ${i}: message part needs "text" and a "source"`);
      }
    }
    if (!Array.isArray(f.fixes)) problems.push(`finding ${i}: "fixes" must be a list (empty when none)`);
    for (const [j, fix] of (f.fixes ?? []).entries()) {
      for (const k of Object.keys(fix)) if (!FIX_KEYS.has(k)) problems.push(`finding ${i} fix ${j}: unknown key "${k}"`);
      if (!FIX_EFFECTS.includes(fix.effect)) problems.push(`finding ${i} fix ${j}: "effect" must be one of ${FIX_EFFECTS.join(', ')}`);
      if (typeof fix.after !== 'string' || !AFTER_FILE.test(fix.after))
        problems.push(`finding ${i} fix ${j}: "after" must name a <name>.after-<k>.<ext> file`);
    }
  }
  return problems;
}

export function projectFor(e: FixtureExpectation, rule: string): ResolvedProject | undefined {
  if (!e.options && !e.severity && e.latentSpace === undefined) return undefined;
  return {
    file: null,
    root: FIXTURE_ROOT,
    include: [],
    exclude: [],
    rules: { [rule]: { ...(e.severity ? { severity: e.severity } : {}), ...(e.options ? { options: e.options } : {}) } },
    aliases: {},
    latentSpace: e.latentSpace,
    pairs: [],
    autoPair: false,
    limits: {},
  };
}

/** Reads a file's documents as partners (the paired training file). */
export function partnerDocuments(path: string, label: string, project?: ResolvedProject): PartnerDocument[] {
  const text = readFileSync(path, 'utf8');
  const format = INPUT_EXTENSIONS[extname(path)] ?? 'yaml';
  const read = readFile(text, { path, format, project });
  return read.documents.map((d) => ({ path: label, setup: d.setup, analysis: d.analysis }));
}

export interface RunResult {
  findings: Finding[];
  ruleErrors: unknown[];
}

/** Runs only `rule` over `text`. */
export function runOnly(
  rule: string,
  text: string,
  options: { path?: string; format?: SourceFormat; project?: ResolvedProject; partners?: PartnerDocument[]; pairRole?: 'training' | 'sampling' } = {},
): RunResult {
  const path = options.path ?? 'config.yaml';
  const file = readFile(text, { path, format: options.format, project: options.project });
  const ruleErrors: unknown[] = [];
  const findings = runRules(
    file,
    { path, format: options.format, project: options.project, partners: options.partners, pairRole: options.pairRole },
    { only: [rule], onRuleError: (_id, error) => ruleErrors.push(error) },
  );
  return { findings, ruleErrors };
}

export function messageText(part: MessagePart): string {
  return typeof part === 'string' ? part : part.text;
}

export { applyEdits };
