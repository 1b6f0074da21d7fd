import { fmt } from './format';
import { defineRule, type RuleMeta } from './types';
import { velocityTargetFix } from './fixes';
import { assumedNote, discreteSchedule } from './util';

const docs = `
## What triggers it

Min-SNR loss weighting together with an epsilon target (and so an epsilon loss) on a schedule
that reaches zero SNR.

## What the run loses

Min-SNR-gamma weighting (Hang et al. 2023) weights an epsilon loss by min(SNR, gamma) / SNR. At
the last step of a zero-terminal-SNR schedule SNR = 0, so the weight is 0 / 0: training code
produces NaN or infinity there, or silently drops the step, depending on how it guards the
division. The v loss form, min(SNR, gamma) / (SNR + 1), is defined everywhere.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: high-key stills fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
snr_gamma: 5.0
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
snr_gamma: 5.0
\`\`\`

## Effect on a trained checkpoint

Needs fine-tuning or retraining. Switching the target to v changes what the network learns; a checkpoint trained for
epsilon needs fine-tuning or retraining.

## Numbers you can tune


## Published sources

- Hang, Gu, Li, Bao, Chen, Hu, Geng and Guo 2023, "Efficient Diffusion Training via Min-SNR
  Weighting Strategy" (the weights for epsilon, v and x0 losses).
- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed".
`;

const meta = {
  id: 'min-snr-division',
  summary: 'Min-SNR weighting with an epsilon loss divides by an SNR of zero.',
  defaultSeverity: 'error',
  repair: { effects: ['needs-retraining'], everyFinding: true },
  options: {},
  docs,
} satisfies RuleMeta;

export const minSnrDivision = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const gamma = setup.fields.minSnrGamma;
    if (!gamma || gamma.assumed || !(gamma.value > 0)) return [];
    const schedule = discreteSchedule(analysis);
    if (!schedule || !schedule.reachesZeroSnr) return [];
    if (setup.fields.predictionTarget?.value !== 'epsilon') return [];
    const g = fmt(gamma.value);
    return [
      {
        message:
          `min-SNR weighting (gamma ${g}) with an epsilon loss weights each step by min(SNR, ${g}) / SNR, ` +
          `which is 0 / 0 at step ${schedule.trainSteps - 1} where SNR is ${fmt(schedule.terminalSnr)}` +
          assumedNote(setup, ['predictionTarget', 'trainSteps']),
        at: 'minSnrGamma',
        related: [{ concept: 'predictionTarget', message: 'the epsilon target is set here' }],
        fixes: [velocityTargetFix()],
      },
    ];
  },
});
