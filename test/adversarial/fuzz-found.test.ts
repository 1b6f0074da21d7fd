/**
 * Minimal inputs the fuzz properties (test/fuzz) found, kept as plain regression tests so that
 * they run on every `npm test` whatever seed the fuzzer draws.
 */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { expectSpansInside } from './helpers';

const isHigh = (c: number) => c >= 0xd800 && c <= 0xdbff;
const isLow = (c: number) => c >= 0xdc00 && c <= 0xdfff;
const splits = (text: string, at: number) => at > 0 && at < text.length && isHigh(text.charCodeAt(at - 1)) && isLow(text.charCodeAt(at));

describe('inputs found by the fuzzer', () => {
  it('a flow-matching config with a negative or huge step count is a finding, not an exception', () => {
    // analyzeFlow sized a Float64Array from an unchecked trainSteps (RangeError: Invalid typed array length: -1).
    for (const steps of ['-1', '-3024283403172851', '0', '2.5', '1e300', '.nan']) {
      for (const head of ['flow_shift: 3', 'prediction_type: flow']) {
        const text = `${head}\nnum_train_timesteps: ${steps}\nnum_inference_steps: 20\n`;
        const result = analyzeText(text, { path: 'lanternfish/flow.yaml' });
        expectSpansInside(result, text);
        expect(
          result.findings.map((f) => f.rule),
          text,
        ).toContain('schedule-invalid');
      }
    }
  });

  it('syntax errors at the end of the text stay inside it (BOM, unclosed flow map, unterminated comment)', () => {
    const cases: [string, 'yaml' | 'json' | 'jsonc'][] = [
      ['\ufeff{\r\n', 'yaml'],
      ['\ufeff{', 'yaml'],
      ['a: [1, 2\n', 'yaml'],
      ['\ufeff{\r\n  "num_train_timesteps": 1000, /*/\r\n}\r\n', 'jsonc'],
      ['{"a": 1 /*/\n}', 'jsonc'],
      ['{"a": 1 /*/\n}', 'json'],
      ['\ufeff{"a": [', 'json'],
    ];
    for (const [text, format] of cases) {
      const result = analyzeText(text, { path: `eof.${format}`, format });
      expect(result.parsed.problems.length, JSON.stringify(text)).toBeGreaterThan(0);
      expectSpansInside(result, text);
    }
  });

  it('syntax error spans do not split a surrogate pair (an LSP position between the halves is invalid)', () => {
    const cases = [
      'a: [\n\u{10000}]\n',
      '{}\n---\nnum_train_timesteps: [\n\u{10000}]\n',
      'x: {num_train_timesteps: ["], "\u{100eb}": 0}\n',
      'a: "\u{1f3ee}\n',
    ];
    for (const text of cases) {
      const result = analyzeText(text, { path: 'astral.yaml' });
      expectSpansInside(result, text);
      const bad = [...result.parsed.problems.map((p) => p.span), ...result.findings.map((f) => f.span)].filter(
        (s) => splits(text, s.start) || splits(text, s.end),
      );
      expect(bad, JSON.stringify(text)).toEqual([]);
    }
  });
});
