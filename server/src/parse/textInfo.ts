/** Line ending and byte-order-mark detection. */

/** The majority line ending; `\n` when the text has none. */
export function detectLineEnding(text: string): '\n' | '\r\n' {
  let crlf = 0;
  let lf = 0;
  let i = text.indexOf('\n');
  while (i >= 0) {
    if (i > 0 && text.charCodeAt(i - 1) === 13) crlf++;
    else lf++;
    i = text.indexOf('\n', i + 1);
  }
  return crlf > lf ? '\r\n' : '\n';
}

export function hasBom(text: string): boolean {
  return text.charCodeAt(0) === 0xfeff;
}
