/**
 * Checks a computed number against a value printed in a table, to the digits the table prints:
 * `printed` = "0.068265" passes for any x within half a unit of its last printed digit.
 */
import { expect } from 'vitest';

export function unitOfLastDigit(printed: string): number {
  const m = /^-?\d+(?:\.(\d+))?(?:e([+-]?\d+))?$/i.exec(printed.trim());
  if (m === null) throw new Error(`not a printed number: ${printed}`);
  const decimals = m[1]?.length ?? 0;
  const exponent = m[2] === undefined ? 0 : Number(m[2]);
  return 10 ** (exponent - decimals);
}

/** x rounds to `printed` at the printed precision (with 1e-9 of a unit for binary round-off). */
export function expectPrinted(x: number, printed: string): void {
  const tolerance = unitOfLastDigit(printed) * (0.5 + 1e-9);
  const diff = Math.abs(x - Number(printed));
  expect(diff, `${x} should print as ${printed}`).toBeLessThanOrEqual(tolerance);
}

/** Relative closeness, |x - y| <= rel * |y| (exact match required when y is 0). */
export function expectRelative(x: number, y: number, rel: number, label = ''): void {
  const diff = Math.abs(x - y);
  expect(diff, `${label} ${x} vs ${y}`).toBeLessThanOrEqual(rel * Math.abs(y));
}
