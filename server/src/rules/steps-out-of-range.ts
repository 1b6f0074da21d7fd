import { fmt } from './format';
import { defineRule, type RuleFinding, type RuleMeta } from './types';
import { stepsToTrainStepsFix } from './fixes';
import { assumedNote, problemFindings } from './util';

const docs = `
## What triggers it

A number of sampling steps N below 1 or above the number of training steps T, and sampling
step counts that are not whole numbers.

## What the run loses

A discrete sampler visits N of the T training timesteps. With N > T some timesteps repeat or
fall outside 0..T - 1 (trailing spacing then asks for timestep -1), and the sampler's step sizes
are no longer what the schedule describes; with N < 1 there is nothing to sample.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: final-frame render
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: linspace
num_inference_steps: 1200
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: linspace
num_inference_steps: 1000
\`\`\`

## Effect on a trained checkpoint

Sampling only, when N > T: the fix sets N = T, which only changes sampling. No fix for N < 1.

## Numbers you can tune


## Published sources

- Song, Meng and Ermon 2020, "Denoising Diffusion Implicit Models" (sampling on a subsequence
  of the training timesteps).
`;

const meta = {
  id: 'steps-out-of-range',
  summary: 'The number of sampling steps is below 1 or above the number of training steps.',
  defaultSeverity: 'error',
  repair: { effects: ['sampling-only'], everyFinding: false },
  options: {},
  docs,
} satisfies RuleMeta;

export const stepsOutOfRange = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const out: RuleFinding[] = problemFindings(setup, 'steps-out-of-range');
    const steps = setup.fields.sampleSteps;
    if (!steps || steps.assumed || out.length > 0 || !Number.isFinite(steps.value)) return out;
    const N = steps.value;
    if (N < 1) {
      out.push({ message: `${fmt(N)} sampling steps: a sampler needs at least 1`, at: 'sampleSteps' });
      return out;
    }
    // Only T is needed: an invalid beta list does not hide this finding.
    const schedule = analysis.schedule;
    const T = schedule ? (schedule.family === 'discrete' ? schedule.trainSteps : null) : analysis.trainSteps;
    if (T === null) return out;
    if (N > T) {
      out.push({
        message:
          `${fmt(N)} sampling steps is more than the ${T} training steps: a discrete sampler can visit each training timestep at most once` +
          assumedNote(setup, ['trainSteps']),
        at: 'sampleSteps',
        fixes: [stepsToTrainStepsFix(T)],
      });
    }
    return out;
  },
});
