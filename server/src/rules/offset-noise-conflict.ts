import { fmt } from './format';
import { defineRule, type ConceptFix, type RuleMeta } from './types';
import { RETRAIN_NOTE, assumedNote, discreteSchedule, scheduleConcepts, zeroSnrFix } from './util';

const docs = `
## What triggers it

Offset noise (a per-channel constant added to the training noise) that is greater than 0:

- together with a schedule that reaches zero terminal SNR: a warning, the two fight;
- on its own: information, suggesting the principled fix instead.

## What the run loses

Offset noise was a workaround for the medium-brightness problem: by adding a random constant
per image and channel, the last training step no longer leaves the mean brightness intact. But
it also changes the noise distribution the model is trained on, which is no longer the
Gaussian that sampling starts from. Rescaling the schedule to zero terminal SNR removes the
cause directly (Lin et al. 2023). With both at once, the offset adds a mismatch without any
remaining benefit.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: dark-scene fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
noise_offset: 0.1
\`\`\`

## The repaired config

\`\`\`yaml
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
\`\`\`

## Effect on a trained checkpoint

Needs fine-tuning or retraining. Removing offset noise, and (for the information finding) rescaling the schedule to
zero terminal SNR, change training: the model needs fine-tuning or retraining under the new
setting.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (section 3.1 and the discussion of offset noise).
`;

const meta = {
  id: 'offset-noise-conflict',
  summary: 'Offset noise together with (or instead of) a zero-terminal-SNR schedule.',
  defaultSeverity: 'warning',
  repair: { effects: ['needs-retraining'], everyFinding: true },
  options: {},
  docs,
} satisfies RuleMeta;

export const offsetNoiseConflict = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const offset = setup.fields.offsetNoise;
    if (!offset || offset.assumed || !(offset.value > 0)) return [];
    const schedule = discreteSchedule(analysis);
    // The schedule the comparison uses, named where it is assumed.
    const assumed = assumedNote(setup, [...scheduleConcepts(setup), 'zeroTerminalSnr']);
    const zeroSnr = setup.fields.zeroTerminalSnr?.value === true || !!schedule?.reachesZeroSnr || analysis.schedule?.family === 'flow';
    const remove: ConceptFix = {
      title: `Remove offset noise ${RETRAIN_NOTE}`,
      effect: 'needs-retraining',
      edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    };
    if (zeroSnr) {
      return [
        {
          message: `offset noise ${fmt(offset.value)} on a schedule that already reaches zero terminal SNR: the offset no longer fixes anything and makes the training noise differ from the Gaussian noise sampling starts from${assumed}`,
          at: 'offsetNoise',
          severity: 'warning',
          fixes: [remove],
        },
      ];
    }
    const principled = zeroSnrFix(ctx, { edits: [{ kind: 'remove', concept: 'offsetNoise' }], title: 'remove offset noise' });
    const leak = schedule ? ` (signal amplitude at the last step is ${fmt(schedule.terminalSignal)})` : '';
    return [
      {
        message: `offset noise ${fmt(offset.value)} works around a schedule that never reaches pure noise${leak}; rescaling the schedule to zero terminal SNR removes the cause without changing the noise distribution${schedule ? assumed : ''}`,
        at: 'offsetNoise',
        severity: 'info',
        fixes: principled ? [{ ...principled, preferred: true }, remove] : [remove],
      },
    ];
  },
});
