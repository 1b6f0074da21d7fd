/**
 * Discrete beta schedules (code indices i = 0..T-1; papers often count t = 1..T).
 * Each builder validates T and its parameters first (no allocation on a refused T) and checks
 * the finished list with checkBetas, so a returned schedule is always usable.
 */
import { checkBetaBound, checkBetas, checkTrainSteps, describeValue, fail, ok, type MathResult } from './guards';
import { linspace } from './numeric';

/** Ho et al. 2020 defaults for the linear schedule (beta 1e-4 -> 0.02 over T = 1000). */
export const LINEAR_BETA_START = 1e-4,
  LINEAR_BETA_END = 0.02,
  LINEAR_TRAIN_STEPS = 1000;
/** Nichol & Dhariwal 2021 cosine schedule: offset s = 0.008 and the 0.999 cap on beta. */
export const COSINE_OFFSET = 0.008,
  COSINE_MAX_BETA = 0.999;
/** Range of the sigmoid schedule's input, sigmoid(linspace(-6, 6, T)) (common practice). */
export const SIGMOID_RANGE = 6;

function checkEndpoints(T: number, b0: number, b1: number): string | null {
  return checkTrainSteps(T) ?? checkBetaBound('beta start', b0) ?? checkBetaBound('beta end', b1);
}

function finish(betas: Float64Array): MathResult<Float64Array> {
  const problem = checkBetas(betas);
  return problem === null ? ok(betas) : fail(problem);
}

/**
 * Linear schedule (Ho et al. 2020, experiments section; recalled from memory): beta_i = b0 + (b1 - b0) * i / (T - 1).
 * Computed as linspace(b0, b1, T), so beta_0 = b0 and beta_{T-1} = b1 exactly.
 */
export function linearBetas(T: number, b0: number, b1: number): MathResult<Float64Array> {
  const problem = checkEndpoints(T, b0, b1);
  if (problem !== null) return fail(problem);
  return finish(linspace(b0, b1, T));
}

/**
 * "Scaled linear" schedule, linear in sqrt(beta) (common practice for latent models):
 * beta_i = (sqrt(b0) + (sqrt(b1) - sqrt(b0)) * i / (T - 1))^2.
 */
export function scaledLinearBetas(T: number, b0: number, b1: number): MathResult<Float64Array> {
  const problem = checkEndpoints(T, b0, b1);
  if (problem !== null) return fail(problem);
  const roots = linspace(Math.sqrt(b0), Math.sqrt(b1), T);
  const betas = new Float64Array(T);
  for (let i = 0; i < T; i++) betas[i] = roots[i]! * roots[i]!;
  return finish(betas);
}

/**
 * Cosine schedule (Nichol & Dhariwal 2021, eq. 17, recalled from memory):
 * abar(t) = f(t) / f(0), f(t) = cos^2(((t / T + s) / (1 + s)) * pi / 2),
 * beta_i = min(1 - abar(i + 1) / abar(i), maxBeta). Defaults s = 0.008, maxBeta = 0.999.
 * maxBeta = 1 leaves the last beta at 1 - f(T)/f(T-1), which rounds to exactly 1.
 */
export function cosineBetas(T: number, s: number = COSINE_OFFSET, maxBeta: number = COSINE_MAX_BETA): MathResult<Float64Array> {
  const problem =
    checkTrainSteps(T) ??
    (typeof s !== 'number' || !Number.isFinite(s) || s < 0 ? `cosine offset must be a finite number >= 0, got ${describeValue(s)}` : null) ??
    checkBetaBound('maximum beta', maxBeta);
  if (problem !== null) return fail(problem);
  const f = (t: number): number => {
    const c = Math.cos(((t / T + s) / (1 + s)) * (Math.PI / 2));
    return c * c;
  };
  const betas = new Float64Array(T);
  let previous = f(0);
  for (let i = 0; i < T; i++) {
    const next = f(i + 1);
    // f(0) cancels in abar(i + 1) / abar(i).
    betas[i] = Math.min(1 - next / previous, maxBeta);
    previous = next;
  }
  return finish(betas);
}

/**
 * Sigmoid schedule (common practice): beta_i = sigmoid(x_i) * (b1 - b0) + b0 with
 * x = linspace(-6, 6, T).
 */
export function sigmoidBetas(T: number, b0: number, b1: number): MathResult<Float64Array> {
  const problem = checkEndpoints(T, b0, b1);
  if (problem !== null) return fail(problem);
  const x = linspace(-SIGMOID_RANGE, SIGMOID_RANGE, T);
  const betas = new Float64Array(T);
  for (let i = 0; i < T; i++) betas[i] = (1 / (1 + Math.exp(-x[i]!))) * (b1 - b0) + b0;
  return finish(betas);
}
