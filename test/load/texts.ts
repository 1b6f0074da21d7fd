/** Config texts for the load tests and the benchmarks (invented Lanternfish Pictures data). */

/** A ~50-line Lanternfish Pictures config; `variant` moves between leaky and fixed settings. */
export function configText(variant: number, edit: number, lines = 50): string {
  const leaky = variant % 3 === 0;
  const head = [
    `# Lanternfish Pictures: storyboard run, edit ${edit} (invented demo data)`,
    'noise_scheduler:',
    '  num_train_timesteps: 1000',
    `  beta_schedule: ${leaky ? 'scaled_linear' : variant % 3 === 1 ? 'linear' : 'cosine'}`,
    '  beta_start: 0.00085',
    '  beta_end: 0.012',
    `  prediction_type: ${variant % 2 === 0 ? 'epsilon' : 'v_prediction'}`,
    `  rescale_betas_zero_snr: ${variant % 4 === 1 ? 'true' : 'false'}`,
    'sampling:',
    `  timestep_spacing: ${variant % 5 === 0 ? 'trailing' : 'leading'}`,
    '  steps_offset: 1',
    `  num_inference_steps: ${10 + (variant % 40)}`,
    `  guidance_scale: ${(5 + (variant % 6)).toFixed(1)}`,
    'notes:',
  ];
  const filler: string[] = [];
  for (let i = head.length; i < lines - 1; i++) filler.push(`  - frame ${i}: lantern glow over dark water, take ${(edit * 7 + i) % 97}`);
  return [...head, ...filler, ''].join('\n');
}
