/** Line ending and byte-order-mark detection. */

/** The majority line ending (a lone CR counts, as in YAML 1.2 and LSP); `\n` when the text has none. */
export function detectLineEnding(text: string): '\n' | '\r\n' | '\r' {
  let crlf = 0;
  let lf = 0;
  let i = text.indexOf('\n');
  while (i >= 0) {
    if (i > 0 && text.charCodeAt(i - 1) === 13) crlf++;
    else lf++;
    i = text.indexOf('\n', i + 1);
  }
  let cr = -crlf;
  for (let j = text.indexOf('\r'); j >= 0; j = text.indexOf('\r', j + 1)) cr++;
  if (cr > lf && cr > crlf) return '\r';
  return crlf > lf ? '\r\n' : '\n';
}

export function hasBom(text: string): boolean {
  return text.charCodeAt(0) === 0xfeff;
}
