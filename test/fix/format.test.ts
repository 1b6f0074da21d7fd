/** Value spellings and number notation written by fixes; applyEdits and comment detection. */
import { describe, expect, it } from 'vitest';
import { parse as parseYaml11 } from 'yaml';
import { formatBoolean, formatNumber, formatString, isPlainSafe } from '../../server/src/fix/format';
import { applyEdits, editsConflict } from '../../server/src/fix/apply';
import { spellEnum, insertKeyFor } from '../../server/src/fix/spellings';
import { commentSpans } from '../../server/src/fix/comments';
import { parseText } from '../../server/src/parse';

describe('formatNumber', () => {
  const yaml = (n: number, oldRaw: string | null = null, integer = false) => formatNumber(n, { format: 'yaml', oldRaw, integer });
  const cases: [number, string | null, boolean, string | null][] = [
    [0.7, null, false, '0.7'],
    [0.7, '0.0', false, '0.7'],
    [1, '1.5', false, '1.0'],
    [1, '2', false, '1'],
    [1000, null, true, '1000'],
    [999.5, null, true, null],
    [Number.NaN, null, false, null],
    [Infinity, null, false, null],
    [1e-4, '1e-3', false, '1e-4'],
    [1e-4, '1.0e-3', false, '1.0e-4'],
    [1e-4, '0.001', false, '0.0001'],
    [1e-7, null, false, '1.0e-7'],
    // float noise from arithmetic is rounded to 12 significant digits
    [0.1 + 0.2, null, false, '0.3'],
    [-0, null, false, '0.0'],
  ];
  for (const [n, oldRaw, integer, expected] of cases) {
    it(`${n} (was ${oldRaw ?? 'absent'}${integer ? ', integer' : ''}) -> ${expected}`, () => {
      expect(yaml(n, oldRaw, integer)).toBe(expected);
    });
  }

  it('every YAML exponent form reads back as the same number under YAML 1.1 rules', () => {
    // Fact of the YAML 1.1 float grammar: a float needs a dot and a signed exponent, so `1e-7`
    // is a string there; the written form must survive both 1.1 and 1.2 loaders.
    for (const n of [1e-7, 2.5e-9, 3.1e-12, 1e-4]) {
      const s = yaml(n, '1.0e-3');
      expect(s).not.toBeNull();
      expect(parseYaml11(`v: ${s}`, { version: '1.1' }).v).toBe(n);
      expect(parseYaml11(`v: ${s}`, { version: '1.2' }).v).toBe(n);
    }
  });

  it('JSON numbers are valid JSON', () => {
    for (const n of [0.7, 1e-7, 1, 123456.789]) {
      const s = formatNumber(n, { format: 'json', integer: false });
      expect(JSON.parse(s!)).toBe(n);
    }
  });
});

describe('strings and booleans', () => {
  it('plain-safe strings stay plain; reserved words and odd text get quotes', () => {
    expect(isPlainSafe('trailing')).toBe(true);
    expect(isPlainSafe('v_prediction')).toBe(true);
    expect(isPlainSafe('yes')).toBe(false);
    expect(isPlainSafe('null')).toBe(false);
    expect(isPlainSafe('a: b')).toBe(false);
    expect(formatString('trailing', 'yaml', 'plain')).toBe('trailing');
    expect(formatString('no', 'yaml', 'plain')).toBe('"no"');
    expect(formatString("it's", 'yaml', 'single')).toBe("'it''s'");
    expect(formatString('trailing', 'json', 'plain')).toBe('"trailing"');
  });

  it('booleans in the file casing', () => {
    expect(formatBoolean(true, 'lower')).toBe('true');
    expect(formatBoolean(false, 'title')).toBe('False');
    expect(formatBoolean(true, 'upper')).toBe('TRUE');
  });
});

