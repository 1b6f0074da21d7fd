/** `noiselint: deliberate` comments in YAML and JSONC. */
import { describe, expect, it } from 'vitest';
import { parseText } from '../../server/src/parse';
import type { Suppression } from '../../server/src/parse/types';

/** The suppressions without the id spans (checked on their own below). */
const plain = (s: Suppression[]) => s.map(({ ids: _ids, ...rest }) => rest);

describe('YAML deliberate comments', () => {
  const text = [
    '# noiselint: deliberate throughout offset-noise-conflict because the old look is the brief', // 0
    'noise_scheduler:', // 1
    '  # noiselint: deliberate terminal-snr-leak, epsilon-at-zero-snr', // 2
    '  # kept for the original storyboard checkpoint', // 3
    '  beta_schedule: scaled_linear', // 4
    '  timestep_spacing: leading  # noiselint: deliberate sampler-skips-last-step because it matches the old renders', // 5
    '  note: "# noiselint: deliberate all"', // 6
    '# noiselint: deliberate all', // 7
    'guidance_scale: 7.5', // 8
  ].join('\n');
  const file = parseText(text, 'yaml');

  it('finds whole-file, next-line and end-of-line comments, with their reasons', () => {
    expect(plain(file.suppressions)).toEqual([
      { scope: 'file', line: 0, targetLine: 1, rules: ['offset-noise-conflict'], reason: 'the old look is the brief' },
      { scope: 'next-line', line: 2, targetLine: 4, rules: ['terminal-snr-leak', 'epsilon-at-zero-snr'] },
      { scope: 'next-line', line: 5, targetLine: 5, rules: ['sampler-skips-last-step'], reason: 'it matches the old renders' },
      { scope: 'next-line', line: 7, targetLine: 8, rules: ['*'] },
    ]);
    expect(file.problems).toEqual([]);
  });

  it('places every rule id where it is written', () => {
    for (const s of file.suppressions) {
      for (const { id, span } of s.ids) expect(text.slice(span.start, span.end)).toBe(id);
    }
    expect(file.suppressions[1]!.ids.map((i) => i.id)).toEqual(['terminal-snr-leak', 'epsilon-at-zero-snr']);
    // `all` is no rule id to check.
    expect(file.suppressions[3]!.ids).toEqual([]);
  });

  it('ignores the comment form inside a quoted string', () => {
    expect(file.suppressions.some((s) => s.line === 6)).toBe(false);
  });

  it('finds comments in every comment position of the YAML syntax', () => {
    const text = [
      'a: [1, # noiselint: deliberate r1', // 0: inside a flow list
      '  2]',
      'b: | # noiselint: deliberate r2', // 2: after a block scalar header
      '  text',
      '---',
      '# noiselint: deliberate r3', // 5: second document
      'c: 1',
      '# noiselint: deliberate throughout r4', // 7: last line, no newline
    ].join('\n');
    const f = parseText(text, 'yaml');
    expect(f.suppressions.map((s) => [s.line, s.scope, s.rules[0]])).toEqual([
      [0, 'next-line', 'r1'],
      [2, 'next-line', 'r2'],
      [5, 'next-line', 'r3'],
      [7, 'file', 'r4'],
    ]);
  });

  it('the reason starts after the word because (or because:) and may hold any text', () => {
    const f = parseText('# noiselint: deliberate terminal-snr-leak because: v-target, see run 12 -- kept\na: 1\n', 'yaml');
    expect(f.suppressions[0]!.rules).toEqual(['terminal-snr-leak']);
    expect(f.suppressions[0]!.reason).toBe('v-target, see run 12 -- kept');
  });

  it('reports a comment that names no rule, and a noiselint comment with another word', () => {
    const none = parseText('# noiselint: deliberate because reasons\na: 1\n', 'yaml');
    expect(none.suppressions).toEqual([]);
    expect(none.problems.map((p) => p.code)).toEqual(['bad-suppression']);
    for (const word of ['allow terminal-snr-leak', 'deliberat terminal-snr-leak', 'allow-file all']) {
      const f = parseText(`# noiselint: ${word}\na: 1\n`, 'yaml');
      expect(f.suppressions, word).toEqual([]);
      expect(
        f.problems.map((p) => p.message),
        word,
      ).toEqual([`"noiselint: ${word.split(' ')[0]}" is not a noiselint comment; write "noiselint: deliberate <rule ids> because <reason>".`]);
    }
  });
});

describe('JSONC deliberate comments', () => {
  it('reads // and /* */ comments', () => {
    const text = [
      '{',
      '  // noiselint: deliberate guidance-overexposure',
      '  "guidance_scale": 9,',
      '  /* noiselint: deliberate throughout ALL */',
      '  "num_inference_steps": 30',
      '}',
    ].join('\r\n');
    const f = parseText(text, 'jsonc');
    expect(plain(f.suppressions)).toEqual([
      { scope: 'next-line', line: 1, targetLine: 2, rules: ['guidance-overexposure'] },
      { scope: 'file', line: 3, targetLine: 4, rules: ['*'] },
    ]);
    const { span } = f.suppressions[0]!.ids[0]!;
    expect(text.slice(span.start, span.end)).toBe('guidance-overexposure');
  });
});
