/** `noiselint: allow` comments in YAML and JSONC. */
import { describe, expect, it } from 'vitest';
import { parseText } from '../../server/src/parse';

describe('YAML suppression comments', () => {
  const text = [
    '# noiselint: allow-file offset-noise-conflict', // 0
    'noise_scheduler:', // 1
    '  # noiselint: allow terminal-snr-leak, epsilon-at-zero-snr', // 2
    '  # kept for the original storyboard checkpoint', // 3
    '  beta_schedule: scaled_linear', // 4
    '  timestep_spacing: leading  # noiselint: allow sampler-skips-last-step -- matches the old renders', // 5
    '  note: "# noiselint: allow all"', // 6
    '# noiselint: allow all', // 7
    'guidance_scale: 7.5', // 8
  ].join('\n');
  const file = parseText(text, 'yaml');

  it('finds file-wide, next-line and end-of-line suppressions', () => {
    expect(file.suppressions).toEqual([
      { scope: 'file', line: 0, targetLine: 1, rules: ['offset-noise-conflict'] },
      { scope: 'next-line', line: 2, targetLine: 4, rules: ['terminal-snr-leak', 'epsilon-at-zero-snr'] },
      { scope: 'next-line', line: 5, targetLine: 5, rules: ['sampler-skips-last-step'] },
      { scope: 'next-line', line: 7, targetLine: 8, rules: ['*'] },
    ]);
  });

  it('ignores the directive inside a quoted string', () => {
    expect(file.suppressions.some((s) => s.line === 6)).toBe(false);
  });

  it('finds directives in every comment position of the YAML syntax', () => {
    const text = [
      'a: [1, # noiselint: allow r1', // 0: inside a flow list
      '  2]',
      'b: | # noiselint: allow r2', // 2: after a block scalar header
      '  text',
      '---',
      '# noiselint: allow r3', // 5: second document
      'c: 1',
      '# noiselint: allow-file r4', // 7: last line, no newline
    ].join('\n');
    const f = parseText(text, 'yaml');
    expect(f.suppressions.map((s) => [s.line, s.rules[0]])).toEqual([
      [0, 'r1'],
      [2, 'r2'],
      [5, 'r3'],
      [7, 'r4'],
    ]);
  });

  it('reports a directive that names no rule', () => {
    const f = parseText('# noiselint: allow\na: 1\n', 'yaml');
    expect(f.suppressions).toEqual([]);
    expect(f.problems.map((p) => p.code)).toEqual(['bad-suppression']);
  });
});

describe('JSONC suppression comments', () => {
  it('reads // and /* */ comments', () => {
    const text = [
      '{',
      '  // noiselint: allow guidance-overexposure',
      '  "guidance_scale": 9,',
      '  /* noiselint: allow-file ALL */',
      '  "num_inference_steps": 30',
      '}',
    ].join('\r\n');
    const f = parseText(text, 'jsonc');
    expect(f.suppressions).toEqual([
      { scope: 'next-line', line: 1, targetLine: 2, rules: ['guidance-overexposure'] },
      { scope: 'file', line: 3, targetLine: 4, rules: ['*'] },
    ]);
  });
});
