/**
 * Zero terminal SNR (Lin et al. 2023, "Common Diffusion Noise Schedules and Sample Steps are
 * Flawed", Algorithm 1).
 */
import { checkBetas, checkTrainSteps, fail, ok, type MathResult } from './guards';
import { alphaBarFromBetas } from './snr';

/**
 * Lin et al. 2023, Algorithm 1: with a = sqrt(abar), shift and scale so the last amplitude is 0
 * and the first is kept, a <- (a - a_last) * a_0 / (a_0 - a_last); then abar = a^2,
 * alpha_i = abar_i / abar_{i-1} (alpha_0 = abar_0) and beta = 1 - alpha.
 *
 * Exactness: the last beta is exactly 1 (a_last - a_last is exactly 0 in floating point, so
 * abar_last is 0 and alpha_last is 0). The first step is a fixed point of the algorithm; since
 * (a_0 - a_last) * a_0 / (a_0 - a_last) can round off by an ulp, beta_0 is copied from the input,
 * which keeps abar_0 bit-for-bit unchanged.
 * Refuses invalid betas, T outside [2, 100000], and a list whose first and last amplitudes are
 * equal (nothing to rescale against).
 */
export function rescaleZeroTerminalSnr(betas: ArrayLike<number>): MathResult<Float64Array> {
  const problem = checkBetas(betas) ?? checkTrainSteps(betas.length);
  if (problem !== null) return fail(problem);
  const T = betas.length;
  const abar = alphaBarFromBetas(betas);
  const first = Math.sqrt(abar[0]!);
  const last = Math.sqrt(abar[T - 1]!);
  if (!(first > last)) {
    return fail('cannot rescale to zero terminal SNR: the first and last signal amplitudes are equal');
  }
  const scale = first / (first - last);
  const out = new Float64Array(T);
  out[0] = betas[0]!;
  let previous = abar[0]!;
  for (let i = 1; i < T; i++) {
    const amplitude = (Math.sqrt(abar[i]!) - last) * scale;
    const current = amplitude * amplitude;
    out[i] = 1 - current / previous;
    previous = current;
  }
  const outProblem = checkBetas(out);
  if (outProblem !== null) return fail(`rescaling to zero terminal SNR gave an invalid schedule: ${outProblem}`);
  return ok(out);
}
