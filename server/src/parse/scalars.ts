/**
 * What a raw scalar means. Every reader of parse/ (the fast YAML reader, the exact YAML reader, and
 * whoever reads values later) hands each scalar's source text, style and decoded text to one
 * function, so that the typing rules (YAML 1.2 core schema today; another loader's rules when a
 * caller passes its own interpreter) live in one place and not in a parser.
 */
import type { ScalarValue } from './types';

export interface RawScalar {
  /** The scalar as written, quotes included for quoted styles. */
  source: string;
  style: 'plain' | 'single' | 'double' | 'block';
  /** An explicit tag as written (`!!str`, `!local`), if any. */
  tag?: string;
  /**
   * The text after the reader removed quotes, applied escapes and folded line breaks (for a plain
   * scalar written over several lines, its folded text). Absent when it equals `source`.
   */
  decoded?: string;
}

/** Turns a raw scalar into its value. Must be pure: the same raw scalar always gives the same value. */
export type ScalarInterpreter = (raw: RawScalar) => ScalarValue;

/** YAML 1.2 core schema (YAML 1.2.2, section 10.3.2): plain scalars are typed, quoted ones are strings. */
export const coreScalar: ScalarInterpreter = (raw) =>
  raw.style === 'plain' ? resolveCorePlain(raw.decoded ?? raw.source) : (raw.decoded ?? raw.source);

// The core schema's patterns, made once: a regular expression literal inside the function would
// be a new object for every scalar of every file.
const CORE_NULL = /^(null|Null|NULL)$/;
const CORE_TRUE = /^(true|True|TRUE)$/;
const CORE_FALSE = /^(false|False|FALSE)$/;
const CORE_INT = /^[-+]?[0-9]+$/;
const CORE_OCTAL = /^0o[0-7]+$/;
const CORE_HEX = /^0x[0-9a-fA-F]+$/;
const CORE_FLOAT = /^[-+]?(\.[0-9]+|[0-9]+(\.[0-9]*)?)([eE][-+]?[0-9]+)?$/;
const CORE_INF = /^[-+]?\.(inf|Inf|INF)$/;
const CORE_NAN = /^\.(nan|NaN|NAN)$/;

/** YAML 1.2 core schema resolution of a plain scalar's text. */
export function resolveCorePlain(source: string): ScalarValue {
  const s = source.trim();
  if (s === '' || s === '~' || CORE_NULL.test(s)) return null;
  if (CORE_TRUE.test(s)) return true;
  if (CORE_FALSE.test(s)) return false;
  if (CORE_INT.test(s)) return Number(s);
  if (CORE_OCTAL.test(s)) return parseInt(s.slice(2), 8);
  if (CORE_HEX.test(s)) return parseInt(s.slice(2), 16);
  if (CORE_FLOAT.test(s)) return Number(s);
  if (CORE_INF.test(s)) return s.startsWith('-') ? -Infinity : Infinity;
  if (CORE_NAN.test(s)) return NaN;
  return s;
}
