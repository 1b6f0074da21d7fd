/**
 * Min-SNR-gamma loss weighting (Hang et al. 2023, "Efficient Diffusion Training via Min-SNR
 * Weighting Strategy"; formulas as restated in DESIGN section 4).
 */
import type { TargetKind } from './targets';

/** gamma = 5, the value the paper recommends (recalled from memory). */
export const MIN_SNR_GAMMA_DEFAULT = 5;

/**
 * Per-step loss weight for a loss written in the given target:
 * epsilon: min(SNR, gamma) / SNR; v: min(SNR, gamma) / (SNR + 1); x0: min(SNR, gamma).
 * NaN where undefined: the epsilon form at SNR = 0 (0 / 0), a negative or NaN SNR, and
 * gamma not a positive number. At SNR = Infinity the epsilon and v weights are 0.
 * Note the v and x0 weights are exactly 0 at SNR = 0, so that step is never trained.
 */
export function minSnrWeight(snr: number, gamma: number, target: TargetKind): number {
  if (!(snr >= 0) || !(gamma > 0)) return NaN;
  const clipped = Math.min(snr, gamma);
  switch (target) {
    case 'epsilon':
      return snr === 0 ? NaN : clipped / snr;
    case 'v':
      return snr === Infinity ? 0 : clipped / (snr + 1);
    case 'x0':
      return clipped;
    default:
      return NaN;
  }
}
