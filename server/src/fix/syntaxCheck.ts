/** The last syntax check of a fix: the edited text parsed in full. */
import type { TextEdit } from '../base/findings';
import { parseText } from '../parse';
import type { ParsedFile, ParseProblem, SourceFormat } from '../parse/types';
import { applyEdits } from './apply';

/** Texts up to this size are parsed again after rendering risky edits, as a last check. */
export const VALIDATE_MAX_CHARS = 512 * 1024;

/** Parse problems that leave the tree whole: edits on such a file keep the syntax by construction. */
export const HARMLESS_PROBLEMS: ReadonlySet<string> = new Set(['bad-suppression', 'json-comment']);

/**
 * What the syntax check needs of the parse that edits are made against, without its tree: a fix
 * that remembers where it came from (fix/applicable.ts) must not keep a large file's tree alive.
 */
export interface SyntaxBase {
  text: string;
  format: SourceFormat;
  problems: readonly ParseProblem[];
  documents: { readonly length: number };
}

const bases = new WeakMap<ParsedFile, SyntaxBase>();

/** The tree-free part of a parse that the syntax check reads (one per parse). */
export function syntaxBaseOf(parsed: ParsedFile): SyntaxBase {
  let base = bases.get(parsed);
  if (!base) {
    base = { text: parsed.text, format: parsed.format, problems: parsed.problems, documents: { length: parsed.documents.length } };
    bases.set(parsed, base);
  }
  return base;
}

function syntaxErrors(problems: readonly ParseProblem[]): number {
  let n = 0;
  for (const p of problems) if (p.severity === 'error' && /^(yaml|json|toml)-/.test(p.code)) n++;
  return n;
}

/**
 * The text after `edits` has no more syntax errors than `parsed` and as many documents: a full
 * parse of the result. Where a fix is applied or handed to an editor, this is the last check.
 */
export function editsKeepSyntax(parsed: SyntaxBase, edits: readonly TextEdit[]): boolean {
  let after: ParsedFile;
  try {
    after = parseText(applyEdits(parsed.text, edits), parsed.format, { maxFileBytes: Number.MAX_SAFE_INTEGER });
  } catch {
    return false;
  }
  return syntaxErrors(after.problems) <= syntaxErrors(parsed.problems) && after.documents.length === parsed.documents.length;
}
