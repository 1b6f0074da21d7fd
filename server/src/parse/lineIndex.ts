/**
 * Offset <-> position conversion. Positions are 0-based lines and 0-based UTF-16 characters, the
 * convention of LSP. Line breaks are `\n`, `\r\n` and a lone `\r` (the same set YAML and LSP use).
 */

export interface Position {
  line: number;
  character: number;
}

export class LineIndex {
  /** Offset of the first character of each line. */
  private readonly starts: number[];
  readonly length: number;
  private readonly text: string;

  constructor(text: string) {
    this.text = text;
    this.length = text.length;
    const starts = [0];
    for (let i = 0; i < text.length; i++) {
      const c = text.charCodeAt(i);
      if (c === 13 /* \r */) {
        if (text.charCodeAt(i + 1) === 10) i++;
        starts.push(i + 1);
      } else if (c === 10 /* \n */) {
        starts.push(i + 1);
      }
    }
    this.starts = starts;
  }

  get lineCount(): number {
    return this.starts.length;
  }

  /** Offset of the start of `line` (clamped to the text). */
  lineStart(line: number): number {
    if (line <= 0) return 0;
    if (line >= this.starts.length) return this.length;
    return this.starts[line]!;
  }

  /** Offset just past the last character of `line`, before its line break. */
  lineEnd(line: number): number {
    if (line < 0) return 0;
    if (line >= this.starts.length - 1) return this.length;
    let end = this.starts[line + 1]!;
    if (this.text.charCodeAt(end - 1) === 10) end--;
    if (end > this.starts[line]! && this.text.charCodeAt(end - 1) === 13) end--;
    return end;
  }

  /** The 0-based line that contains `offset` (offsets past the end map to the last line). */
  lineAt(offset: number): number {
    if (offset <= 0) return 0;
    const starts = this.starts;
    let lo = 0;
    let hi = starts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (starts[mid]! <= offset) lo = mid;
      else hi = mid - 1;
    }
    return lo;
  }

  positionAt(offset: number): Position {
    const clamped = Math.max(0, Math.min(Math.floor(offset), this.length));
    const line = this.lineAt(clamped);
    return { line, character: clamped - this.starts[line]! };
  }

  /** Characters past the end of a line clamp to the line's last offset (including its break). */
  offsetAt(position: Position): number {
    if (position.line < 0) return 0;
    if (position.line >= this.starts.length) return this.length;
    const start = this.starts[position.line]!;
    const next = position.line + 1 < this.starts.length ? this.starts[position.line + 1] : this.length;
    return Math.max(start, Math.min(start + Math.max(0, position.character), next!));
  }
}
