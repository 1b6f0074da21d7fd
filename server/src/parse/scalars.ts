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

/** YAML 1.2 core schema resolution of a plain scalar's text. */
export function resolveCorePlain(source: string): ScalarValue {
  const s = source.trim();
  if (s === '' || s === '~' || /^(null|Null|NULL)$/.test(s)) return null;
  if (/^(true|True|TRUE)$/.test(s)) return true;
  if (/^(false|False|FALSE)$/.test(s)) return false;
  if (/^[-+]?[0-9]+$/.test(s)) return Number(s);
  if (/^0o[0-7]+$/.test(s)) return parseInt(s.slice(2), 8);
  if (/^0x[0-9a-fA-F]+$/.test(s)) return parseInt(s.slice(2), 16);
  if (/^[-+]?(\.[0-9]+|[0-9]+(\.[0-9]*)?)([eE][-+]?[0-9]+)?$/.test(s)) return Number(s);
  if (/^[-+]?\.(inf|Inf|INF)$/.test(s)) return s.startsWith('-') ? -Infinity : Infinity;
  if (/^\.(nan|NaN|NAN)$/.test(s)) return NaN;
  return s;
}
