/** Writing scalar values the way the file writes them. */
import type { SourceFormat } from '../parse/types';

export type QuoteStyle = 'plain' | 'single' | 'double';

export interface NumberContext {
  format: SourceFormat;
  /** Raw text of the number being replaced, if any: its notation is kept. */
  oldRaw?: string | null;
  integer: boolean;
}

/** Shortest text for `n`, rounded to 12 significant digits when that drops float noise. */
function compact(n: number): string {
  const s = String(n);
  if (s.replace(/^-|e.*$|\./g, '').replace(/^0+/, '').length <= 12) return s;
  return String(Number(n.toPrecision(12)));
}

/**
 * A finite number as config text. In YAML an exponent is written with a mantissa dot and a signed
 * exponent (`1.0e-4`): YAML 1.1 loaders read `1e-4` as a string (fact of the YAML 1.1 float
 * grammar), YAML 1.2 and JSON read both forms.
 */
export function formatNumber(n: number, ctx: NumberContext): string | null {
  if (!Number.isFinite(n)) return null;
  if (Object.is(n, -0)) n = 0;
  if (ctx.integer) return Number.isInteger(n) ? String(n) : null;
  const old = ctx.oldRaw?.trim().replace(/^['"]|['"]$/g, '') ?? null;
  const oldExp = old !== null && /^[-+]?(\d+\.?\d*|\.\d+)[eE][-+]?\d+$/.test(old);
  const oldDot = old !== null && old.includes('.');
  let s: string;
  if (oldExp && n !== 0 && Math.abs(n) < 1e-2) {
    s = exponential(n, old.includes('.'), /[eE][-+]0\d/.test(old));
  } else {
    s = compact(n);
    if (s.includes('e')) {
      s = exponential(n, true, false);
    } else if (Number.isInteger(n) && (old === null || oldDot)) {
      // A float concept keeps looking like a float: 1.0, not 1.
      s = `${s}.0`;
    }
  }
  return s;
}

function exponential(n: number, keepDot: boolean, padExponent: boolean): string {
  let [mantissa, exponent] = Number(n.toPrecision(12)).toExponential().split('e');
  if (!mantissa!.includes('.') && keepDot) mantissa += '.0';
  const sign = exponent!.startsWith('-') ? '-' : '+';
  let digits = exponent!.replace(/^[-+]/, '');
  if (padExponent && digits.length < 2) digits = `0${digits}`;
  return `${mantissa}e${sign}${digits}`;
}

/** The way a boolean is spelled in this file (`true`, `True` or `TRUE`); JSON is always lower case. */
export function formatBoolean(b: boolean, spelling: 'lower' | 'title' | 'upper'): string {
  const s = b ? 'true' : 'false';
  if (spelling === 'title') return s[0]!.toUpperCase() + s.slice(1);
  if (spelling === 'upper') return s.toUpperCase();
  return s;
}

const YAML_RESERVED = /^(true|false|yes|no|on|off|y|n|null|~|nan|\.nan|inf|\.inf|-\.inf)$/i;

/** True when `s` can be written as a YAML plain scalar and reads back as the same string. */
export function isPlainSafe(s: string): boolean {
  return /^[A-Za-z_][A-Za-z0-9_.+-]*$/.test(s) && !YAML_RESERVED.test(s);
}

/** A string in the requested quoting (plain falls back to double quotes when it must). */
export function formatString(s: string, format: SourceFormat, quote: QuoteStyle): string {
  // A TOML literal string has no escapes: it cannot hold a quote or a control character.
  if (format === 'toml') return quote === 'single' && /^[^'\u0000-\u001f\u007f]*$/.test(s) ? `'${s}'` : JSON.stringify(s);
  if (format !== 'yaml') return JSON.stringify(s);
  if (quote === 'single') return `'${s.replace(/'/g, "''")}'`;
  if (quote === 'plain' && isPlainSafe(s)) return s;
  return JSON.stringify(s);
}

/** Wraps already formatted text in the quotes of the value it replaces (YAML, JSON, TOML). */
export function requote(text: string, quote: QuoteStyle): string {
  if (quote === 'double') return JSON.stringify(text);
  if (quote === 'single') return `'${text.replace(/'/g, "''")}'`;
  return text;
}
