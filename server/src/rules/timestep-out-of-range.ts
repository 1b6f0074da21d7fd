import { samplingTimesteps } from '@noiselint/shared-math';
import { fmtList } from './format';
import { defineRule, type ConceptFix, type RuleMeta } from './types';
import { stepsToTrainStepsFix } from './fixes';
import { assumedNote, discreteSchedule, isSet, trailingFix } from './util';

const docs = `
## What triggers it

A sampling timestep outside 0..T - 1. Typical causes: leading spacing with a steps offset of 1
and N = T steps gives timestep T; trailing spacing with more steps than training steps gives -1.

## What the run loses

The sampler looks up abar at each timestep. Outside 0..T - 1 there is no such entry: depending on
the code this crashes, wraps around to the other end of the schedule (index -1 is the last,
noisiest step), or reads past the array. None of these samples what was intended.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: full-length reference render
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: leading
  steps_offset: 1
num_inference_steps: 1000
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  timestep_spacing: leading
  steps_offset: 0
num_inference_steps: 1000
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. The fixes set the steps offset to 0, or the spacing to trailing, or (with more sampling
steps than training steps) the step count to T; all of them change only sampling.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (Table 2: the three spacings in code).
`;

const meta = {
  id: 'timestep-out-of-range',
  summary: 'A sampling timestep falls outside 0..T - 1.',
  defaultSeverity: 'error',
  repair: { effects: ['sampling-only'], everyFinding: false },
  options: {},
  docs,
} satisfies RuleMeta;

export const timestepOutOfRange = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    // Only T is needed: an invalid beta list does not hide this finding.
    const T = discreteSchedule(analysis)?.trainSteps ?? analysis.trainSteps;
    const sampling = analysis.sampling;
    if (T === null || !sampling || sampling.outOfRange.length === 0) return [];
    const N = sampling.steps;
    const inRange = (ts: number[]) => ts.every((t) => t >= 0 && t <= T - 1);
    const fixes: ConceptFix[] = [];
    if (sampling.stepsOffset !== 0 && isSet(setup, 'stepsOffset')) {
      const zero = samplingTimesteps(sampling.spacing as 'leading', T, N, 0);
      if (zero.ok && inRange(zero.value)) {
        fixes.push({
          title: 'Set the steps offset to 0 (sampling only)',
          effect: 'sampling-only',
          edits: [{ kind: 'set', concept: 'stepsOffset', value: 0 }],
        });
      }
    }
    if (sampling.spacing !== 'trailing') {
      const trailing = trailingFix(setup, T, sampling);
      if (trailing) fixes.push(trailing);
    }
    if (fixes.length === 0 && N > T && isSet(setup, 'sampleSteps')) {
      fixes.push(stepsToTrainStepsFix(T));
    }
    const outside = Array.from(new Set(sampling.outOfRange));
    const offsetText = sampling.stepsOffset !== 0 ? ` and steps offset ${sampling.stepsOffset}` : '';
    const stepsAssumed = sampling.stepsAssumed ? [`sampleSteps = ${N}`] : [];
    return [
      {
        message:
          `${sampling.spacing} spacing with ${N} steps${offsetText} gives timestep${outside.length === 1 ? '' : 's'} ${fmtList(outside)}, ` +
          `outside 0..${T - 1}: the sampler would index past the schedule (a crash, or a wrap to the wrong end)` +
          assumedNote(setup, ['timestepSpacing', 'trainSteps'], stepsAssumed),
        at:
          sampling.stepsOffset !== 0 && isSet(setup, 'stepsOffset')
            ? 'stepsOffset'
            : N > T && isSet(setup, 'sampleSteps')
              ? 'sampleSteps'
              : isSet(setup, 'timestepSpacing')
                ? 'timestepSpacing'
                : 'sampleSteps',
        fixes,
      },
    ];
  },
});
