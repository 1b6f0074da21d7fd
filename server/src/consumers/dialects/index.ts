export * from './types';
export { genericDialect, typeCorePlain, typeNonFiniteJsonToken } from './generic';
export { pyyamlDialect, typePyyamlPlain } from './pyyaml';
export { omegaconfDialect, typeOmegaconfPlain } from './omegaconf';
export { pythonJsonDialect } from './pythonJson';
import { genericDialect } from './generic';
import { omegaconfDialect } from './omegaconf';
import { pythonJsonDialect } from './pythonJson';
import { pyyamlDialect } from './pyyaml';
import type { Dialect, DialectId } from './types';

export const DIALECTS: Record<DialectId, Dialect> = {
  generic: genericDialect,
  pyyaml: pyyamlDialect,
  omegaconf: omegaconfDialect,
  'python-json': pythonJsonDialect,
};

export const DIALECT_IDS = Object.keys(DIALECTS) as DialectId[];
