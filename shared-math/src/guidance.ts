/**
 * Classifier-free guidance (Ho & Salimans 2022) and its rescale (Lin et al. 2023,
 * eqs. 13-16; section numbers recalled from memory).
 */

/** Guidance scale and rescale factor commonly paired on zero-SNR schedules (common practice). */
export const COMMON_GUIDANCE_SCALE = 7.5,
  COMMON_GUIDANCE_RESCALE = 0.7;

/** Population mean; NaN for an empty list. */
export function mean(x: ArrayLike<number>): number {
  let sum = 0;
  for (let i = 0; i < x.length; i++) sum += x[i]!;
  return sum / x.length;
}

/** Population standard deviation sqrt(mean((x - mean)^2)) (two passes); NaN for an empty list. */
export function populationStd(x: ArrayLike<number>): number {
  const m = mean(x);
  let sum = 0;
  for (let i = 0; i < x.length; i++) {
    const d = x[i]! - m;
    sum += d * d;
  }
  return Math.sqrt(sum / x.length);
}

function sameNonEmptyLength(pos: ArrayLike<number>, neg: ArrayLike<number>): boolean {
  return pos.length > 0 && pos.length === neg.length;
}

/**
 * Plain classifier-free guidance (Lin et al. 2023, eq. 13): x_cfg = x_neg + w (x_pos - x_neg).
 * Returns an empty array when the inputs are empty or differ in length.
 */
export function classifierFreeGuidance(pos: ArrayLike<number>, neg: ArrayLike<number>, w: number): Float64Array {
  if (!sameNonEmptyLength(pos, neg)) return new Float64Array(0);
  const out = new Float64Array(pos.length);
  for (let i = 0; i < pos.length; i++) out[i] = neg[i]! + w * (pos[i]! - neg[i]!);
  return out;
}

/**
 * Guidance rescale (Lin et al. 2023, eqs. 13-16):
 * x_cfg = x_neg + w (x_pos - x_neg); x_res = x_cfg * std(x_pos) / std(x_cfg);
 * x_out = phi x_res + (1 - phi) x_cfg.
 * std is the population std over the whole vector; the sample std would give the same ratio.
 * When std(x_cfg) is 0 the ratio is undefined and x_res is taken as x_cfg (no rescale).
 * Returns an empty array when the inputs are empty or differ in length.
 */
export function guidanceRescale(pos: ArrayLike<number>, neg: ArrayLike<number>, w: number, phi: number): Float64Array {
  const cfg = classifierFreeGuidance(pos, neg, w);
  if (cfg.length === 0) return cfg;
  const stdCfg = populationStd(cfg);
  const ratio = stdCfg === 0 ? 1 : populationStd(pos) / stdCfg;
  const out = new Float64Array(cfg.length);
  for (let i = 0; i < cfg.length; i++) out[i] = phi * (cfg[i]! * ratio) + (1 - phi) * cfg[i]!;
  return out;
}
