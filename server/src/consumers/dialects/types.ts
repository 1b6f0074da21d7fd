/**
 * A loader dialect decides what a raw scalar is: the same text `1e-4` is a float for one loader
 * and a string for another. A dialect is a pure function from a raw scalar (its source text, its
 * style and its tag) to a typed value. Its `interpret` is parse/'s ScalarInterpreter, so the YAML
 * readers call it directly when the dialect is known before parsing (the project file chose it);
 * otherwise the consumer stage re-types the located tree's scalars with it (readAs.ts).
 */
import type { RawScalar, ScalarInterpreter } from '../../parse/scalars';
import type { ScalarValue } from '../../parse/types';

export type DialectId = 'generic' | 'pyyaml' | 'omegaconf' | 'python-json' | 'tomllib';

/** The raw scalar every reader of parse/ hands to its interpreter (parse/scalars.ts). */
export type { RawScalar };

export type TypedKind = 'str' | 'int' | 'float' | 'bool' | 'null';

export interface TypedValue {
  value: ScalarValue;
  kind: TypedKind;
}

export interface Dialect {
  id: DialectId;
  /** One line for explain output: which loader this is. */
  title: string;
  /** Where the typing rules come from. */
  source: string;
  typeScalar(raw: RawScalar): TypedValue;
  /** The same typing as parse/'s interpreter hook, so a reader can type scalars with it directly. */
  interpret: ScalarInterpreter;
  /** The loader resolves `${...}` interpolations (OmegaConf). */
  interpolates: boolean;
  /** NaN, Infinity and -Infinity are valid JSON tokens for this loader. */
  acceptsNonFiniteJson: boolean;
  /** A comment in a .json file is an error for this loader (not a warning). */
  jsonCommentsAreErrors: boolean;
}

/** The text inside quotes, for quoted scalars the reader did not decode. */
export function unquoted(raw: RawScalar): string {
  if (raw.decoded !== undefined) return raw.decoded;
  const s = raw.source;
  if (raw.style === 'double' && s.length >= 2 && s.startsWith('"') && s.endsWith('"')) {
    try {
      return JSON.parse(s) as string;
    } catch {
      return s.slice(1, -1);
    }
  }
  if (raw.style === 'single' && s.length >= 2 && s.startsWith("'") && s.endsWith("'")) return s.slice(1, -1).replace(/''/g, "'");
  return s;
}

export function str(value: string): TypedValue {
  return { value, kind: 'str' };
}
