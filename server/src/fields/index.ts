export * from './concepts';
export * from './aliases';
export { findConcepts, effectiveEntries, type ConceptHit, type HitSource } from './findConcepts';
export {
  readValue,
  readNumber,
  lookupSpelling,
  closestSpelling,
  valueKindOf,
  type ReadResult,
  type ReadValue,
  type ReadProblemKind,
  type ValueKind,
  type Plain,
} from './values';
export { editDistance, normalizeKeySegment, normalizeValue, keySegments, isCamelCase, inStyleOf } from './normalize';
