import { fmt, fmtList } from './format';
import { defineRule, type RuleMeta } from './types';
import { discreteSchedule, trailingFix } from './util';

const docs = `
## What triggers it

The "linspace" timestep spacing with only a few sampling steps (at most \`maxSteps\`). Linspace
always ends exactly at t = 0, so one of the few steps is spent where the image is already
almost clean.

## What the run loses

Linspace picks round(linspace(0, T - 1, N)): it starts correctly at T - 1 but also lands its
last step on t = 0, where the SNR is in the hundreds or thousands and the step barely changes
anything. With 50 steps that waste is negligible; with 4 to 10 steps one step in four to ten
does almost nothing, and the remaining steps have to be larger. The "trailing" spacing also
starts at T - 1 and spreads all N steps evenly, ending at T/N - 1 instead of 0.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: 6-step turntable previews
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: linspace
num_inference_steps: 6
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: trailing
num_inference_steps: 6
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. The fix sets the spacing to trailing, which changes only how sampling picks its steps.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (Table 2 compares leading, linspace and trailing at 10 steps).
`;

const meta = {
  id: 'few-steps-linspace',
  summary: 'Linspace spacing with few steps spends one step at the almost clean t = 0.',
  defaultSeverity: 'info',
  repair: { effects: ['sampling-only'], everyFinding: true },
  options: {
    maxSteps: { default: 10, description: 'The largest step count that is reported. A project default, not a published value.' },
  },
  docs,
} satisfies RuleMeta;

export const fewStepsLinspace = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const schedule = discreteSchedule(analysis);
    const sampling = analysis.sampling;
    if (!schedule || !sampling || sampling.spacing !== 'linspace' || sampling.stepsAssumed) return [];
    const maxSteps = ctx.options.maxSteps;
    const N = sampling.steps;
    if (N < 2 || N > maxSteps || N > schedule.trainSteps) return [];
    const last = sampling.timesteps[sampling.timesteps.length - 1];
    if (last !== 0) return [];
    const abar0 = schedule.curve.alphaBar[0]!;
    const snr0 = abar0 / (1 - abar0);
    const fix = trailingFix(setup, schedule.trainSteps, sampling);
    return [
      {
        message:
          `linspace spacing with ${N} steps visits ${fmtList(sampling.timesteps)}: its last step lands on t = 0 ` +
          `(SNR ${fmt(snr0)}, signal amplitude ${fmt(Math.sqrt(abar0))}), where the image is almost clean, ` +
          `so 1 of only ${N} steps does nearly nothing`,
        at: 'timestepSpacing',
        fixes: fix ? [fix] : [],
      },
    ];
  },
});
