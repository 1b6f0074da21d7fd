/**
 * Comment spans come from the parse that built the tree (no second parse per fix), and they are
 * exactly the comments: a `#` inside a quoted value or a block scalar is text, not a comment.
 * Also: the token grammar that decides which written values keep the syntax by construction.
 */
import { describe, expect, it } from 'vitest';
import { commentSpans } from '../../server/src/fix';
import { commentStartingAt, rangeHasComment } from '../../server/src/fix/comments';
import { isScalarToken } from '../../server/src/fix/render';
import { parseText } from '../../server/src/parse';
import type { ParsedFile, SourceFormat } from '../../server/src/parse/types';

/** The text of each comment span. */
function commentTexts(text: string, format: SourceFormat): string[] {
  const parsed = parseText(text, format);
  expect(parsed.comments, 'the parse records the comments').toBeDefined();
  return commentSpans(parsed).map((c) => text.slice(c.start, c.end));
}

describe('comment spans recorded by the parse', () => {
  it('YAML: line, trailing, flow, document-marker and block-scalar neighbours', () => {
    const text = [
      '# Lanternfish Pictures: harbour dusk sampler',
      '--- # sampling run',
      'num_inference_steps: 30 # short preview',
      'note: "keeps # as text"',
      "other: 'also # text'",
      'prompt: |  # header comment',
      '  a # inside the block scalar is text',
      'sizes: [512, # width',
      '  768] # height',
      '... # end',
      '',
    ].join('\n');
    expect(commentTexts(text, 'yaml')).toEqual([
      '# Lanternfish Pictures: harbour dusk sampler',
      '# sampling run',
      '# short preview',
      '# header comment',
      '# width',
      '# height',
      '# end',
    ]);
  });

  it('JSONC: line and block comments, not a // inside a string', () => {
    const text = ['{', '  // Lanternfish Pictures', '  "url": "https://example.invalid/a", /* inline */', '  "steps": 30', '}', ''].join('\n');
    expect(commentTexts(text, 'jsonc')).toEqual(['// Lanternfish Pictures', '/* inline */']);
  });

  it('a text with a syntax error still has its comments', () => {
    expect(commentTexts('steps: [1, 2 # open list\nguidance: 7.5 # strong\n', 'yaml')).toEqual(['# open list', '# strong']);
  });

  it('a hand-made ParsedFile without comments gets them from a parse of its text', () => {
    const made: ParsedFile = {
      format: 'yaml',
      text: 'a: 1 # one\nb: 2\n',
      documents: [],
      problems: [],
      lineEnding: '\n',
      bom: false,
      suppressions: [],
    };
    expect(commentSpans(made)).toEqual([{ start: 5, end: 10 }]);
  });
});

describe('rangeHasComment and commentStartingAt', () => {
  const text = 'a: 1 # one\nb: 2\nc: 3 # three\n';
  const parsed = parseText(text, 'yaml');
  const one = text.indexOf('# one');
  const three = text.indexOf('# three');

  it('a range overlapping a comment has one; a range that only touches it does not', () => {
    expect(rangeHasComment(parsed, 0, one + 1)).toBe(true);
    expect(rangeHasComment(parsed, 0, one)).toBe(false);
    expect(rangeHasComment(parsed, one + 5, three)).toBe(false);
    expect(rangeHasComment(parsed, one + 5, text.length)).toBe(true);
  });

  it('an empty range is in a comment only strictly inside it', () => {
    expect(rangeHasComment(parsed, one + 2, one + 2)).toBe(true);
    expect(rangeHasComment(parsed, one, one)).toBe(false);
    expect(rangeHasComment(parsed, one + 5, one + 5)).toBe(false);
  });

  it('finds the comment that starts at an offset, and only that', () => {
    expect(commentStartingAt(parsed, three)).toEqual({ start: three, end: three + '# three'.length });
    expect(commentStartingAt(parsed, three + 1)).toBeUndefined();
    expect(commentStartingAt(parsed, 0)).toBeUndefined();
  });
});

describe('isScalarToken: values that end where they are written', () => {
  it('YAML: plain words, numbers, quoted strings', () => {
    for (const t of ['trailing', 'v_prediction', 'True', '1000', '0.012', '1.0e-4', '-0.5', '"trailing"', '"a \\"b\\""', "'it''s'"]) {
      expect(isScalarToken(t, 'yaml'), t).toBe(true);
    }
  });

  it('YAML: nothing that could start a structure, a comment or a second value', () => {
    for (const t of [
      'a: b',
      'a #b',
      '[1]',
      '{a}',
      '- a',
      '&x 1',
      '*x',
      '!!str a',
      'a,b',
      '',
      "'a",
      '"a',
      'a\nb',
      "'a\nb'",
      '"a\u2028b"',
      '@a',
      '`a',
    ]) {
      expect(isScalarToken(t, 'yaml'), JSON.stringify(t)).toBe(false);
    }
  });

  it('JSON: its own scalar grammar only', () => {
    for (const t of ['"trailing"', '1000', '-0.5', '1.0e-4', 'true', 'false', 'null']) expect(isScalarToken(t, 'json'), t).toBe(true);
    for (const t of ['trailing', 'True', "'a'", '01', '.5', '1.', '+1', '"a\nb"', 'NaN']) expect(isScalarToken(t, 'json'), t).toBe(false);
  });
});
