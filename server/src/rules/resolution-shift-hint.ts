import { resolutionLogSnrShift } from '@noiselint/shared-math';
import { fmt } from './format';
import { defineRule, type RuleMeta } from './types';
import { assumedNote } from './util';

const docs = `
## What triggers it

A training resolution at least \`factor\` times the resolution the schedule is usually set up
for, with no schedule shift: for a flow-matching schedule no \`shift\` (or a shift of 1); for
a discrete beta schedule there is no shift setting, so the hint always applies there.

The reference resolution is a project default, stated here as common practice:
\`pixelReferenceResolution\` = 256 for pixel-space models (the resolution at which the linear and
cosine schedules were commonly used) and \`latentReferenceResolution\` = 512 for latent models
(a 64 x 64 latent at 8x downsampling, where the common latent schedules were tuned).

## What the run loses

At a higher resolution neighbouring pixels are more strongly correlated, so the same per-pixel
noise hides less of the image: the schedule is effectively less noisy, and the model spends its
capacity on steps that are already easy. Hoogeboom et al. 2023 and Chen 2023 shift the log-SNR
by 2 ln(r0 / r) when moving from a reference resolution r0 to r; for flow matching, a timestep
shift s = r / r0 shifts log-SNR by the same amount (Esser et al. 2024).

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: 1024 px poster fine-tune (flow model)
prediction_type: flow
autoencoder: lanternfish-ae-f8
resolution: 1024
num_train_timesteps: 1000
\`\`\`

## The repaired config

\`\`\`yaml
prediction_type: flow
autoencoder: lanternfish-ae-f8
resolution: 1024
num_train_timesteps: 1000
shift: 2.0
\`\`\`

## Effect on a trained checkpoint

No repair offered: how to shift a schedule depends on the training code. The message gives the log-SNR
shift and, for flow schedules, the matching shift value.

## Numbers you can tune


## Published sources

- Hoogeboom, Heek and Salimans 2023, "simple diffusion: End-to-end diffusion for high
  resolution images" (shifting the schedule with resolution).
- Chen 2023, "On the Importance of Noise Scheduling for Diffusion Models".
- Esser et al. 2024, "Scaling Rectified Flow Transformers for High-Resolution Image Synthesis"
  (resolution-dependent timestep shift).
`;

const meta = {
  id: 'resolution-shift-hint',
  summary: "Training resolution well above the schedule's reference resolution without a shift.",
  defaultSeverity: 'info',
  repair: null,
  options: {
    factor: { default: 2, description: 'How many times the reference resolution triggers the hint.' },
    pixelReferenceResolution: { default: 256, description: 'Reference resolution of pixel-space models (common practice).' },
    latentReferenceResolution: { default: 512, description: 'Reference resolution of latent models, in pixels (common practice).' },
  },
  docs,
} satisfies RuleMeta;

export const resolutionShiftHint = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const resolution = setup.fields.resolution;
    if (!resolution || resolution.assumed || !(resolution.value > 0) || !Number.isFinite(resolution.value)) return [];
    const family = analysis.schedule?.family;
    if (family !== 'discrete' && family !== 'flow') return [];
    const shift = setup.fields.flowShift;
    if (family === 'flow' && shift && !shift.assumed && shift.value !== 1) return [];
    const latent = setup.fields.latentSpace?.value === true;
    const reference = latent ? ctx.options.latentReferenceResolution : ctx.options.pixelReferenceResolution;
    const factor = ctx.options.factor;
    const r = resolution.value;
    if (!(reference > 0) || r < factor * reference) return [];
    const logShift = resolutionLogSnrShift(reference, r);
    const s = r / reference;
    const advice =
      family === 'flow'
        ? `a flow shift of ${fmt(s)} does that (the file sets ${shift && !shift.assumed ? 'shift 1' : 'none'})`
        : 'beta schedules have no shift setting, so the training code has to shift the schedule';
    return [
      {
        message:
          `training resolution ${fmt(r)} is ${fmt(s)}x the ${fmt(reference)} px reference of a ${latent ? 'latent' : 'pixel-space'} schedule (common practice): ` +
          `the same noise hides less of a larger image; shifting log-SNR by 2 ln(${fmt(reference)}/${fmt(r)}) = ${fmt(logShift)} keeps the noise level comparable; ${advice}` +
          assumedNote(setup, ['latentSpace']),
        at: 'resolution',
      },
    ];
  },
});
