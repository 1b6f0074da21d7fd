/**
 * TOML as Python's tomllib reads it (TOML 1.0.0, the standard library since Python 3.11). TOML
 * types every value by its grammar, so the located tree of parse/toml.ts already holds what the
 * loader gives; this dialect states that typing for a raw scalar (and is checked against the
 * real tomllib where python3 is installed):
 * - integers: decimal with `_` between digits, `0x`, `0o`, `0b` (no sign on those), no leading zero;
 * - floats: a fraction and/or an exponent (`1e-4` is a float), `inf`, `nan` with an optional sign;
 * - booleans: `true` and `false` only (`yes`, `on`, `True` are syntax errors, not booleans);
 * - dates and times: datetime objects, reported here by their text (no concept takes one).
 * Duplicate keys are an error for this loader (the parse stage reports them). Recalled from
 * memory of the TOML 1.0.0 specification and CPython 3.11 Lib/tomllib/_parser.py.
 */
import { str, unquoted, type Dialect, type TypedValue } from './types';

const DEC_INT = /^[-+]?(0|[1-9](_?[0-9])*)$/;
const HEX_INT = /^0x[0-9a-fA-F](_?[0-9a-fA-F])*$/;
const OCT_INT = /^0o[0-7](_?[0-7])*$/;
const BIN_INT = /^0b[01](_?[01])*$/;
const FLOAT = /^[-+]?(0|[1-9](_?[0-9])*)((\.[0-9](_?[0-9])*)([eE][-+]?[0-9](_?[0-9])*)?|[eE][-+]?[0-9](_?[0-9])*)$/;
const SPECIAL = /^[-+]?(inf|nan)$/;

/** The typed value of a bare TOML value token; a token that is none of these is read as text. */
export function typeTomlPlain(text: string): TypedValue {
  const s = text.trim();
  if (s === 'true') return { value: true, kind: 'bool' };
  if (s === 'false') return { value: false, kind: 'bool' };
  // Python ints have no negative zero.
  if (DEC_INT.test(s)) return { value: Number(s.replace(/_/g, '')) + 0, kind: 'int' };
  if (HEX_INT.test(s)) return { value: parseInt(s.slice(2).replace(/_/g, ''), 16), kind: 'int' };
  if (OCT_INT.test(s)) return { value: parseInt(s.slice(2).replace(/_/g, ''), 8), kind: 'int' };
  if (BIN_INT.test(s)) return { value: parseInt(s.slice(2).replace(/_/g, ''), 2), kind: 'int' };
  if (FLOAT.test(s)) return { value: Number(s.replace(/_/g, '')), kind: 'float' };
  if (SPECIAL.test(s)) return { value: s.endsWith('nan') ? NaN : s.startsWith('-') ? -Infinity : Infinity, kind: 'float' };
  return str(s);
}

export const tomllibDialect: Dialect = {
  interpret: (raw) => tomllibDialect.typeScalar(raw).value,
  id: 'tomllib',
  title: "TOML read by Python's tomllib (TOML 1.0.0)",
  source: 'recalled from memory of the TOML 1.0.0 specification and CPython 3.11, Lib/tomllib/_parser.py',
  interpolates: false,
  acceptsNonFiniteJson: false,
  jsonCommentsAreErrors: false,
  typeScalar(raw) {
    if (raw.style !== 'plain') return str(unquoted(raw));
    return typeTomlPlain(raw.source);
  },
};
