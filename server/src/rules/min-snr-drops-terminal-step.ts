import { minSnrWeight } from '@noiselint/shared-math';
import { fmt } from './format';
import { defineRule, type RuleMeta } from './types';
import { assumedNote, discreteSchedule } from './util';

const docs = `
## What triggers it

Min-SNR loss weighting with a v or x0 target on a schedule that reaches zero SNR: the weight of
the last step is exactly 0.

## What the run loses

With a v loss the min-SNR-gamma weight is min(SNR, gamma) / (SNR + 1), and with an x0 loss it is
min(SNR, gamma). Both are 0 at SNR = 0, so the step that is pure noise, the very step that
zero-terminal-SNR training adds and that sampling starts from, contributes nothing to the loss
and is never trained. The neighbouring steps get small weights too. A common remedy is a floor
on the weight (for example max(weight, a small constant)) so the terminal step keeps some
gradient.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: night storyboard fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
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
\`\`\`

(or keep min-SNR weighting and add a floor to the weight in the training code).

## Effect on a trained checkpoint

No repair offered: the remedy lives in the training code, not in the configuration.

## Numbers you can tune


## Published sources

- Hang, Gu, Li, Bao, Chen, Hu, Geng and Guo 2023, "Efficient Diffusion Training via Min-SNR
  Weighting Strategy" (the weights for epsilon, v and x0 losses).
- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed".
`;

const meta = {
  id: 'min-snr-drops-terminal-step',
  summary: 'Min-SNR weighting gives the pure-noise step of a zero-SNR schedule weight 0.',
  defaultSeverity: 'info',
  repair: null,
  options: {},
  docs,
} satisfies RuleMeta;

export const minSnrDropsTerminalStep = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const gamma = setup.fields.minSnrGamma;
    if (!gamma || gamma.assumed || !(gamma.value > 0)) return [];
    const schedule = discreteSchedule(analysis);
    if (!schedule || !schedule.reachesZeroSnr) return [];
    const target = setup.fields.predictionTarget?.value;
    if (target !== 'v' && target !== 'x0') return [];
    const g = fmt(gamma.value);
    const weight = minSnrWeight(schedule.terminalSnr, gamma.value, target);
    const formula = target === 'v' ? `min(SNR, ${g}) / (SNR + 1)` : `min(SNR, ${g})`;
    return [
      {
        message:
          `min-SNR weighting (gamma ${g}) with ${target === 'x0' ? 'an' : 'a'} ${target} loss weights each step by ${formula}, which is ${fmt(weight)} ` +
          `at step ${schedule.trainSteps - 1} (SNR ${fmt(schedule.terminalSnr)}): the pure-noise step is never trained; ` +
          `a small floor on the weight keeps it` +
          assumedNote(setup, ['predictionTarget', 'trainSteps']),
        at: 'minSnrGamma',
      },
    ];
  },
});
