/**
 * Small numeric helpers that mirror the array arithmetic sampling code is usually written with,
 * so that our timesteps agree with it value for value (including round-half-to-even ties).
 */

/**
 * linspace(start, stop, n) with numpy's arithmetic: y_i = i * step + start with
 * step = (stop - start) / (n - 1), and the last value set to stop exactly (numpy.linspace,
 * recalled from memory). n = 1 gives [start].
 */
export function linspace(start: number, stop: number, n: number): Float64Array {
  const out = new Float64Array(n);
  if (n === 1) {
    out[0] = start;
    return out;
  }
  const step = (stop - start) / (n - 1);
  for (let i = 0; i < n; i++) out[i] = i * step + start;
  out[n - 1] = stop;
  return out;
}

/**
 * Round half to even (banker's rounding), the rule numpy's round uses. Chosen over Math.round
 * (half up) so spacings with exact ties, such as trailing with T = 1000 and N = 16 (937.5), land
 * where array code puts them.
 */
export function roundHalfEven(x: number): number {
  if (!Number.isFinite(x)) return x;
  const f = Math.floor(x);
  const d = x - f;
  if (d > 0.5) return f + 1;
  if (d < 0.5) return f;
  return f % 2 === 0 ? f : f + 1;
}

/**
 * Neumaier (improved Kahan) compensated running sum: used for the sum of log1p(-beta) so the
 * cumulative product stays accurate to a few ulps over 100000 steps.
 */
export class CompensatedSum {
  private sum = 0;
  private compensation = 0;

  add(term: number): void {
    if (!Number.isFinite(term) || !Number.isFinite(this.sum)) {
      // -Infinity (a beta of exactly 1) or NaN propagate as in a plain sum.
      this.sum += term;
      this.compensation = 0;
      return;
    }
    const t = this.sum + term;
    if (Math.abs(this.sum) >= Math.abs(term)) this.compensation += this.sum - t + term;
    else this.compensation += term - t + this.sum;
    this.sum = t;
  }

  get value(): number {
    return this.sum + this.compensation;
  }
}
