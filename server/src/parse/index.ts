export * from './types';
export { parseText, formatFromPath } from './parseText';
export { LineIndex, type Position } from './lineIndex';
export { detectLineEnding, hasBom } from './textInfo';
export { coreScalar, resolveCorePlain, type RawScalar, type ScalarInterpreter } from './scalars';
export type { ParseOptions } from './parseText';
