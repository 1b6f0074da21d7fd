/** Short number spellings for editor surfaces (hover, inlay hints): 0.0683, 4.7e-3, 0, -inf. */
export function shortNumber(x: number, digits = 3): string {
  if (x === 0) return '0';
  if (Number.isNaN(x)) return 'n/a';
  if (!Number.isFinite(x)) return x > 0 ? 'inf' : '-inf';
  const abs = Math.abs(x);
  if (abs >= 1e-2 && abs < 1e5) return String(Number(x.toPrecision(digits)));
  const [mantissa, exp] = x.toExponential(digits - 1).split('e');
  return `${mantissa}e${Number(exp)}`;
}