describe('spellings', () => {
  it('prediction target follows the family of the value it replaces, then the key', () => {
    const ctx = (key: string | null, oldValue: string | null, style: 'snake' | 'camel' | 'short' = 'snake') => ({ key, oldValue, style });
    expect(spellEnum('predictionTarget', 'v', ctx('prediction_type', 'epsilon'))).toBe('v_prediction');
    expect(spellEnum('predictionTarget', 'v', ctx('parameterization', 'eps'))).toBe('v');
    expect(spellEnum('predictionTarget', 'v', ctx('objective', 'pred_noise'))).toBe('pred_v');
    expect(spellEnum('predictionTarget', 'v', ctx('objective', 'noise'))).toBe('velocity');
    expect(spellEnum('predictionTarget', 'epsilon', ctx('parameterization', null))).toBe('eps');
    expect(spellEnum('predictionTarget', 'v', ctx(null, null, 'short'))).toBe('v');
    expect(spellEnum('predictionTarget', 'v', ctx(null, null, 'camel'))).toBe('v_prediction');
    expect(spellEnum('timestepSpacing', 'trailing', ctx('timestep_spacing', 'leading'))).toBe('trailing');
    expect(spellEnum('betaSchedule', 'cosine', ctx('beta_schedule', 'linear'))).toBe('squaredcos_cap_v2');
    expect(spellEnum('betaSchedule', 'cosine', ctx('beta_schedule', 'linear', 'short'))).toBe('cosine');
    expect(spellEnum('sampler', 'ddim', ctx('_class_name', 'EulerDiscreteScheduler'))).toBeNull();
  });

  it('inserted keys follow the file style and a partner key in the map', () => {
    expect(insertKeyFor('guidanceRescale', 'snake', ['guidance_scale'])).toBe('guidance_rescale');
    expect(insertKeyFor('guidanceRescale', 'snake', ['cfg_scale'])).toBe('cfg_rescale');
    expect(insertKeyFor('zeroTerminalSnr', 'camel', [])).toBe('rescaleBetasZeroSnr');
    expect(insertKeyFor('zeroTerminalSnr', 'short', [])).toBe('zero_terminal_snr');
    expect(insertKeyFor('latentSpace', 'snake', [])).toBeNull();
  });
});

describe('applyEdits', () => {
  it('applies edits in position order, inserts at one point in the given order', () => {
    const text = 'abcdef';
    expect(
      applyEdits(text, [
        { span: { start: 4, end: 5 }, newText: 'E' },
        { span: { start: 1, end: 1 }, newText: 'x' },
        { span: { start: 1, end: 1 }, newText: 'y' },
        { span: { start: 1, end: 3 }, newText: '' },
      ]),
    ).toBe('axydEf');
  });

  it('refuses overlapping or out-of-range edits', () => {
    expect(() =>
      applyEdits('abc', [
        { span: { start: 0, end: 2 }, newText: '' },
        { span: { start: 1, end: 3 }, newText: '' },
      ]),
    ).toThrow(/overlap/);
    expect(() => applyEdits('abc', [{ span: { start: 2, end: 9 }, newText: '' }])).toThrow(/outside/);
  });

  it('conflicts: overlap and same-point inserts conflict, touching ranges do not', () => {
    const e = (start: number, end: number) => ({ span: { start, end }, newText: 'x' });
    expect(editsConflict(e(0, 2), e(1, 3))).toBe(true);
    expect(editsConflict(e(0, 2), e(2, 3))).toBe(false);
    expect(editsConflict(e(2, 2), e(2, 2))).toBe(true);
    expect(editsConflict(e(1, 1), e(0, 3))).toBe(true);
    expect(editsConflict(e(0, 0), e(0, 3))).toBe(false);
  });
});

describe('commentSpans', () => {
  it('finds YAML comments but not # inside strings or block scalars', () => {
    const text = '# top\na: "x # not"  # real\nb: |\n  # text\nc: 1 #tail\n';
    const spans = commentSpans(parseText(text, 'yaml')).map((s) => text.slice(s.start, s.end));
    expect(spans).toEqual(['# top', '# real', '#tail']);
  });

  it('finds JSONC line and block comments but not // inside strings', () => {
    const text = '{"url": "http://x", // one\n /* two */ "a": 1}';
    const spans = commentSpans(parseText(text, 'jsonc')).map((s) => text.slice(s.start, s.end));
    expect(spans).toEqual(['// one', '/* two */']);
  });
});
