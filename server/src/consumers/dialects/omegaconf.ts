/**
 * YAML as OmegaConf loads it: PyYAML's YAML 1.1 types plus a float resolver that also accepts
 * exponent floats without a dot (`1e-4`), then `${...}` interpolation resolved on access. Recalled
 * from memory of OmegaConf 2.3, omegaconf/_utils.py (get_yaml_loader adds the float resolver) and
 * the grammar of interpolations (absolute `${a.b}`, relative `${.x}` / `${..x}`, resolvers such as
 * `${oc.env:NAME,default}`). Interpolation itself lives in interpolate.ts.
 */
import { typeTagged } from './generic';
import { typePyyamlPlain } from './pyyaml';
import { str, unquoted, type Dialect, type TypedValue } from './types';

/** The alternatives OmegaConf's float resolver adds to PyYAML's: exponents without a dot or a sign. */
const EXPONENT_FLOAT = /^([-+]?[0-9][0-9_]*\.[0-9_]*[eE][-+]?[0-9]+|[-+]?[0-9][0-9_]*[eE][-+]?[0-9]+|\.[0-9_]+[eE][-+]?[0-9]+)$/;

export function typeOmegaconfPlain(text: string): TypedValue {
  const s = text.trim();
  if (EXPONENT_FLOAT.test(s)) return { value: Number(s.replace(/_/g, '')), kind: 'float' };
  return typePyyamlPlain(s);
}

export const omegaconfDialect: Dialect = {
  interpret: (raw) => omegaconfDialect.typeScalar(raw).value,
  id: 'omegaconf',
  title: 'YAML read by OmegaConf (YAML 1.1 types, exponent floats, ${...} interpolation)',
  source: 'recalled from memory of OmegaConf 2.3 (omegaconf/_utils.py get_yaml_loader; interpolation grammar)',
  interpolates: true,
  acceptsNonFiniteJson: false,
  jsonCommentsAreErrors: false,
  typeScalar(raw) {
    if (raw.style !== 'plain') return str(unquoted(raw));
    return typeTagged(raw, typeOmegaconfPlain) ?? typeOmegaconfPlain(raw.source);
  },
};
