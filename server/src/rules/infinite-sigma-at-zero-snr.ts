import { ZERO_SNR_ALPHA_BAR_CLAMP, sigmaFromAlphaBar } from '@noiselint/shared-math';
import { fmt } from './format';
import { defineRule, type RuleMeta } from './types';
import { assumedNote, discreteSchedule, isSet, scheduleConcepts, scheduleOrigin } from './util';

const docs = `
## What triggers it

A sigma-space sampler (Euler, Euler ancestral, Heun, DPM-Solver, LMS) or Karras sigma spacing on
a discrete schedule that reaches zero SNR: the first sigma is infinite.

## What the run loses

These samplers step in sigma = sqrt((1 - abar) / abar), the noise-to-signal ratio. At the last
step of a zero-terminal-SNR schedule abar = 0, so sigma is infinite and the first step divides
infinity by infinity. Common practice clamps abar there to 2^-24, which gives sigma about 4096,
and computes that first step in float32 (in half precision such a sigma and its square
overflow). Karras et al. 2022 spacing interpolates between sigma_min and sigma_max, which is
undefined when sigma_max is infinite. Check that the sampling code does the clamp; without it the
first step produces NaN or a black image.

A saved scheduler config of a class that does this clamp itself when its
\`rescale_betas_zero_snr\` flag is on (the Euler, Euler ancestral, multistep DPM-Solver and
UniPC classes of the open diffusion library) is not flagged: the consumer profile knows it.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: zero-SNR model with an Euler sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
  timestep_spacing: trailing
sampler: euler
num_inference_steps: 30
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
  timestep_spacing: trailing
sampler: ddim
num_inference_steps: 30
\`\`\`

(or keep the sigma-space sampler in code that clamps abar at the last step and runs it in float32).

## Effect on a trained checkpoint

No repair offered: whether the sampling code clamps is not visible in the configuration.

## Numbers you can tune


## Published sources

- Karras, Aittala, Aila and Laine 2022, "Elucidating the Design Space of Diffusion-Based
  Generative Models" (sigma-space sampling and the sigma spacing).
- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (zero terminal SNR).
`;

const meta = {
  id: 'infinite-sigma-at-zero-snr',
  summary: 'A sigma-space sampler or Karras sigmas on a zero-SNR schedule: the first sigma is infinite.',
  defaultSeverity: 'warning',
  repair: null,
  options: {},
  docs,
} satisfies RuleMeta;

export const infiniteSigmaAtZeroSnr = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const schedule = discreteSchedule(analysis);
    const sigmas = analysis.sigmas;
    if (!schedule || !sigmas || !(schedule.reachesZeroSnr || sigmas.sigmaMax === Infinity)) return [];
    // A consuming class that applies the rescale itself also clamps the last step (consumer profile).
    if (setup.consumer?.clampsZeroSnrSigma && isSet(setup, 'zeroTerminalSnr') && setup.fields.zeroTerminalSnr?.value === true) return [];
    const clampedSigma = sigmaFromAlphaBar(ZERO_SNR_ALPHA_BAR_CLAMP);
    const karras = setup.fields.karrasSigmas?.value === true;
    const sampler = setup.fields.sampler?.value;
    const who = sampler ? `the ${sampler} sampler` : 'the sampler';
    return [
      {
        message:
          `${who}${karras ? ' with Karras sigmas' : ''} steps in sigma = sqrt((1 - abar) / abar), which is infinite at step ${schedule.trainSteps - 1} ` +
          `of this zero-SNR schedule: the sampling code must clamp abar there to 2^-24 (sigma ${fmt(clampedSigma)}) and take that step in float32` +
          (karras ? '; Karras spacing between sigma_min and an infinite sigma_max is undefined' : '') +
          assumedNote(setup, scheduleConcepts(setup)) +
          scheduleOrigin(setup),
        at: karras && isSet(setup, 'karrasSigmas') && !isSet(setup, 'sampler') ? 'karrasSigmas' : 'sampler',
      },
    ];
  },
});
