/**
 * Size attacks: a 20 MB file, 1e12 training steps, a 1,000,000-element beta list, a 1 MB line.
 * Each is refused or analysed with a clear problem/finding and bounded kept memory; the CLI runs
 * under a small heap (--max-old-space-size) so that a peak blow-up fails the run.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { DEFAULT_PARSE_LIMITS } from '../../server/src/parse/types';
import {
  MB,
  describeCrash,
  flat,
  ensureCliBuilt,
  expectSpansInside,
  reportText,
  retainedHeapGrowth,
  runCli,
  removeTempDirs,
  tempDir,
  treeStats,
} from './helpers';

const HEADER = '# Lanternfish Pictures: invented demo data\nbeta_schedule: linear\nbeta_start: 0.0001\nbeta_end: 0.02\n';

describe('adversarial sizes', () => {
  afterAll(removeTempDirs);
  beforeAll(() => ensureCliBuilt());

  it('a 20 MB file: refused as too large (maxFileBytes), in process and through the CLI', () => {
    const filler = `notes: "${'night storyboard frame '.repeat(Math.ceil((20 * MB) / 23))}"\n`;
    const text = flat(`${HEADER}num_train_timesteps: 1000\n${filler}`);
    expect(text.length).toBeGreaterThan(20 * MB);
    const { result, growthBytes } = retainedHeapGrowth(() => analyzeText(text, { path: 'big.yaml' }));
    expectSpansInside(result, text);
    expect(result.parsed.problems.map((p) => p.code)).toContain('too-large');
    // Nothing of the 20 MB is parsed into a tree (the text itself is the caller's).
    expect(growthBytes, `kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(8 * MB);

    const dir = tempDir('big');
    const file = join(dir, 'big.yaml');
    writeFileSync(file, text);
    const r = runCli(['check', file], { heapMb: 96 });
    expect(describeCrash(r)).toBeNull();
    // One line naming the limit. (`check` counts the file as skipped and exits 0.)
    expect((r.stdout + r.stderr).split('\n').filter((l) => /maxFileBytes/.test(l))).toHaveLength(1);
  });

  it('1e12 training steps: a schedule-invalid finding, nothing allocated for the steps', () => {
    for (const steps of ['1000000000000', '1e12', '1e308', '100001', '123456789012345678901234567890']) {
      const text = flat(`${HEADER}num_train_timesteps: ${steps}\nnum_inference_steps: 50\ntimestep_spacing: trailing\n`);
      const { result, growthBytes } = retainedHeapGrowth(() => analyzeText(text, { path: 'huge-steps.yaml' }));
      expectSpansInside(result, text);
      const rules = result.findings.map((f) => f.rule);
      expect(rules, `${steps}: ${reportText(result)}`).toContain('schedule-invalid');
      const finding = result.findings.find((f) => f.rule === 'schedule-invalid')!;
      // It points at the step count.
      expect(text.slice(finding.span.start, finding.span.end)).toContain(steps.slice(0, 6));
      expect(result.documents[0]!.analysis.schedule).toBeNull();
      expect(growthBytes, `${steps}: kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(16 * MB);
    }
  });

  it('a 1,000,000-element beta list: cut at maxListLength with a problem, memory bounded', () => {
    const n = 1_000_000;
    // YAML flow ("1e-4," is 5 bytes: 5 MB, under the default 5 MiB file limit), JSON (the same
    // size), and a YAML block list of 250,000 items (1.75 MB) that also passes the list limit.
    const cases: [string, string, 'yaml' | 'json'][] = [
      ['YAML flow', flat(`${HEADER}num_train_timesteps: 1000\ntrained_betas: [${Array(n).fill('1e-4').join(',')}]\n`), 'yaml'],
      ['JSON', flat(`{"beta_schedule": "linear", "num_train_timesteps": 1000, "trained_betas": [${Array(n).fill('1e-4').join(',')}]}`), 'json'],
      ['YAML block', flat(`${HEADER}num_train_timesteps: 1000\ntrained_betas:\n${'- 1e-4\n'.repeat(250_000)}`), 'yaml'],
    ];
    for (const [name, text, format] of cases) {
      expect(Buffer.byteLength(text)).toBeLessThan(DEFAULT_PARSE_LIMITS.maxFileBytes);
      const { result, growthBytes } = retainedHeapGrowth(() => analyzeText(text, { path: `betas.${format}`, format }));
      expectSpansInside(result, text);
      const report = reportText(result);
      expect(
        result.parsed.problems.map((p) => p.code),
        `${name}: ${report.slice(0, 400)}`,
      ).not.toContain('internal-error');
      expect(
        result.parsed.problems.map((p) => p.code),
        `${name}: ${report.slice(0, 400)}`,
      ).toContain('too-long');
      const longest = Math.max(0, ...result.parsed.documents.map((d) => treeStats(d.root).longestList));
      expect(longest, name).toBeLessThanOrEqual(DEFAULT_PARSE_LIMITS.maxListLength);
      // 200,000 located scalars is the most the tree may hold.
      expect(growthBytes, `${name}: kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(128 * MB);
    }
  }, 240_000); // three 5 MB parses: minutes on a loaded 2-core machine, about 20 s alone;

  it('a 1 MB line: the rest of the file is still analysed, spans stay in range', () => {
    const long = 'x'.repeat(MB);
    const cases = [
      `description: "${long}"\n${HEADER}num_train_timesteps: 1000\nprediction_type: epsilon\nrescale_betas_zero_snr: true\n`,
      `description: ${long}\n${HEADER}num_train_timesteps: 1000\nprediction_type: epsilon\nrescale_betas_zero_snr: true\n`,
      `{"description": "${long}", "beta_schedule": "linear", "num_train_timesteps": 1000, "prediction_type": "epsilon", "rescale_betas_zero_snr": true}`,
    ];
    for (const [i, raw] of cases.entries()) {
      const text = flat(raw);
      const format = text.startsWith('{') ? 'json' : 'yaml';
      const { result, growthBytes } = retainedHeapGrowth(() => analyzeText(text, { path: `long-line.${format}`, format }));
      expectSpansInside(result, text);
      // Zero terminal SNR with an epsilon target (DESIGN section 5: epsilon-at-zero-snr).
      expect(
        result.findings.map((f) => f.rule),
        `case ${i}: ${reportText(result)}`,
      ).toContain('epsilon-at-zero-snr');
      expect(growthBytes, `case ${i}: kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(24 * MB);
    }
  });

  it('a 1 MB line of garbage without a newline: problems, no exception', () => {
    const chars = ':{}[],"\'#&*!|>-? \tab01';
    let s = '';
    let x = 12345;
    for (let i = 0; i < MB; i++) {
      x = (x * 1103515245 + 12345) & 0x7fffffff;
      s += chars[x % chars.length];
    }
    for (const format of ['yaml', 'json', 'jsonc'] as const) {
      const result = analyzeText(s, { path: `garbage.${format}`, format });
      expectSpansInside(result, s);
      expect(result.parsed.problems.length, format).toBeGreaterThan(0);
    }
  });

  describe('memory in proportion to the input: a 3.7 MB YAML of 200,000 entries', () => {
    const lines = [
      '# Lanternfish Pictures: sweep of night storyboard runs (invented demo data)',
      'num_train_timesteps: 1000',
      'beta_schedule: scaled_linear',
      'timestep_spacing: leading',
      'num_inference_steps: 30',
      'runs:',
    ];
    for (let i = 0; i < 200_000; i++) lines.push(`  run_${i}: ${(i % 997) / 1000}`);
    const text = flat(`${lines.join('\n')}\n`);

    it('check and fix --dry-run finish in a 128 MB heap (about 35x the file)', () => {
      const dir = tempDir('sweep');
      writeFileSync(join(dir, 'sweep.yaml'), text);
      expect(text.length).toBeGreaterThan(3.5 * MB);
      const check = runCli(['check', 'sweep.yaml'], { cwd: dir, heapMb: 128, killAfterMs: 120_000 });
      expect(describeCrash(check), check.stderr.slice(-400)).toBeNull();
      expect(check.stdout).toContain('sampler-skips-last-step');
      const fix = runCli(['fix', '--dry-run', 'sweep.yaml'], { cwd: dir, heapMb: 128, killAfterMs: 120_000 });
      expect(describeCrash(fix), fix.stderr.slice(-400)).toBeNull();
      expect(fix.stdout).toMatch(/^\+timestep_spacing: trailing$/m);
      expect(fix.stderr).toContain('would apply 1 fix');
    }, 240_000);

    it("a file's findings do not keep its tree (a fix remembers its parse without the tree)", () => {
      const { result: findings, growthBytes } = retainedHeapGrowth(() => analyzeText(text, { path: 'sweep.yaml' }).findings);
      expect(findings.some((f) => f.fixes.length > 0)).toBe(true);
      // The tree of 200,000 entries is about 60 MB; the findings and the text they point into, a few.
      expect(growthBytes, `kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(12 * MB);
    });
  });
});
