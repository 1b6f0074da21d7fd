import { fmt } from './format';
import { defineRule, type RuleMeta } from './types';
import { velocityTargetFix } from './fixes';
import { assumedNote, describeSchedule, discreteSchedule, scheduleConcepts, scheduleOrigin } from './util';

const docs = `
## What triggers it

An epsilon (noise) prediction target on a discrete schedule that reaches zero SNR at its last
step, for example with the zero-terminal-SNR rescale turned on.

## What the run loses

At zero SNR the noisy input is pure noise, so predicting the noise is trivial there: the input
already is the answer, and the network learns nothing about the image at the step where sampling
begins. Worse, a sampler recovers the clean image from an epsilon prediction as
x0 = (x_t - sqrt(1 - abar) * eps) / sqrt(abar), which divides by zero when abar = 0.
A velocity target (v = sqrt(abar) * eps - sqrt(1 - abar) * x0) stays well defined there: at zero
SNR it asks for -x0, the mean image, which is what the model must produce first.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: high-key product stills
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
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
\`\`\`

## Effect on a trained checkpoint

Needs fine-tuning or retraining. Switching the target to v changes what the network learns: a checkpoint trained for
epsilon needs fine-tuning or retraining before it predicts v.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (section 3.2: train with v prediction and v loss).
- Salimans and Ho 2022, "Progressive Distillation for Fast Sampling of Diffusion Models"
  (the v parameterisation).
`;

const meta = {
  id: 'epsilon-at-zero-snr',
  summary: 'An epsilon target on a schedule that reaches zero SNR.',
  defaultSeverity: 'error',
  repair: { effects: ['needs-retraining'], everyFinding: true },
  options: {},
  docs,
} satisfies RuleMeta;

export const epsilonAtZeroSnr = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const schedule = discreteSchedule(analysis);
    if (!schedule || !schedule.reachesZeroSnr) return [];
    const target = setup.fields.predictionTarget;
    // An inherited target is the training file's finding: that is where it is fixed.
    if (!target || target.value !== 'epsilon' || target.inherited) return [];
    const last = schedule.trainSteps - 1;
    return [
      {
        message:
          `the target is epsilon, but the schedule (${describeSchedule(setup, schedule)}) reaches SNR ${fmt(schedule.terminalSnr)} at step ${last}: ` +
          `there the input is pure noise, predicting it teaches nothing, and recovering the image divides by sqrt(abar) = 0` +
          assumedNote(setup, ['predictionTarget', ...scheduleConcepts(setup)]) +
          scheduleOrigin(setup),
        at: 'predictionTarget',
        fixes: [velocityTargetFix()],
      },
    ];
  },
});
