/** LineIndex: 0-based lines and UTF-16 characters, as LSP counts them. */
import { describe, expect, it } from 'vitest';
import { LineIndex } from '../../server/src/parse';

describe('LineIndex', () => {
  const text = 'a: 1\r\nb: "🌙"\rc: 3\n\nlast';
  const idx = new LineIndex(text);

  it('treats \\n, \\r\\n and a lone \\r as line breaks', () => {
    expect(idx.lineCount).toBe(5);
    expect(idx.positionAt(text.indexOf('b'))).toEqual({ line: 1, character: 0 });
    expect(idx.positionAt(text.indexOf('c'))).toEqual({ line: 2, character: 0 });
    expect(idx.positionAt(text.indexOf('last'))).toEqual({ line: 4, character: 0 });
  });

  it('counts UTF-16 code units (a surrogate pair is two characters)', () => {
    const closingQuote = text.lastIndexOf('"');
    expect(idx.positionAt(closingQuote)).toEqual({ line: 1, character: 6 });
  });

  it('round-trips every offset', () => {
    for (let o = 0; o <= text.length; o++) {
      const p = idx.positionAt(o);
      if (text[o - 1] === '\r' && text[o] === '\n') continue; // between \r and \n: not a position
      expect(idx.offsetAt(p)).toBe(o);
    }
  });

  it('clamps out-of-range input', () => {
    expect(idx.positionAt(-5)).toEqual({ line: 0, character: 0 });
    expect(idx.positionAt(10_000)).toEqual({ line: 4, character: 4 });
    expect(idx.offsetAt({ line: 99, character: 0 })).toBe(text.length);
    expect(idx.offsetAt({ line: 0, character: 99 })).toBe(text.indexOf('b'));
  });

  it('gives line ends before the break', () => {
    expect(text.slice(idx.lineStart(0), idx.lineEnd(0))).toBe('a: 1');
    expect(text.slice(idx.lineStart(1), idx.lineEnd(1))).toBe('b: "🌙"');
    expect(text.slice(idx.lineStart(3), idx.lineEnd(3))).toBe('');
    expect(text.slice(idx.lineStart(4), idx.lineEnd(4))).toBe('last');
  });
});
