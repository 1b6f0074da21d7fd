import { fmt } from './format';
import { defineRule, type RuleMeta } from './types';
import { assumedNote, describeSchedule, discreteSchedule, inheritsSchedule, scheduleConcepts, setsSchedule, zeroSnrFix } from './util';

const docs = `
## What triggers it

A discrete noise schedule whose last training step still carries signal: the signal amplitude
sqrt(abar) at step T - 1 is at least \`warnSignal\` (warning) or at least \`infoSignal\`
(information). The message gives the amplitude and the SNR there.

## What the run loses

Training never shows the model pure noise: at the last step some of the image survives, and
its low frequencies (the overall brightness) leak through. Sampling, however, starts from pure
noise. The model then keeps the mean brightness of whatever it is given, so samples come out
medium-bright: no true black night scenes, no pure white backgrounds. With the common
scaled-linear schedule (8.5e-4 -> 0.012, T = 1000) the amplitude at the last step is about
0.068 (SNR about 4.7e-3); Lin et al. 2023 rescale the schedule so that it is exactly 0.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: night storyboard fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: v_prediction
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

Needs fine-tuning or retraining. The fix turns on the zero-terminal-SNR rescale (or, for an explicit beta list, writes
the rescaled list). That changes the schedule the model learns, so a pretrained checkpoint
needs fine-tuning or retraining. When the target is epsilon the same fix also switches it to v,
because epsilon cannot be predicted usefully at zero SNR (see \`epsilon-at-zero-snr\`).

## Numbers you can tune

Both thresholds are project defaults, not published values.

## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (section 3.1 and Algorithm 1: rescaling to zero terminal SNR).
- Ho, Jain and Abbeel 2020, "Denoising Diffusion Probabilistic Models" (the linear schedule).
`;

const meta = {
  id: 'terminal-snr-leak',
  summary: 'The last training step still carries signal (non-zero terminal SNR).',
  defaultSeverity: 'warning',
  repair: { effects: ['needs-retraining'], everyFinding: false },
  options: {
    warnSignal: { default: 0.01, description: 'Last-step signal amplitude at or above which the finding is a warning.' },
    infoSignal: { default: 1e-4, description: 'Last-step signal amplitude at or above which the finding is information.' },
  },
  docs,
} satisfies RuleMeta;

export const terminalSnrLeak = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const schedule = discreteSchedule(analysis);
    // A schedule taken from the training file leaks there, and is fixed there.
    if (!schedule || !setsSchedule(setup) || inheritsSchedule(setup)) return [];
    const warnSignal = ctx.options.warnSignal;
    const infoSignal = ctx.options.infoSignal;
    const signal = schedule.terminalSignal;
    if (!(signal >= infoSignal)) return [];
    const severity = signal >= warnSignal ? 'warning' : 'info';
    const last = schedule.trainSteps - 1;
    const consequence =
      severity === 'warning'
        ? 'the model never sees pure noise in training, but sampling starts from it, so images drift toward medium brightness'
        : 'small, but the model still never sees pure noise in training';
    const fix = zeroSnrFix(ctx);
    return [
      {
        message:
          `signal amplitude at the last training step (${last}) is ${fmt(signal)} (SNR ${fmt(schedule.terminalSnr)}) ` +
          `with ${describeSchedule(setup, schedule)}: ${consequence}` +
          assumedNote(setup, scheduleConcepts(setup)),
        at: setup.fields.betas && !setup.fields.betas.assumed ? 'betas' : 'betaSchedule',
        severity,
        fixes: fix ? [fix] : [],
      },
    ];
  },
});
