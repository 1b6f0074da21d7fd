/** fix/: concept edits -> minimal text edits. Knows nothing about why a fix is wanted. */
export { renderConceptEdits, editsTouchComment } from './render';
export { applyEdits, editsConflict, anyConflict, sortEdits } from './apply';
export { commentSpans } from './comments';
