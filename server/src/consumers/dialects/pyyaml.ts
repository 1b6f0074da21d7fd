/**
 * YAML as PyYAML's safe loader reads it (YAML 1.1 implicit resolvers). Recalled from memory of
 * PyYAML 6.0, yaml/resolver.py:
 * - bool: yes/Yes/YES/no/No/NO/true/True/TRUE/false/False/FALSE/on/On/ON/off/Off/OFF;
 * - int: decimal with `_` separators, 0b binary, 0 octal (`010` is 8), 0x hex, base 60 (`1:30`);
 * - float: needs a dot, and an exponent needs a sign (`1.0e-4`, `.5`, `1.`); `1e-4` and `1.0e4`
 *   stay strings; `_` allowed;
 *   `.inf`, `.nan`;
 * - null: `~`, null/Null/NULL and the empty scalar.
 * Duplicate keys: the last one wins (the located tree already keeps the last).
 */
import { typeTagged } from './generic';
import { str, unquoted, type Dialect, type TypedValue } from './types';

const BOOL_TRUE = /^(yes|Yes|YES|true|True|TRUE|on|On|ON)$/;
const BOOL_FALSE = /^(no|No|NO|false|False|FALSE|off|Off|OFF)$/;
const INT = /^[-+]?(0b[0-1_]+|0[0-7_]+|(0|[1-9][0-9_]*)|0x[0-9a-fA-F_]+|[1-9][0-9_]*(:[0-5]?[0-9])+)$/;
const FLOAT =
  /^([-+]?[0-9][0-9_]*\.[0-9_]*([eE][-+][0-9]+)?|\.[0-9][0-9_]*([eE][-+][0-9]+)?|[-+]?[0-9][0-9_]*(:[0-5]?[0-9])+\.[0-9_]*|[-+]?\.(inf|Inf|INF)|\.(nan|NaN|NAN))$/;

function intValue(s: string): number {
  let t = s.replace(/_/g, '');
  let sign = 1;
  if (t.startsWith('-')) {
    sign = -1;
    t = t.slice(1);
  } else if (t.startsWith('+')) t = t.slice(1);
  if (t === '0') return 0;
  if (t.startsWith('0b')) return sign * parseInt(t.slice(2), 2);
  if (t.startsWith('0x')) return sign * parseInt(t.slice(2), 16);
  if (t.startsWith('0')) return sign * parseInt(t.slice(1), 8);
  if (t.includes(':')) return sign * t.split(':').reduce((acc, part) => acc * 60 + Number(part), 0);
  return sign * Number(t);
}

function floatValue(s: string): number {
  const t = s.replace(/_/g, '').toLowerCase();
  if (t.endsWith('.inf')) return t.startsWith('-') ? -Infinity : Infinity;
  if (t === '.nan') return NaN;
  if (t.includes(':')) {
    const sign = t.startsWith('-') ? -1 : 1;
    const parts = t.replace(/^[-+]/, '').split(':');
    return sign * parts.reduce((acc, part) => acc * 60 + Number(part), 0);
  }
  return Number(t);
}

/** PyYAML's implicit typing of a plain scalar. */
export function typePyyamlPlain(text: string): TypedValue {
  const s = text.trim();
  if (s === '' || s === '~' || /^(null|Null|NULL)$/.test(s)) return { value: null, kind: 'null' };
  if (BOOL_TRUE.test(s)) return { value: true, kind: 'bool' };
  if (BOOL_FALSE.test(s)) return { value: false, kind: 'bool' };
  if (INT.test(s)) return { value: intValue(s), kind: 'int' };
  if (FLOAT.test(s)) return { value: floatValue(s), kind: 'float' };
  return str(s);
}

export const pyyamlDialect: Dialect = {
  interpret: (raw) => pyyamlDialect.typeScalar(raw).value,
  id: 'pyyaml',
  title: 'YAML read by PyYAML (YAML 1.1 implicit types)',
  source: 'recalled from memory of PyYAML 6.0, yaml/resolver.py (implicit resolvers)',
  interpolates: false,
  acceptsNonFiniteJson: false,
  jsonCommentsAreErrors: false,
  typeScalar(raw) {
    if (raw.style !== 'plain') return str(unquoted(raw));
    return typeTagged(raw, typePyyamlPlain) ?? typePyyamlPlain(raw.source);
  },
};
