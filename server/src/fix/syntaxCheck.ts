/** The last syntax check of a fix: the edited text parsed in full. */
import type { TextEdit } from '../base/findings';
import { parseText } from '../parse';
import type { ParsedFile } from '../parse/types';
import { applyEdits } from './apply';

/** Texts up to this size are parsed again after rendering risky edits, as a last check. */
export const VALIDATE_MAX_CHARS = 512 * 1024;

/** Parse problems that leave the tree whole: edits on such a file keep the syntax by construction. */
export const HARMLESS_PROBLEMS: ReadonlySet<string> = new Set(['bad-suppression', 'json-comment']);

function syntaxErrors(problems: ParsedFile['problems']): number {
  let n = 0;
  for (const p of problems) if (p.severity === 'error' && /^(yaml|json|toml)-/.test(p.code)) n++;
  return n;
}

/**
 * The text after `edits` has no more syntax errors than `parsed` and as many documents: a full
 * parse of the result. Where a fix is applied or handed to an editor, this is the last check.
 */
export function editsKeepSyntax(parsed: ParsedFile, edits: readonly TextEdit[]): boolean {
  let after: ParsedFile;
  try {
    after = parseText(applyEdits(parsed.text, edits), parsed.format, { maxFileBytes: Number.MAX_SAFE_INTEGER });
  } catch {
    return false;
  }
  return syntaxErrors(after.problems) <= syntaxErrors(parsed.problems) && after.documents.length === parsed.documents.length;
}
