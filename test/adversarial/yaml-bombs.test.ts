/**
 * Hostile YAML and JSON structure: alias bombs, deep nesting, custom tags, duplicate keys,
 * prototype-member keys. Each input gets a clear problem or finding, never an exception, and
 * the memory it keeps alive stays bounded (measured after a forced GC).
 */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { DEFAULT_PARSE_LIMITS } from '../../server/src/parse/types';
import { MB, expectSpansInside, reportText, retainedHeapGrowth, treeStats } from './helpers';

/** "Billion laughs": 9 levels of 9 aliases = 9^9 (387 million) leaves if expanded. */
function aliasBomb(): string {
  const lines = ['a0: &a0 [lol, lol, lol, lol, lol, lol, lol, lol, lol]'];
  for (let i = 1; i <= 9; i++) {
    const refs = Array.from({ length: 9 }, () => `*a${i - 1}`).join(', ');
    lines.push(`a${i}: &a${i} [${refs}]`);
  }
  lines.push('num_train_timesteps: 1000', 'beta_schedule: *a9', '');
  return lines.join('\n');
}

/** The same through merge keys (`<<`), which expand maps rather than lists. */
function mergeKeyBomb(): string {
  const lines = ['m0: &m0 {k0: 1, k1: 2, k2: 3, k3: 4, k4: 5, k5: 6, k6: 7, k7: 8}'];
  for (let i = 1; i <= 9; i++) {
    lines.push(`m${i}: &m${i}`);
    for (let j = 0; j < 8; j++) lines.push(`  c${j}: {<<: *m${i - 1}}`);
  }
  lines.push('noise_scheduler:', '  <<: *m9', '  num_train_timesteps: 1000', '  beta_schedule: linear', '');
  return lines.join('\n');
}

