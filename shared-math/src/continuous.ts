/**
 * Continuous-time families: Karras et al. 2022 sigmas, flow matching (rectified flow) and the
 * resolution shift of log-SNR.
 */
import { checkPositive, checkSampleSteps, describeValue, fail, ok, type MathResult } from './guards';
import { linspace } from './numeric';

/** Karras et al. 2022 defaults (Table 1; recalled from memory). */
export const KARRAS_SIGMA_MIN = 0.002,
  KARRAS_SIGMA_MAX = 80,
  KARRAS_RHO = 7;
/** sigma_data = 0.5, the data standard deviation Karras et al. 2022 assume for images. */
export const SIGMA_DATA_DEFAULT = 0.5;

/**
 * Karras et al. 2022, eq. (5): sigma_i = (smax^(1/rho) + i / (N - 1) (smin^(1/rho) -
 * smax^(1/rho)))^rho for i = 0..N-1, largest first. Defaults smin = 0.002, smax = 80, rho = 7.
 * The endpoints are exactly smax and smin (the formula gives them in exact arithmetic; they are
 * pinned against the round trip through the 1/rho power). N = 1 returns [smax]. No trailing zero
 * is appended. Refuses an infinite sigma max: the spacing is undefined there, which is the case
 * of a zero-terminal-SNR schedule viewed in sigma space.
 */
export function karrasSigmas(
  N: number,
  sigmaMin: number = KARRAS_SIGMA_MIN,
  sigmaMax: number = KARRAS_SIGMA_MAX,
  rho: number = KARRAS_RHO,
): MathResult<Float64Array> {
  if (sigmaMax === Infinity) {
    return fail('Karras sigma spacing is undefined with an infinite sigma max (zero terminal SNR)');
  }
  const problem =
    checkSampleSteps(N) ??
    checkPositive('sigma min', sigmaMin) ??
    checkPositive('sigma max', sigmaMax) ??
    checkPositive('rho', rho) ??
    (sigmaMax < sigmaMin ? `sigma max (${describeValue(sigmaMax)}) must not be below sigma min (${describeValue(sigmaMin)})` : null);
  if (problem !== null) return fail(problem);
  const sigmas = new Float64Array(N);
  if (N === 1) {
    sigmas[0] = sigmaMax;
    return ok(sigmas);
  }
  const maxRoot = Math.pow(sigmaMax, 1 / rho);
  const minRoot = Math.pow(sigmaMin, 1 / rho);
  const ramp = linspace(0, 1, N);
  for (let i = 0; i < N; i++) sigmas[i] = Math.pow(maxRoot + ramp[i]! * (minRoot - maxRoot), rho);
  sigmas[0] = sigmaMax;
  sigmas[N - 1] = sigmaMin;
  return ok(sigmas);
}

/**
 * SNR of noise level sigma for data of standard deviation sigmaData: sigma_data^2 / sigma^2
 * (Karras et al. 2022 setting). sigmaData defaults to 0.5. For a sigma derived from a discrete
 * schedule, sigma = sqrt((1 - abar) / abar), pass sigmaData = 1 to get abar / (1 - abar).
 * Infinity at sigma = 0, 0 at sigma = Infinity; NaN for negative or NaN arguments.
 */
export function snrFromSigma(sigma: number, sigmaData: number = SIGMA_DATA_DEFAULT): number {
  if (!(sigma >= 0) || !(sigmaData > 0) || sigmaData === Infinity) return NaN;
  return (sigmaData * sigmaData) / (sigma * sigma);
}

/**
 * Flow matching / rectified flow, x_t = (1 - t) x0 + t eps: SNR = ((1 - t) / t)^2.
 * 0 at t = 1 (pure noise), Infinity at t = 0; NaN outside [0, 1].
 */
export function flowSnr(t: number): number {
  if (!(t >= 0 && t <= 1)) return NaN;
  const r = (1 - t) / t;
  return r * r;
}

/**
 * Timestep shift of Esser et al. 2024 (rectified-flow transformers): t' = s t / (1 + (s - 1) t).
 * s > 1 moves steps toward noise; in SNR terms it divides SNR by s^2. NaN for t outside [0, 1]
 * or s not a positive finite number.
 */
export function flowTimestepShift(t: number, shift: number): number {
  if (!(t >= 0 && t <= 1) || !(shift > 0) || shift === Infinity) return NaN;
  // The endpoints are fixed points of the shift; keep them exact (float rounding can give 1 + 2^-52).
  if (t === 0 || t === 1) return t;
  return Math.min(1, (shift * t) / (1 + (shift - 1) * t));
}

/**
 * Log-SNR shift for moving from reference resolution r0 to resolution r: 2 ln(r0 / r)
 * (Hoogeboom et al. 2023, simple diffusion; Chen 2023). Negative when r > r0 (a larger image
 * needs more noise for the same effect). NaN unless both are positive finite numbers.
 */
export function resolutionLogSnrShift(referenceResolution: number, resolution: number): number {
  if (checkPositive('reference resolution', referenceResolution) !== null) return NaN;
  if (checkPositive('resolution', resolution) !== null) return NaN;
  return 2 * Math.log(referenceResolution / resolution);
}
