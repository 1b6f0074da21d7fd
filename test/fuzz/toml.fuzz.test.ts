/**
 * Fuzz on TOML: the demo's TOML configs, mutated by inserting and deleting TOML syntax, go
 * through the whole pipeline; the invariants of invariants.ts hold (no throw, spans in range,
 * fixes that apply and keep the syntax). Runs: NOISELINT_FUZZ_RUNS (default 150).
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { checkConfig } from './invariants';
import { newStats } from './properties';

const runs = Number(process.env.NOISELINT_FUZZ_RUNS ?? 150);
const seed = process.env.NOISELINT_FUZZ_SEED ? Number(process.env.NOISELINT_FUZZ_SEED) : undefined;

const repo = join(__dirname, '..', '..');
const SEEDS: string[] = [];
for (const dir of ['examples/launcher-args', ...readdirSync(join(repo, 'test/rules/fixtures')).map((d) => `test/rules/fixtures/${d}`)]) {
  for (const f of readdirSync(join(repo, dir)))
    if (f.endsWith('.toml') && !f.includes('.after-')) SEEDS.push(readFileSync(join(repo, dir, f), 'utf8'));
}

const SNIPPETS = [
  '=',
  '"',
  "'",
  '[',
  ']',
  '{',
  '}',
  ',',
  '.',
  '#',
  '\n',
  '\r\n',
  ' ',
  '\t',
  'x',
  '1',
  '1e-4',
  'true',
  '"""',
  "'''",
  '\\',
  '[[a]]\n',
  '[noise_scheduler]\n',
  'noise_offset = 0.1 # c\n',
  'timestep_spacing = "leading"\n',
  'a.b.',
  '\ufeff',
];

const mutation = fc.record({
  at: fc.nat(),
  op: fc.constantFrom('insert', 'delete', 'duplicate-line'),
  len: fc.integer({ min: 1, max: 12 }),
  snippet: fc.constantFrom(...SNIPPETS),
});

function mutate(text: string, ms: { at: number; op: string; len: number; snippet: string }[]): string {
  let out = text;
  for (const m of ms) {
    const at = out.length === 0 ? 0 : m.at % out.length;
    if (m.op === 'insert') out = out.slice(0, at) + m.snippet + out.slice(at);
    else if (m.op === 'delete') out = out.slice(0, at) + out.slice(at + m.len);
    else {
      const start = out.lastIndexOf('\n', at - 1) + 1;
      const end = out.indexOf('\n', at);
      const line = out.slice(start, end < 0 ? out.length : end + 1);
      out = out.slice(0, start) + line + out.slice(start);
    }
  }
  return out;
}

describe('fuzz: TOML configs', () => {
  it('has TOML seeds with findings and fixes (the harness checks a live pipeline)', () => {
    expect(SEEDS.length).toBeGreaterThanOrEqual(5);
    const stats = newStats();
    for (const text of SEEDS) checkConfig({ format: 'toml', path: 'seed.toml', text }, stats);
    expect(stats.findings).toBeGreaterThan(0);
    expect(stats.fixes).toBeGreaterThan(0);
  });

  it('mutated TOML never breaks an invariant', () => {
    const stats = newStats();
    fc.assert(
      fc.property(fc.constantFrom(...SEEDS), fc.array(mutation, { minLength: 1, maxLength: 6 }), (text, ms) => {
        checkConfig({ format: 'toml', path: 'mutated.toml', text: mutate(text, ms) }, stats);
      }),
      { numRuns: runs, seed },
    );
    if (runs >= 100) expect(stats.findings).toBeGreaterThan(0);
  });
});
