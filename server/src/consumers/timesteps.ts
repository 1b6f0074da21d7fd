/**
 * Sampling timesteps as a consumer derives them, where that differs from the standard spacings of
 * shared-math (DESIGN section 4). Each rule names the code it follows.
 */
import { karrasSigmas, respacedTimesteps, samplingTimesteps, type ReadonlyFloat64Array } from '@noiselint/shared-math';
import type { TimestepSpacing } from '../fields/concepts';
import type { TimestepRule } from './types';

export type TimestepsResult = { ok: true; value: number[] } | { ok: false; problem: string };

/**
 * - 'n-plus-one' (multistep DPM-Solver, UniPC, single-step DPM-Solver set_timesteps, diffusers
 *   0.30): linspace: round(linspace(0, T - 1, N + 1)) reversed, last dropped; leading: stride
 *   floor(T / (N + 1)), (0..N) * stride reversed, last dropped, plus the offset; trailing as
 *   standard.
 * - 'ldm-ddim' (latent-diffusion ldm/modules/diffusionmodules/util.py make_ddim_timesteps,
 *   "uniform"): c = floor(T / N), range(0, T, c) + 1, noisiest first (recalled from memory): the
 *   first step is never T - 1 unless c = 1, and T = 1000, N = 30 gives 31 steps.
 * - 'even-from-last' (config-object code, sgm/modules/diffusionmodules/discretizer.py,
 *   LegacyDDPMDiscretization.get_sigmas with generate_roughly_equally_spaced_steps): for N < T the
 *   steps are linspace(T - 1, 0, N, endpoint=False) truncated to integers, i.e. trunc((T - 1) +
 *   k (0 - (T - 1)) / N) for k = 0..N-1 (numpy's linspace computes k * step + start), noisiest
 *   first after the code's flip; N = T is every step; N > T raises ValueError in that code.
 *   The spacing is ignored: the class takes none.
 * - 'respaced' (improved-diffusion / guided-diffusion respace.py space_timesteps): the steps kept
 *   by the respacing string, noisiest first (shared-math respacedTimesteps).
 * - 'lcm' (the latent consistency scheduler, diffusers scheduling_lcm.py LCMScheduler.set_timesteps,
 *   read in a stored copy of the library): with O = original_inference_steps and k = floor(T / O),
 *   the grid is (1..O) * k - 1, noisiest first, and the N steps are the grid's entries at indices
 *   floor(j * (O / N)) for j = 0..N-1 (numpy's linspace(0, O, N, endpoint=False), floored). So the
 *   first step is O * k - 1, which is T - 1 only when O divides T. The spacing and the offset are
 *   not used. O > T and N > O raise ValueError in that code.
 * - otherwise the standard spacings.
 */
export function consumerTimesteps(
  rule: TimestepRule,
  spacing: TimestepSpacing,
  T: number,
  N: number,
  offset: number,
  respacing?: string,
  originalSteps?: number,
): TimestepsResult {
  if (rule === 'lcm') {
    // The consumer summary always carries the grid for this rule (the file's, else the class default).
    return originalSteps === undefined ? { ok: false, problem: 'the original_inference_steps grid is unknown' } : lcmTimesteps(T, N, originalSteps);
  }
  if (rule === 'respaced' && respacing !== undefined) {
    const kept = respacedTimesteps(T, respacing);
    return kept.ok ? { ok: true, value: kept.value } : kept;
  }
  const standard = samplingTimesteps(spacing, T, N, offset);
  if (!standard.ok) return standard;
  if (rule === 'n-plus-one' && (spacing === 'linspace' || spacing === 'leading')) {
    const out: number[] = [];
    if (spacing === 'linspace') {
      for (let k = N; k >= 1; k--) out.push(Math.round((k * (T - 1)) / N));
    } else {
      const stride = Math.floor(T / (N + 1));
      for (let k = N; k >= 1; k--) out.push(k * stride + offset);
    }
    return { ok: true, value: out };
  }
  if (rule === 'even-from-last') {
    if (N > T) return { ok: false, problem: `the discretization raises an error for ${N} sampling steps: it has only ${T} training steps` };
    const out: number[] = [];
    if (N === T) {
      for (let t = T - 1; t >= 0; t--) out.push(t);
      return { ok: true, value: out };
    }
    const step = (0 - (T - 1)) / N;
    for (let k = 0; k < N; k++) out.push(Math.trunc(k * step + (T - 1)));
    return { ok: true, value: out };
  }
  if (rule === 'ldm-ddim') {
    // range(0, T, c) + 1 with c = T // N: one more step than asked when N does not divide T.
    const stride = Math.floor(T / N);
    if (stride < 1) return { ok: false, problem: `${N} sampling steps do not fit in ${T} training steps` };
    const out: number[] = [];
    for (let k = Math.floor((T - 1) / stride); k >= 0; k--) out.push(k * stride + 1);
    return { ok: true, value: out };
  }
  return { ok: true, value: Array.from(standard.value) };
}

function lcmTimesteps(T: number, N: number, O: number): TimestepsResult {
  if (!Number.isSafeInteger(O) || O < 1) return { ok: false, problem: `original_inference_steps ${O} must be a positive whole number` };
  if (O > T) return { ok: false, problem: `original_inference_steps ${O} is larger than the ${T} training steps: the scheduler raises an error` };
  if (!Number.isSafeInteger(N) || N < 1) return { ok: false, problem: `${N} sampling steps: the scheduler needs a positive whole number` };
  if (N > O) return { ok: false, problem: `${N} sampling steps are more than original_inference_steps ${O}: the scheduler raises an error` };
  const k = Math.floor(T / O);
  const step = O / N;
  const out: number[] = [];
  for (let j = 0; j < N; j++) out.push((O - Math.floor(j * step)) * k - 1);
  return { ok: true, value: out };
}

/**
 * Timesteps of a Karras-sigma sampler over a discrete schedule: the Karras et al. 2022 sigmas
 * between the smallest and the largest training sigma (rho 7), each mapped back to a timestep by
 * interpolating log sigma, as the library's _sigma_to_t does. The first is always T - 1.
 */
export function karrasTimesteps(alphaBar: ReadonlyFloat64Array, N: number, rho = 7): TimestepsResult {
  const T = alphaBar.length;
  const logSigma = new Float64Array(T);
  for (let i = 0; i < T; i++) logSigma[i] = 0.5 * Math.log((1 - alphaBar[i]!) / alphaBar[i]!);
  const smin = Math.exp(logSigma[0]!);
  const smax = Math.exp(logSigma[T - 1]!);
  if (!Number.isFinite(smax)) return { ok: false, problem: 'the largest training sigma is infinite (zero terminal SNR)' };
  const k = karrasSigmas(N, smin, smax, rho);
  if (!k.ok) return k;
  const out: number[] = [];
  for (const sigma of k.value) {
    const ls = Math.log(sigma);
    let lo = 0;
    while (lo < T - 2 && logSigma[lo + 1]! <= ls) lo++;
    const w = Math.min(1, Math.max(0, (ls - logSigma[lo]!) / (logSigma[lo + 1]! - logSigma[lo]!)));
    out.push(Math.round(lo + w));
  }
  out[0] = T - 1;
  return { ok: true, value: out };
}
