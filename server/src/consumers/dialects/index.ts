export * from './types';
export { genericDialect, typeCorePlain, typeNonFiniteJsonToken } from './generic';
export { pyyamlDialect, typePyyamlPlain } from './pyyaml';
export { omegaconfDialect, typeOmegaconfPlain } from './omegaconf';
export { pythonJsonDialect } from './pythonJson';
export { tomllibDialect, typeTomlPlain } from './tomllib';
import { genericDialect } from './generic';
import { omegaconfDialect } from './omegaconf';
import { pythonJsonDialect } from './pythonJson';
import { pyyamlDialect } from './pyyaml';
import { tomllibDialect } from './tomllib';
import type { Dialect, DialectId } from './types';

export const DIALECTS: Record<DialectId, Dialect> = {
  generic: genericDialect,
  pyyaml: pyyamlDialect,
  omegaconf: omegaconfDialect,
  'python-json': pythonJsonDialect,
  tomllib: tomllibDialect,
};

export const DIALECT_IDS = Object.keys(DIALECTS) as DialectId[];
