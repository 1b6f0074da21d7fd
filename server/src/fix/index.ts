/** fix/: concept edits -> minimal text edits. Knows nothing about why a fix is wanted. */
export { renderConceptEdits, editsTouchComment, editsKeepSyntax } from './render';
export { rememberOrigin, originOf, fixKeepsSyntax, editsAreApplicable } from './applicable';
export { applyEdits, editsConflict, anyConflict, sortEdits } from './apply';
export { commentSpans } from './comments';
export { allowedFix, fixCandidates, selectFixes } from './select';
