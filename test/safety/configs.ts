/** Demo configs the fix-safety tests write (Lanternfish Pictures, invented demo data). */

/** A small config with fixable findings (leading spacing skips the last step; guidance without rescale). */
export const SMALL = [
  '# Lanternfish Pictures: product stills sampler (invented demo data)',
  'num_train_timesteps: 1000',
  'beta_schedule: scaled_linear',
  'beta_start: 0.00085',
  'beta_end: 0.012',
  'rescale_betas_zero_snr: true',
  'prediction_type: v_prediction',
  'timestep_spacing: leading',
  'num_inference_steps: 30',
  'guidance_scale: 7.5',
  '',
].join('\n');

/** Linear betas with the endpoints of Ho et al. 2020 (1e-4 -> 0.02) stretched to T = n, as written in a file. */
export function linearBetaTexts(n: number): string[] {
  const betas: string[] = [];
  for (let i = 0; i < n; i++) betas.push((1e-4 + ((0.02 - 1e-4) * i) / (n - 1)).toPrecision(8));
  return betas;
}
