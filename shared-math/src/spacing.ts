/**
 * Sampling timesteps: which training steps a sampler with N steps visits, noisiest first
 * (DESIGN section 4; the three named spacings are compared in Lin et al. 2023, Table 2).
 * Values are raw: nothing is clamped, so a rule can report a timestep outside [0, T - 1]
 * (leading with offset 1 and N = T gives T; trailing with N > T gives -1).
 */
import { checkSampleSteps, checkTrainSteps, describeValue, fail, ok, type MathResult } from './guards';
import { linspace, roundHalfEven } from './numeric';

export type SpacingKind = 'leading' | 'linspace' | 'trailing' | 'uniform' | 'quadratic';

export const SPACING_KINDS: readonly SpacingKind[] = ['leading', 'linspace', 'trailing', 'uniform', 'quadratic'];

/**
 * Fraction of T spanned by the quadratic spacing of Song et al. 2020 (DDIM):
 * floor(linspace(0, sqrt(0.8 T), N)^2). The 0.8 is recalled from memory: a documented default.
 */
export const QUADRATIC_SPACING_FRACTION = 0.8;

/**
 * Raw sampling timesteps, noisiest first (code indices, 0-based). Validates T in [2, 100000],
 * N an integer in [1, 100000] (N > T is computed, not refused) and stepsOffset a safe integer.
 *
 * - leading: ratio = floor(T / N); (0..N-1) * ratio, reversed, plus stepsOffset.
 * - uniform: the same as leading (stride floor(T / N), plus stepsOffset).
 * - linspace: round(linspace(0, T - 1, N)), reversed.
 * - trailing: round(arange(T, 0, -T / N)) - 1.
 * - quadratic (Song et al. 2020): floor(linspace(0, sqrt(0.8 T), N)^2) + stepsOffset, reversed.
 *
 * stepsOffset applies to leading, uniform and quadratic only. Rounding is half to even (as numpy
 * rounds). Trailing follows numpy's float arange, whose values are start, fl(start + step), then
 * start + k * (fl(start + step) - start) (recalled from memory), so ties such as T = 1000, N = 48 (937.4999...) round as array code
 * does. numpy's arange length, ceil(T / (T / N)), can come out as N + 1 through round-off; this
 * function always returns exactly N values (the first N of that arange).
 */
export function samplingTimesteps(spacing: SpacingKind, T: number, N: number, stepsOffset = 0): MathResult<number[]> {
  const problem =
    checkTrainSteps(T) ??
    checkSampleSteps(N) ??
    (Number.isSafeInteger(stepsOffset) ? null : `steps offset must be an integer, got ${describeValue(stepsOffset)}`);
  if (problem !== null) return fail(problem);
  const out = new Array<number>(N);
  switch (spacing) {
    case 'leading':
    case 'uniform': {
      const ratio = Math.floor(T / N);
      for (let k = 0; k < N; k++) out[k] = (N - 1 - k) * ratio + stepsOffset;
      return ok(out);
    }
    case 'linspace': {
      const grid = linspace(0, T - 1, N);
      for (let k = 0; k < N; k++) out[k] = roundHalfEven(grid[N - 1 - k]!);
      return ok(out);
    }
    case 'trailing': {
      const second = T + -(T / N);
      const delta = second - T;
      for (let k = 0; k < N; k++) {
        const value = k === 0 ? T : k === 1 ? second : T + k * delta;
        out[k] = roundHalfEven(value) - 1;
      }
      return ok(out);
    }
    case 'quadratic': {
      const grid = linspace(0, Math.sqrt(QUADRATIC_SPACING_FRACTION * T), N);
      for (let k = 0; k < N; k++) {
        const g = grid[N - 1 - k]!;
        out[k] = Math.floor(g * g) + stepsOffset;
      }
      return ok(out);
    }
    default:
      return fail(`unknown timestep spacing ${describeValue(spacing)}`);
  }
}
