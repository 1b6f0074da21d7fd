import { fmt } from './format';
import { defineRule, type ConceptFix, type RuleMeta } from './types';

const docs = `
## What triggers it

A guidance rescale factor phi outside [0, 1] (error), or exactly 1 (information).

## What the run loses

Guidance rescale blends two predictions: x_out = phi * x_rescaled + (1 - phi) * x_cfg. phi is a
mixing weight: below 0 or above 1 the blend extrapolates past both predictions and the output's
contrast is no longer controlled. At phi = 1 the output takes the standard deviation of the
conditional prediction exactly; Lin et al. 2023 report that this fully rescaled output looks
flat and plain, and use 0.7 instead.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: night storyboard sampler
num_inference_steps: 30
guidance_scale: 7.5
guidance_rescale: 1.4
\`\`\`

## The repaired config

\`\`\`yaml
num_inference_steps: 30
guidance_scale: 7.5
guidance_rescale: 0.7
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. Both fixes (set \`suggestedRescale\`, preferred; or clamp into [0, 1]) only change
inference.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (section 3.4, equations 13 to 16, and the choice phi = 0.7).
`;

const meta = {
  id: 'guidance-rescale-range',
  summary: 'Guidance rescale outside [0, 1], or exactly 1.',
  defaultSeverity: 'error',
  repair: { effects: ['sampling-only'], everyFinding: true },
  options: {
    suggestedRescale: { default: 0.7, description: 'The guidance rescale the preferred fix writes.' },
  },
  docs,
} satisfies RuleMeta;

export const guidanceRescaleRange = defineRule({
  meta,
  check(ctx) {
    const field = ctx.setup.fields.guidanceRescale;
    if (!field || field.assumed || !Number.isFinite(field.value)) return [];
    const phi = field.value;
    const suggested = ctx.options.suggestedRescale;
    const setSuggested: ConceptFix = {
      title: `Set guidance rescale to ${fmt(suggested)} (sampling only)`,
      effect: 'sampling-only',
      preferred: true,
      edits: [{ kind: 'set', concept: 'guidanceRescale', value: suggested }],
    };
    if (phi === 1) {
      return [
        {
          message: `guidance rescale is 1: the output fully takes the conditional prediction's standard deviation and tends to look flat; ${fmt(suggested)} is the usual blend`,
          at: 'guidanceRescale',
          severity: 'info',
          fixes: [setSuggested],
        },
      ];
    }
    if (phi >= 0 && phi <= 1) return [];
    const clamped = phi < 0 ? 0 : 1;
    return [
      {
        message: `guidance rescale ${fmt(phi)} is outside [0, 1]: it is a blend weight, so the output extrapolates past both the guided and the rescaled prediction`,
        at: 'guidanceRescale',
        severity: 'error',
        fixes: [
          setSuggested,
          {
            title: `Clamp guidance rescale to ${clamped} (sampling only)`,
            effect: 'sampling-only',
            edits: [{ kind: 'set', concept: 'guidanceRescale', value: clamped }],
          },
        ],
      },
    ];
  },
});
