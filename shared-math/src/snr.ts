/**
 * Cumulative signal level of a discrete schedule and the quantities derived from it
 * (Ho et al. 2020; SNR and log-SNR as in Kingma et al. 2021).
 * Out-of-range arguments (abar outside [0, 1], NaN) give NaN rather than throwing.
 */
import { CompensatedSum } from './numeric';

/**
 * abar_i = prod_{j <= i} (1 - beta_j) (Ho et al. 2020), accumulated as a compensated sum of
 * log1p(-beta_j) and exponentiated: a naive product loses digits over long schedules.
 * A beta of exactly 1 makes log1p return -Infinity, so abar is exactly 0 from there on.
 * No validation: call checkBetas first (invalid betas give NaN entries). The input length is
 * allocated as is.
 */
export function alphaBarFromBetas(betas: ArrayLike<number>): Float64Array {
  const n = betas.length;
  const out = new Float64Array(n);
  const logSum = new CompensatedSum();
  for (let i = 0; i < n; i++) {
    logSum.add(Math.log1p(-betas[i]!));
    out[i] = Math.exp(logSum.value);
  }
  return out;
}

function inUnit(abar: number): boolean {
  return abar >= 0 && abar <= 1; // false for NaN
}

/** SNR = abar / (1 - abar): 0 at abar = 0, Infinity at abar = 1. */
export function snrFromAlphaBar(abar: number): number {
  if (!inUnit(abar)) return NaN;
  return abar / (1 - abar);
}

/** log-SNR = log(abar) - log1p(-abar): -Infinity at abar = 0, Infinity at abar = 1. */
export function logSnrFromAlphaBar(abar: number): number {
  if (!inUnit(abar)) return NaN;
  return Math.log(abar) - Math.log1p(-abar);
}

/** Signal amplitude sqrt(abar): the weight of the clean sample in x_t. */
export function signalAmplitude(abar: number): number {
  if (!inUnit(abar)) return NaN;
  return Math.sqrt(abar);
}

/** Noise amplitude sqrt(1 - abar): the weight of the noise in x_t. */
export function noiseAmplitude(abar: number): number {
  if (!inUnit(abar)) return NaN;
  return Math.sqrt(1 - abar);
}

/**
 * sigma = sqrt((1 - abar) / abar), the noise level a sigma-space sampler sees
 * (Karras et al. 2022, variance-preserving case): Infinity at abar = 0 (zero SNR).
 */
export function sigmaFromAlphaBar(abar: number): number {
  if (!inUnit(abar)) return NaN;
  return Math.sqrt((1 - abar) / abar);
}

/** Inverse of sigmaFromAlphaBar: abar = 1 / (1 + sigma^2); 0 at sigma = Infinity. */
export function alphaBarFromSigma(sigma: number): number {
  if (!(sigma >= 0)) return NaN;
  return 1 / (1 + sigma * sigma);
}

/** Inverse of snrFromAlphaBar: abar = SNR / (1 + SNR); 1 at SNR = Infinity. */
export function alphaBarFromSnr(snr: number): number {
  if (!(snr >= 0)) return NaN;
  if (snr === Infinity) return 1;
  return snr / (1 + snr);
}

/**
 * abar at the last step of a zero-terminal-SNR schedule as sigma-space samplers commonly clamp
 * it, 2^-24 (sigma about 4096), with that step run in float32 (common practice).
 */
export const ZERO_SNR_ALPHA_BAR_CLAMP = 2 ** -24;
