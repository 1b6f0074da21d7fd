/** Demo configs of the invented studio Lanternfish Pictures (DESIGN section 7). */

/** Training file: scaled linear 0.00085 -> 0.012, T = 1000, epsilon target, no rescale. */
export const TRAIN_LEAKY = `# Lanternfish Pictures: night storyboard fine-tune (training)
run: lanternfish-nightboard-v3
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: epsilon
`;

/** Sampling file: the same schedule, leading spacing with offset 1 and 10 steps. */
export const SAMPLE_LEADING = `# Lanternfish Pictures: product stills preview sampler
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: epsilon
  timestep_spacing: leading
  steps_offset: 1
sampling:
  num_inference_steps: 10
  guidance_scale: 7.5
`;

/** A YAML file that is not a diffusion config (a render-farm job list). */
export const NOT_A_CONFIG = `# Lanternfish Pictures render farm queue
jobs:
  - name: storyboard-night-041
    priority: 3
  - name: product-still-white-007
    priority: 1
`;

/** A config that does not parse (an unclosed flow sequence). */
export const BROKEN_CONFIG = `# Lanternfish Pictures: half-edited training file
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: [scaled_linear
  beta_start: 0.00085
`;

/** Position (0-based line, character) of the first occurrence of `needle` in `text`. */
export function positionOf(text: string, needle: string, delta = 0): { line: number; character: number } {
  const offset = text.indexOf(needle);
  if (offset < 0) throw new Error(`"${needle}" is not in the text`);
  const before = text.slice(0, offset + delta);
  const lines = before.split('\n');
  return { line: lines.length - 1, character: lines[lines.length - 1]!.length };
}

export function lineOf(text: string, needle: string): number {
  return positionOf(text, needle).line;
}
