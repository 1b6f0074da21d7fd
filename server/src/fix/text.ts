/** Small position helpers over the raw document text (offsets are UTF-16 code units). */

/** Offset of the first character of the line holding `pos`. */
export function lineStartOf(text: string, pos: number): number {
  return text.lastIndexOf('\n', pos - 1) + 1;
}

/** Offset of the line break (`\r\n` or `\n`) ending the line holding `pos`, or text.length. */
export function lineBreakOf(text: string, pos: number): number {
  const nl = text.indexOf('\n', pos);
  if (nl < 0) return text.length;
  return nl > 0 && text[nl - 1] === '\r' ? nl - 1 : nl;
}

/** Offset just after the line break ending the line holding `pos` (text.length on the last line). */
export function nextLineStart(text: string, pos: number): number {
  const nl = text.indexOf('\n', pos);
  return nl < 0 ? text.length : nl + 1;
}

/** 0-based line number of `pos`. */
export function lineOf(text: string, pos: number): number {
  let line = 0;
  for (let i = text.indexOf('\n'); i >= 0 && i < pos; i = text.indexOf('\n', i + 1)) line++;
  return line;
}

export function isBlank(s: string): boolean {
  return /^[ \t]*$/.test(s);
}

/**
 * The span of a key including its quotes, whether or not the reader's key span includes them.
 */
export function keySpanWithQuotes(text: string, span: { start: number; end: number }): { start: number; end: number } {
  const first = text[span.start];
  if (first === '"' || first === "'") return span;
  const before = text[span.start - 1];
  if ((before === '"' || before === "'") && text[span.end] === before) return { start: span.start - 1, end: span.end + 1 };
  return span;
}
