/**
 * Input guards shared by every formula (DESIGN section 4, "Guard every input"). A guard returns
 * null when the value is fine, else one line naming the value; nothing here allocates in
 * proportion to its input, so a hostile T such as 1e12 is refused in constant time.
 */

/** Either a value or a one-line problem that a rule can show as it is. */
export type MathResult<T> = { ok: true; value: T } | { ok: false; problem: string };

/** Bounds on the number of discrete training timesteps T (project limits, DESIGN section 4). */
export const TRAIN_STEPS_MIN = 2,
  TRAIN_STEPS_MAX = 100000;
/** Bounds on the number of sampling steps N (project limits, DESIGN section 4). */
export const SAMPLE_STEPS_MIN = 1,
  SAMPLE_STEPS_MAX = 100000;

export function ok<T>(value: T): MathResult<T> {
  return { ok: true, value };
}

export function fail<T>(problem: string): MathResult<T> {
  return { ok: false, problem };
}

/** Short, single-line rendering of any value for a problem message. */
export function describeValue(v: unknown): string {
  if (typeof v === 'number') return Object.is(v, -0) ? '-0' : String(v);
  if (v === undefined) return 'nothing';
  if (v === null) return 'null';
  if (typeof v === 'string') {
    const oneLine = v.replace(/[\r\n\t]+/g, ' ');
    return JSON.stringify(oneLine.length > 40 ? `${oneLine.slice(0, 40)}...` : oneLine);
  }
  if (typeof v === 'boolean' || typeof v === 'bigint') return String(v);
  if (Array.isArray(v)) return 'a list';
  return `a ${typeof v}`;
}

function integerInRange(name: string, v: unknown, min: number, max: number): string | null {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < min || v > max) {
    return `${name} must be an integer in [${min}, ${max}], got ${describeValue(v)}`;
  }
  return null;
}

/** T: integer in [2, 100000]. Larger values are refused before anything is allocated. */
export function checkTrainSteps(T: unknown): string | null {
  return integerInRange('train steps', T, TRAIN_STEPS_MIN, TRAIN_STEPS_MAX);
}

/** N: integer in [1, 100000]. N > T is allowed here (a rule reports it); only memory is guarded. */
export function checkSampleSteps(N: unknown): string | null {
  return integerInRange('sampling steps', N, SAMPLE_STEPS_MIN, SAMPLE_STEPS_MAX);
}

/** A beta endpoint (betaStart / betaEnd): finite, > 0 and <= 1. */
export function checkBetaBound(name: string, v: unknown): string | null {
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0 || v > 1) {
    return `${name} must be a finite number in (0, 1], got ${describeValue(v)}`;
  }
  return null;
}

/** A strictly positive finite number (sigma, shift, resolution, rho). */
export function checkPositive(name: string, v: unknown): string | null {
  if (typeof v !== 'number' || !Number.isFinite(v) || v <= 0) {
    return `${name} must be a finite number > 0, got ${describeValue(v)}`;
  }
  return null;
}

/**
 * Validates a beta list: null when fine, else one line naming the first bad index and value.
 * Every beta must be a finite number in (0, 1]; exactly 1 is allowed only at the last step (a
 * zero-terminal-SNR schedule, Lin et al. 2023), since 1 earlier would zero every later abar.
 */
export function checkBetas(betas: ArrayLike<number>): string | null {
  const n = betas == null ? 0 : betas.length;
  if (typeof n !== 'number' || !Number.isInteger(n) || n < 1) return 'the beta list is empty';
  if (n > TRAIN_STEPS_MAX) {
    return `the beta list has ${n} entries; at most ${TRAIN_STEPS_MAX} are supported`;
  }
  for (let i = 0; i < n; i++) {
    const b: unknown = betas[i];
    if (typeof b !== 'number' || !Number.isFinite(b)) {
      return `beta[${i}] = ${describeValue(b)} is not a finite number`;
    }
    if (b <= 0 || b > 1) return `beta[${i}] = ${describeValue(b)} is outside (0, 1]`;
    if (b === 1 && i !== n - 1) {
      return `beta[${i}] = 1 before the last step (index ${n - 1}) removes all signal early`;
    }
  }
  return null;
}
