/**
 * `noiselint: deliberate <rule-id>[, <rule-id>...] [because <reason>]` comments: the config
 * does this on purpose, so the named rules keep quiet about it.
 *
 * - On a line of its own, the comment covers the next line that is not a comment line (so several
 *   comment lines may stand between it and the field). At the end of a line of content it covers
 *   that line.
 * - `noiselint: deliberate throughout <ids>` covers the whole file wherever it appears.
 * - `all` covers every rule. Rule ids are separated by commas or spaces; everything after the
 *   word `because` (or `because:`) is the reason, kept with the suppression.
 * - A `noiselint:` comment with another word is reported (`bad-suppression`), so a misspelled
 *   directive does not silently keep nothing quiet. Whether the ids name rules is the engine's
 *   check: this layer does not know the rules.
 */
import type { LineIndex } from './lineIndex';
import type { ParseProblem, Suppression } from './types';
import type { SourceComment } from './shared';

export const DIRECTIVE_WORD = 'deliberate';
export const WHOLE_FILE_WORD = 'throughout';
export const REASON_WORD = 'because';

const PREFIX = /^(\s*noiselint\s*:\s*)(\S*)/i;
const RULE_ID = /^[a-z0-9][a-z0-9-]*$/i;
const USAGE = `write "noiselint: ${DIRECTIVE_WORD} <rule ids> ${REASON_WORD} <reason>"`;

export function readSuppressions(text: string, comments: SourceComment[], lines: LineIndex, problems: ParseProblem[]): Suppression[] {
  if (comments.length === 0) return [];
  // Lines whose first non-blank content is a comment.
  const commentLines = new Set<number>();
  const ownLine = comments.map((c) => {
    const line = lines.lineAt(c.start);
    const before = text.slice(lines.lineStart(line), c.start);
    const alone = before.trim() === '';
    if (alone) {
      const endLine = lines.lineAt(c.end);
      for (let l = line; l <= endLine; l++) commentLines.add(l);
    }
    return alone;
  });

  const out: Suppression[] = [];
  comments.forEach((c, i) => {
    const head = PREFIX.exec(c.text);
    if (!head) return;
    const span = { start: c.start, end: c.end };
    const word = head[2]!.toLowerCase();
    if (word !== DIRECTIVE_WORD) {
      problems.push({
        code: 'bad-suppression',
        severity: 'warning',
        span,
        message: `"noiselint: ${head[2]}" is not a noiselint comment; ${USAGE}.`,
      });
      return;
    }
    // Offset of the comment's text in the document, to place each rule id exactly.
    const at = text.slice(c.start, c.end).indexOf(c.text);
    const textStart = at >= 0 ? c.start + at : -1;
    let scope: Suppression['scope'] = 'next-line';
    let reason: string | undefined;
    const rules: string[] = [];
    const ids: Suppression['ids'] = [];
    const tokens = /[^\s,]+/g;
    tokens.lastIndex = head[0].length;
    for (let m = tokens.exec(c.text); m; m = tokens.exec(c.text)) {
      const t = m[0];
      const lower = t.toLowerCase();
      if (lower === REASON_WORD || lower === `${REASON_WORD}:`) {
        reason = c.text.slice(m.index + t.length).trim() || undefined;
        break;
      }
      if (lower === WHOLE_FILE_WORD && rules.length === 0 && scope === 'next-line') {
        scope = 'file';
        continue;
      }
      if (lower === 'all') {
        rules.push('*');
        continue;
      }
      if (!RULE_ID.test(t)) {
        problems.push({ code: 'bad-suppression', severity: 'warning', span, message: `"${t}" is not a rule id; it is ignored.` });
        continue;
      }
      rules.push(lower);
      ids.push({ id: lower, span: textStart >= 0 ? { start: textStart + m.index, end: textStart + m.index + t.length } : span });
    }
    if (rules.length === 0) {
      problems.push({
        code: 'bad-suppression',
        severity: 'warning',
        span,
        message: `"noiselint: ${DIRECTIVE_WORD}" names no rule: list rule ids or write "all"; ${USAGE}.`,
      });
      return;
    }
    const line = lines.lineAt(c.start);
    let targetLine = line;
    if (ownLine[i]) {
      targetLine = lines.lineAt(c.end) + 1;
      while (targetLine < lines.lineCount && commentLines.has(targetLine)) targetLine++;
    }
    const suppression: Suppression = { scope, line, targetLine, rules: rules.includes('*') ? ['*'] : rules, ids };
    if (reason) suppression.reason = reason;
    out.push(suppression);
  });
  return out;
}
