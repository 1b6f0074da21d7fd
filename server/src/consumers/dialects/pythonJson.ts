/**
 * JSON as Python's json module reads it (json.load): the JSON grammar plus the tokens NaN,
 * Infinity and -Infinity, which json.dump writes for non-finite floats (saved scheduler configs
 * carry them, e.g. a lambda clip of -Infinity). Comments are not part of its grammar: json.load
 * raises on them. Duplicate keys: the last one wins. Recalled from memory of CPython 3.11,
 * Lib/json/decoder.py and Lib/json/scanner.py.
 */
import { typeNonFiniteJsonToken, typeCorePlain } from './generic';
import { str, unquoted, type Dialect } from './types';

export const pythonJsonDialect: Dialect = {
  interpret: (raw) => pythonJsonDialect.typeScalar(raw).value,
  id: 'python-json',
  title: "JSON read by Python's json module (NaN and Infinity allowed, no comments)",
  source: 'recalled from memory of CPython 3.11, Lib/json/decoder.py and Lib/json/scanner.py',
  interpolates: false,
  acceptsNonFiniteJson: true,
  jsonCommentsAreErrors: true,
  typeScalar(raw) {
    if (raw.style !== 'plain') return str(unquoted(raw));
    const s = raw.source.trim();
    const nonFinite = typeNonFiniteJsonToken(s);
    if (nonFinite) return nonFinite;
    if (s === 'true') return { value: true, kind: 'bool' };
    if (s === 'false') return { value: false, kind: 'bool' };
    if (s === 'null') return { value: null, kind: 'null' };
    const t = typeCorePlain(s);
    // Python's json reads integers without a fraction or exponent as int, the rest as float.
    if (t.kind === 'int' || t.kind === 'float') return { value: t.value, kind: /[.eE]/.test(s) ? 'float' : 'int' };
    return str(s);
  },
};
