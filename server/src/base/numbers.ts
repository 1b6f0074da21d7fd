/**
 * Every number the tool shows (messages, hover, inlay hints, explain, plots' labels) is spelled
 * here, so zero, NaN and the infinities read the same everywhere.
 * fmt: messages, 2-3 significant digits, never misleading (0.068265 -> "0.068", 0.004682 -> "4.7e-3").
 * fmtDigits: a fixed number of significant digits (tables, hover, explain).
 */

/** The spelling of the values that are not ordinary numbers, or null for an ordinary one. */
export function specialNumber(x: number): string | null {
  if (Number.isNaN(x)) return 'NaN';
  if (x === Infinity) return 'infinity';
  if (x === -Infinity) return '-infinity';
  if (x === 0) return '0';
  return null;
}

/**
 * `digits` significant digits; plain notation for magnitudes in [plainFrom, plainTo), exponent
 * form ("4.68e-3") outside. Without a range, JavaScript's own choice of notation.
 */
export function fmtDigits(x: number, digits: number, plainFrom?: number, plainTo?: number): string {
  const special = specialNumber(x);
  if (special !== null) return special;
  if (plainFrom === undefined || plainTo === undefined) return String(Number(x.toPrecision(digits)));
  const abs = Math.abs(x);
  if (abs >= plainFrom && abs < plainTo) return String(Number(x.toPrecision(digits)));
  const [mantissa, exp] = x.toExponential(digits - 1).split('e');
  return `${String(Number(mantissa))}e${Number(exp)}`;
}

/** Formats a number for a message. Integers below 1e6 print whole. */
export function fmt(x: number): string {
  const special = specialNumber(x);
  if (special !== null) return special;
  const a = Math.abs(x);
  if (Number.isInteger(x) && a < 1e6) return String(x);
  if (a >= 1e6 || a < 0.01) return trimExponent(x.toExponential(1));
  if (a >= 100) return String(Math.round(x));
  if (a >= 1) return trimFixed(x.toPrecision(3));
  // Below 1: two digits, more when two would round up to a misleading 1 or lose the value.
  for (let digits = 2; digits <= 6; digits++) {
    const s = trimFixed(x.toPrecision(digits));
    if (Math.abs(Number(s)) !== 1) return s;
  }
  return trimFixed(x.toPrecision(6));
}

/** Formats a number for a fix or a value written back into a file: enough digits to round-trip closely. */
export function fmtValue(x: number): number {
  if (!Number.isFinite(x) || Number.isInteger(x)) return x;
  return Number(x.toPrecision(6));
}

function trimFixed(s: string): string {
  if (!s.includes('.') || s.includes('e')) return s;
  return s.replace(/0+$/, '').replace(/\.$/, '');
}

function trimExponent(s: string): string {
  // "4.0e-5" -> "4e-5", "1.2e+7" -> "1.2e7"
  const [mantissa, exponent] = s.split('e');
  const m = mantissa!.includes('.') ? mantissa!.replace(/0+$/, '').replace(/\.$/, '') : mantissa;
  return `${m}e${exponent!.replace(/^\+/, '')}`;
}

/** "1 step" / "8 steps" */
export function plural(n: number, word: string): string {
  return `${fmt(n)} ${word}${n === 1 ? '' : 's'}`;
}

/** First few values of a list, e.g. "901, 801, 701, ..., 1". */
export function fmtList(values: readonly number[], head = 3): string {
  if (values.length <= head + 1) return values.map(fmt).join(', ');
  return `${values.slice(0, head).map(fmt).join(', ')}, ..., ${fmt(values[values.length - 1]!)}`;
}
