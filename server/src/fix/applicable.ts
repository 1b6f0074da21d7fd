/**
 * The full syntax check of a fix, done lazily where the fix is handed to a user (LSP code
 * actions) instead of once per finding during analysis. The engine records which parse each
 * rendered fix was made from; a fix is parsed again at most once, when it is first asked about.
 */
import type { FixProposal, TextEdit } from '../base/findings';
import { editsKeepSyntax } from './render';
import type { SyntaxBase } from './syntaxCheck';

const origins = new WeakMap<FixProposal, SyntaxBase>();
const verdicts = new WeakMap<FixProposal, boolean>();

/**
 * Records the parse `fix` was rendered from (the engine calls this for every fix it returns), as
 * its text and problems only: a kept finding must not keep the file's tree.
 */
export function rememberOrigin(fix: FixProposal, parsed: SyntaxBase): void {
  origins.set(fix, parsed);
}

/** The parse `fix` was rendered from, when the engine made it. */
export function originOf(fix: FixProposal): SyntaxBase | undefined {
  return origins.get(fix);
}

/**
 * True when applying `fix` to the text of `base` adds no syntax error (a full parse of the result,
 * remembered per fix). `base` defaults to the parse the fix was rendered from; with neither, the
 * fix cannot be checked and is refused.
 */
export function fixKeepsSyntax(fix: FixProposal, base: SyntaxBase | undefined = originOf(fix)): boolean {
  let verdict = verdicts.get(fix);
  if (verdict === undefined) {
    verdict = base !== undefined && editsAreApplicable(base, fix.edits);
    verdicts.set(fix, verdict);
  }
  return verdict;
}

/** True when `edits` apply to the text of `base` and add no syntax error. */
export function editsAreApplicable(base: SyntaxBase, edits: readonly TextEdit[]): boolean {
  return edits.length > 0 && editsKeepSyntax(base, edits);
}
