import { fmt, fmtList } from './format';
import { defineRule, type RuleMeta } from './types';
import { assumedNote, discreteSchedule, isSet, scheduleConcepts, scheduleOrigin, trailingFix } from './util';

const docs = `
## What triggers it

A sampler whose first (noisiest) timestep is not the last training step T - 1. The message
says which step it starts from and the SNR there. It is a warning, and an error when the
schedule reaches zero SNR (then the skipped step is the only one that is pure noise).

## What the run loses

Sampling starts from pure Gaussian noise, so its first step should be the training step that
is closest to pure noise: T - 1. The "leading" spacing with T = 1000 and 10 steps starts at
step 901 (with offset 1), where the training data still held a visible amount of image. The
model is asked to denoise an input it never saw at that step, which costs contrast and
brightness range. The "trailing" spacing starts exactly at T - 1 and spreads the other steps
evenly; "linspace" also starts there.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: storyboard preview sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: leading
  steps_offset: 1
num_inference_steps: 10
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: trailing
  steps_offset: 1
num_inference_steps: 10
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. The fix sets the spacing to trailing, which changes only how sampling picks its steps;
nothing the model learned changes. If a steps offset would push a trailing timestep outside
0..T - 1, the fix also sets the offset to 0.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (section 3.3 and Table 2: leading, linspace and trailing spacings).
`;

const meta = {
  id: 'sampler-skips-last-step',
  summary: 'The first sampling timestep is not the last training step T - 1.',
  defaultSeverity: 'warning',
  repair: { effects: ['sampling-only'], everyFinding: true },
  options: {},
  docs,
} satisfies RuleMeta;

export const samplerSkipsLastStep = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    // Only T is needed for the timesteps: an invalid beta list does not hide this finding (the
    // SNR at the first step is then left out, since the schedule cannot be computed).
    const schedule = discreteSchedule(analysis);
    const T = schedule?.trainSteps ?? analysis.trainSteps;
    const sampling = analysis.sampling;
    if (T === null || !sampling || sampling.startsAtLastStep) return [];
    // More steps than T is steps-out-of-range's finding; the stride it gives is its consequence.
    if (sampling.steps > T) return [];
    const first = sampling.firstTimestep;
    // Outside 0..T-1 is timestep-out-of-range's finding.
    if (!Number.isInteger(first) || first < 0 || first > T - 1) return [];
    const zeroSnr = schedule?.reachesZeroSnr === true;
    const stepsAssumed = sampling.stepsAssumed ? [`sampleSteps = ${sampling.steps}`] : [];
    const snrThere = schedule
      ? ` (SNR ${fmt(sampling.snrAtFirst)}, signal amplitude ${fmt(sampling.signalAtFirst)})`
      : ' (its SNR is unknown: the schedule itself is invalid)';
    const consequence = zeroSnr
      ? `the schedule reaches zero SNR only at ${T - 1}, so the sampler never takes the one step trained on pure noise`
      : `sampling starts from pure noise at a step that still held signal in training`;
    // The latent consistency schedulers select from their own grid, whatever the spacing says (the
    // class does not read it, so no spacing fix renders either).
    const grid = setup.consumer?.timesteps === 'lcm' ? setup.consumer.originalSteps : undefined;
    const how =
      grid !== undefined
        ? `the original_inference_steps grid (${grid} steps, stride ${Math.floor(T / grid)}) with ${sampling.steps} steps visits`
        : `${sampling.spacing} spacing with ${sampling.steps} steps visits`;
    const fix = trailingFix(setup, T, sampling);
    return [
      {
        message:
          `first sampling step is ${first} of 0..${T - 1}${snrThere}, not the last training step ${T - 1}: ` +
          `${how} ${fmtList(sampling.timesteps)}; ${consequence}` +
          (grid !== undefined ? `; an original_inference_steps that divides ${T} starts the grid at ${T - 1}` : '') +
          assumedNote(
            setup,
            ['timestepSpacing', 'stepsOffset', ...(schedule ? [...scheduleConcepts(setup), 'zeroTerminalSnr' as const] : [])],
            stepsAssumed,
          ) +
          scheduleOrigin(setup),
        at: isSet(setup, 'timestepSpacing') || !isSet(setup, 'sampleSteps') ? 'timestepSpacing' : 'sampleSteps',
        severity: zeroSnr ? 'error' : 'warning',
        fixes: fix ? [fix] : [],
      },
    ];
  },
});
