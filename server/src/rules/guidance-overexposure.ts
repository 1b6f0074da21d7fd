import type { ScheduleAnalysis } from '../analysis/analysis';
import { fmt } from './format';
import { defineRule, type RuleContext, type RuleMeta } from './types';
import { assumedNote, discreteSchedule, inheritsSchedule, scheduleConcepts, setsSchedule } from './util';

const docs = `
## What triggers it

Classifier-free guidance with a scale above 1 and no guidance rescale (none set, or 0) on a
schedule whose last-step signal amplitude is below \`nearZeroSignal\`, that is a (near)
zero-terminal-SNR schedule. When a sampling file sets no schedule of its own, the schedule of
its paired training file is used.

## What the run loses

Guidance extrapolates: x_cfg = x_neg + w (x_pos - x_neg). On a schedule that reaches zero SNR
the first steps start from pure noise, and a large w pushes the prediction's standard deviation
far above that of the conditional prediction. The result is over-exposed, over-saturated
images. Lin et al. 2023 rescale the guided prediction back to the standard deviation of the
conditional one and blend: x_out = phi * x_cfg * std(x_pos) / std(x_cfg) + (1 - phi) * x_cfg,
with phi = 0.7 (guidance 7.5 with rescale 0.7 is common practice).

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: high-key product stills, sampling
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  timestep_spacing: trailing
  prediction_type: v_prediction
num_inference_steps: 30
guidance_scale: 7.5
\`\`\`

## The repaired config

\`\`\`yaml
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  timestep_spacing: trailing
  prediction_type: v_prediction
num_inference_steps: 30
guidance_scale: 7.5
guidance_rescale: 0.7
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. The fix sets the guidance rescale to \`suggestedRescale\`; it only changes inference.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (section 3.4, equations 13 to 16: rescaling classifier-free guidance).
- Ho and Salimans 2022, "Classifier-Free Diffusion Guidance".
`;

const meta = {
  id: 'guidance-overexposure',
  summary: 'Guidance above 1 on a (near) zero-SNR schedule without guidance rescale.',
  defaultSeverity: 'warning',
  repair: { effects: ['sampling-only'], everyFinding: true },
  options: {
    nearZeroSignal: {
      default: 1e-3,
      description: 'Last-step signal amplitude below which the schedule counts as (near) zero SNR. A project default.',
    },
    suggestedRescale: { default: 0.7, description: 'The guidance rescale the fix writes (Lin et al. 2023 use 0.7).' },
  },
  docs,
} satisfies RuleMeta;

/** The document's own schedule, or (for a sampling file that sets none) its training partner's. */
function effectiveSchedule(ctx: RuleContext): { schedule: ScheduleAnalysis; partnerPath?: string } | null {
  const own = discreteSchedule(ctx.analysis);
  if (own && inheritsSchedule(ctx.setup)) return { schedule: own, partnerPath: ctx.setup.inherited?.from };
  if (own && setsSchedule(ctx.setup)) return { schedule: own };
  for (const partner of ctx.partners) {
    const theirs = discreteSchedule(partner.analysis);
    if (theirs && partner.setup.role !== 'sampling' && setsSchedule(partner.setup)) return { schedule: theirs, partnerPath: partner.path };
  }
  return null;
}

export const guidanceOverexposure = defineRule({
  meta,
  check(ctx) {
    const { setup } = ctx;
    const scale = setup.fields.guidanceScale;
    if (!scale || scale.assumed || !(scale.value > 1)) return [];
    const rescale = setup.fields.guidanceRescale;
    if (rescale && !rescale.assumed && rescale.value !== 0) return [];
    const found = effectiveSchedule(ctx);
    if (!found) return [];
    const nearZero = ctx.options.nearZeroSignal;
    const suggested = ctx.options.suggestedRescale;
    const { schedule, partnerPath } = found;
    if (!(schedule.terminalSignal < nearZero)) return [];
    const whose = partnerPath ? `the paired training file's schedule (${partnerPath})` : 'the schedule';
    const rescaleText = rescale && !rescale.assumed ? 'guidance rescale 0' : 'no guidance rescale';
    return [
      {
        message:
          `guidance scale ${fmt(scale.value)} with ${rescaleText}, while ${whose} ends at signal amplitude ` +
          `${fmt(schedule.terminalSignal)} (below ${fmt(nearZero)}): guided predictions overshoot and samples over-expose` +
          (partnerPath ? '' : assumedNote(setup, scheduleConcepts(setup))),
        at: 'guidanceScale',
        fixes: [
          {
            title: `Set guidance rescale to ${fmt(suggested)} (sampling only)`,
            effect: 'sampling-only',
            edits: [{ kind: 'set', concept: 'guidanceRescale', value: suggested }],
          },
        ],
      },
    ];
  },
});
