/**
 * The generic reading: YAML 1.2 core schema for YAML, the JSON grammar for JSON (with NaN and
 * Infinity read as numbers so that a saved config never loses its other values). The fallback
 * for documents whose loader cannot be told.
 */
import { str, unquoted, type Dialect, type RawScalar, type TypedValue } from './types';

const CORE_TAG = 'tag:yaml.org,2002:';

/** YAML 1.2 core schema resolution of a plain scalar (YAML 1.2.2, section 10.3.2). */
export function typeCorePlain(text: string): TypedValue {
  const s = text.trim();
  if (s === '' || s === '~' || /^(null|Null|NULL)$/.test(s)) return { value: null, kind: 'null' };
  if (/^(true|True|TRUE)$/.test(s)) return { value: true, kind: 'bool' };
  if (/^(false|False|FALSE)$/.test(s)) return { value: false, kind: 'bool' };
  if (/^[-+]?[0-9]+$/.test(s)) return { value: Number(s), kind: 'int' };
  if (/^0o[0-7]+$/.test(s)) return { value: parseInt(s.slice(2), 8), kind: 'int' };
  if (/^0x[0-9a-fA-F]+$/.test(s)) return { value: parseInt(s.slice(2), 16), kind: 'int' };
  if (/^[-+]?(\.[0-9]+|[0-9]+(\.[0-9]*)?)([eE][-+]?[0-9]+)?$/.test(s)) return { value: Number(s), kind: 'float' };
  if (/^[-+]?\.(inf|Inf|INF)$/.test(s)) return { value: s.startsWith('-') ? -Infinity : Infinity, kind: 'float' };
  if (/^\.(nan|NaN|NAN)$/.test(s)) return { value: NaN, kind: 'float' };
  return str(s);
}

/** JSON's bare non-finite tokens (not JSON, but written by Python's json module). */
export function typeNonFiniteJsonToken(text: string): TypedValue | null {
  const s = text.trim();
  if (s === 'NaN') return { value: NaN, kind: 'float' };
  if (s === 'Infinity') return { value: Infinity, kind: 'float' };
  if (s === '-Infinity') return { value: -Infinity, kind: 'float' };
  return null;
}

/** An explicit core tag on a plain scalar (`!!str 1e-4`, `!!float 1`). */
export function typeTagged(raw: RawScalar, plain: (text: string) => TypedValue): TypedValue | null {
  const tag = raw.tag?.startsWith('!!') ? `${CORE_TAG}${raw.tag.slice(2)}` : raw.tag;
  if (!tag || !tag.startsWith(CORE_TAG)) return null;
  const text = raw.style === 'plain' ? raw.source.trim() : unquoted(raw);
  switch (tag.slice(CORE_TAG.length)) {
    case 'str':
      return str(text);
    case 'int': {
      const t = plain(text);
      return t.kind === 'int' ? t : str(text);
    }
    case 'float': {
      const t = plain(text);
      return t.kind === 'int' || t.kind === 'float' ? { value: t.value, kind: 'float' } : str(text);
    }
    case 'bool': {
      const t = plain(text);
      return t.kind === 'bool' ? t : str(text);
    }
    case 'null':
      return { value: null, kind: 'null' };
    default:
      return null;
  }
}

export const genericDialect: Dialect = {
  interpret: (raw) => genericDialect.typeScalar(raw).value,
  id: 'generic',
  title: 'generic reading (YAML 1.2 core schema / JSON)',
  source: 'YAML 1.2.2 specification, section 10.3 (core schema); RFC 8259 (JSON)',
  interpolates: false,
  acceptsNonFiniteJson: true,
  jsonCommentsAreErrors: false,
  typeScalar(raw) {
    if (raw.style !== 'plain') return str(unquoted(raw));
    return typeTagged(raw, typeCorePlain) ?? typeNonFiniteJsonToken(raw.source) ?? typeCorePlain(raw.source);
  },
};
