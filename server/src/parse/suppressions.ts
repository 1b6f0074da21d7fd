/**
 * `noiselint: allow <rule-id>[, <rule-id>...]` comments.
 *
 * - On a line of its own, `allow` applies to the next line that is not a comment line (so several
 *   comment lines may stand between it and the field). At the end of a line of content it applies
 *   to that line.
 * - `allow-file` applies to the whole file wherever it appears.
 * - `all` (or `*`) allows every rule. Rule ids are separated by commas or spaces; text after ` -- `
 *   is a free-form reason.
 */
import type { LineIndex } from './lineIndex';
import type { ParseProblem, Suppression } from './types';
import type { SourceComment } from './shared';

const DIRECTIVE = /^\s*noiselint\s*:\s*(allow-file|allow)\b(.*)$/is;
const RULE_ID = /^[a-z0-9][a-z0-9-]*$/i;

export function readSuppressions(
  text: string,
  comments: SourceComment[],
  lines: LineIndex,
  problems: ParseProblem[],
): Suppression[] {
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
    const m = DIRECTIVE.exec(c.text);
    if (!m) return;
    const scope = m[1].toLowerCase() === 'allow-file' ? 'file' : 'next-line';
    const list = m[2].split(/\s--\s|\s--$/)[0];
    const tokens = list
      .split(/[\s,]+/)
      .map((t) => t.trim())
      .filter((t) => t.length > 0);
    const span = { start: c.start, end: c.end };
    if (tokens.length === 0) {
      problems.push({
        code: 'bad-suppression',
        severity: 'warning',
        span,
        message: `"noiselint: ${m[1]}" names no rule: list rule ids or write "all".`,
      });
      return;
    }
    const rules: string[] = [];
    for (const t of tokens) {
      if (t.toLowerCase() === 'all' || t === '*') {
        rules.length = 0;
        rules.push('*');
        break;
      }
      if (RULE_ID.test(t)) rules.push(t.toLowerCase());
      else
        problems.push({
          code: 'bad-suppression',
          severity: 'warning',
          span,
          message: `"${t}" is not a rule id; it is ignored.`,
        });
    }
    if (rules.length === 0) return;
    const line = lines.lineAt(c.start);
    let targetLine = line;
    if (ownLine[i]) {
      targetLine = lines.lineAt(c.end) + 1;
      while (targetLine < lines.lineCount && commentLines.has(targetLine)) targetLine++;
    }
    out.push({ scope, line, targetLine, rules });
  });
  return out;
}
