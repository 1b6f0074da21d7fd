import { fmtDigits } from '../base/numbers';

/** Short number spellings for editor surfaces (hover, inlay hints): 0.0683, 4.7e-3, 0, -infinity. */
export function shortNumber(x: number, digits = 3): string {
  return fmtDigits(x, digits, 1e-2, 1e5);
}
