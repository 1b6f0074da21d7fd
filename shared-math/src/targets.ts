/**
 * Prediction-target conversions for x_t = sqrt(abar) x0 + sqrt(1 - abar) eps
 * (Ho et al. 2020; v target of Salimans & Ho 2022, "Progressive Distillation";
 * section numbers recalled from memory).
 * Scalar versions: apply element-wise. abar outside [0, 1] gives NaN through Math.sqrt.
 */

export type TargetKind = 'epsilon' | 'v' | 'x0';

export const TARGET_KINDS: readonly TargetKind[] = ['epsilon', 'v', 'x0'];

/** Forward process (Ho et al. 2020, eq. 4): x_t = sqrt(abar) x0 + sqrt(1 - abar) eps. */
export function noisySample(abar: number, x0: number, eps: number): number {
  return Math.sqrt(abar) * x0 + Math.sqrt(1 - abar) * eps;
}

/** Salimans & Ho 2022: v = sqrt(abar) eps - sqrt(1 - abar) x0. */
export function vFromEpsX0(abar: number, eps: number, x0: number): number {
  return Math.sqrt(abar) * eps - Math.sqrt(1 - abar) * x0;
}

/** Salimans & Ho 2022: x0 = sqrt(abar) x_t - sqrt(1 - abar) v. Defined at every abar in [0, 1]. */
export function x0FromV(abar: number, xt: number, v: number): number {
  return Math.sqrt(abar) * xt - Math.sqrt(1 - abar) * v;
}

/**
 * x0 recovered from an epsilon prediction: (x_t - sqrt(1 - abar) eps) / sqrt(abar).
 * Undefined at abar = 0 (zero SNR): the result is then +Infinity or -Infinity (x_t != eps) or
 * NaN (x_t == eps). This division is what makes an epsilon target unusable on a zero-terminal-SNR
 * schedule (Lin et al. 2023); rules report it rather than relying on the value.
 */
export function x0FromEps(abar: number, xt: number, eps: number): number {
  return (xt - Math.sqrt(1 - abar) * eps) / Math.sqrt(abar);
}

/** Salimans & Ho 2022: eps = sqrt(1 - abar) x_t + sqrt(abar) v. Defined at every abar in [0, 1]. */
export function epsFromV(abar: number, xt: number, v: number): number {
  return Math.sqrt(1 - abar) * xt + Math.sqrt(abar) * v;
}