describe('adversarial YAML/JSON structure', () => {
  it('alias bomb ("billion laughs"): refused with a problem, nothing expanded', () => {
    for (const [name, text] of [
      ['alias bomb', aliasBomb()],
      ['merge-key bomb', mergeKeyBomb()],
    ] as const) {
      const { result, growthBytes } = retainedHeapGrowth(() => analyzeText(text, { path: 'lanternfish/bomb.yaml' }));
      expectSpansInside(result, text);
      const report = reportText(result);
      // A clear message that names aliases, as a parse problem.
      expect(result.parsed.problems.length, `${name}: no problem reported\n${report}`).toBeGreaterThan(0);
      expect(report, name).toMatch(/alias/i);
      // Whatever the tree keeps, it is nowhere near the expansion.
      const stats = result.parsed.documents.map((d) => treeStats(d.root));
      expect(Math.max(...stats.map((s) => s.nodes)), name).toBeLessThan(1_000_000);
      expect(growthBytes, `${name}: kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(64 * MB);
    }
  });

  it('a few legitimate aliases still resolve (the guard is a count, not a ban)', () => {
    const text = [
      'base: &base',
      '  num_train_timesteps: 1000',
      '  beta_schedule: scaled_linear',
      '  beta_start: 0.00085',
      '  beta_end: 0.012',
      'train:',
      '  <<: *base',
      '  prediction_type: epsilon',
      '',
    ].join('\n');
    const result = analyzeText(text, { path: 'lanternfish/aliases.yaml' });
    expect(result.parsed.problems.filter((p) => /alias/i.test(p.code + p.message))).toEqual([]);
    expect(result.isDiffusionConfig).toBe(true);
  });

  it('5,000-deep nesting (YAML flow, YAML block, JSON): a too-deep problem, no stack overflow', () => {
    const depth = 5000;
    const cases: [string, string, 'yaml' | 'json'][] = [
      ['YAML flow lists', `betas: ${'['.repeat(depth)}1${']'.repeat(depth)}\n`, 'yaml'],
      ['YAML flow maps', `${'{a: '.repeat(depth)}1${'}'.repeat(depth)}\n`, 'yaml'],
      // Compact block sequences: `- - - 1` is block nesting on one line.
      ['YAML block lists', `${'- '.repeat(depth)}1\n`, 'yaml'],
      // Block maps need one more column of indentation per level: 2,000 levels with one-space
      // indentation is 2 MB (the file limit is raised so that depth, not size, is what stops it).
      ['YAML block maps (2,000 deep)', Array.from({ length: 2000 }, (_, i) => `${' '.repeat(i)}k:`).join('\n') + ' 1\n', 'yaml'],
      ['JSON lists', `${'['.repeat(depth)}1${']'.repeat(depth)}`, 'json'],
      ['JSON maps', `${'{"a":'.repeat(depth)}1${'}'.repeat(depth)}`, 'json'],
    ];
    for (const [name, text, format] of cases) {
      const { result, growthBytes } = retainedHeapGrowth(() =>
        analyzeText(text, { path: `deep.${format}`, format, limits: { maxFileBytes: 32 * MB } }),
      );
      expectSpansInside(result, text);
      const codes = result.parsed.problems.map((p) => p.code);
      expect(codes, `${name}: ${reportText(result)}`).toContain('too-deep');
      const maxDepth = Math.max(0, ...result.parsed.documents.map((d) => treeStats(d.root).depth));
      expect(maxDepth, name).toBeLessThanOrEqual(DEFAULT_PARSE_LIMITS.maxNesting + 1);
      expect(growthBytes, `${name}: kept ${(growthBytes / MB).toFixed(1)} MB`).toBeLessThan(96 * MB);
    }
  });

  it('custom YAML tags are never executed or resolved to code', () => {
    const marker = `__noiselint_pwned_${process.pid}`;
    const text = [
      `cmd: !!python/object/apply:os.system ["touch /tmp/${marker}"]`,
      `fn: !!js/function "function () { globalThis.${marker} = 1; }"`,
      `re: !!js/regexp /a+$/`,
      `undef: !!js/undefined ''`,
      `obj: !!python/object:__main__.Exploit {cmd: id}`,
      `bin: !!binary aGVsbG8=`,
      `set: !!set {a, b}`,
      `ts: !!timestamp 2001-12-14t21:59:43.10-05:00`,
      `custom: !lanternfish/tag {x: 1}`,
      `num_train_timesteps: !!int 1000`,
      `beta_schedule: !!str linear`,
      `prediction_type: !custom epsilon`,
      '',
    ].join('\n');
    const result = analyzeText(text, { path: 'lanternfish/tags.yaml' });
    expectSpansInside(result, text);
    expect((globalThis as Record<string, unknown>)[marker]).toBeUndefined();
    // Every value in the located tree is plain data.
    for (const d of result.parsed.documents) {
      const { types } = treeStats(d.root);
      for (const t of types) expect(['string', 'number', 'boolean', 'null']).toContain(t);
    }
    // The standard tags that are plain data still work.
    expect(result.isDiffusionConfig).toBe(true);
  });

  it('duplicate keys are reported (YAML and JSON), not silently resolved', () => {
    const cases: [string, 'yaml' | 'json'][] = [
      ['num_train_timesteps: 1000\nbeta_schedule: linear\nbeta_schedule: cosine\n', 'yaml'],
      ['{"num_train_timesteps": 1000, "beta_schedule": "linear", "beta_schedule": "cosine"}', 'json'],
    ];
    for (const [text, format] of cases) {
      const result = analyzeText(text, { path: `dup.${format}`, format });
      expectSpansInside(result, text);
      expect(reportText(result), format).toMatch(/duplicate|more than once|twice/i);
    }
  });

  it('prototype-member keys (__proto__, constructor, toString) neither crash nor pollute', () => {
    const yaml = [
      '__proto__: {polluted: yes}',
      'constructor: 5',
      'toString: linear',
      'hasOwnProperty: 1',
      'noise_scheduler:',
      '  __proto__:',
      '    beta_schedule: cosine',
      '  prototype: 1',
      '  num_train_timesteps: 1000',
      '  beta_schedule: linear',
      '',
    ].join('\n');
    const json =
      '{"__proto__": {"polluted": true}, "constructor": {"prototype": {"polluted": true}}, "num_train_timesteps": 1000, "beta_schedule": "toString"}';
    for (const [text, format] of [
      [yaml, 'yaml'],
      [json, 'json'],
    ] as const) {
      const result = analyzeText(text, { path: `proto.${format}`, format });
      expectSpansInside(result, text);
      expect(({} as Record<string, unknown>).polluted, format).toBeUndefined();
      expect(Object.prototype.hasOwnProperty.call(Object.prototype, 'polluted')).toBe(false);
      // `beta_schedule: toString` is an unknown value, not the Object.prototype method.
      if (format === 'json') expect(reportText(result)).toMatch(/toString/);
    }
  });
});
