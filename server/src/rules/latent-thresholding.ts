import { defineRule, type RuleMeta } from './types';
import { assumedNote } from './util';

const docs = `
## What triggers it

Sample clipping or dynamic thresholding turned on for a model that denoises latents rather than
pixels. Whether a model is latent comes from the project file's \`latentSpace\` setting, or is
inferred from the file: a scaled_linear schedule (the usual choice of latent models), or a key
naming an autoencoder (\`vae\`, \`autoencoder\`, \`first_stage\`, \`latent...\`). The message
says how it was decided. A saved scheduler config that leaves \`clip_sample\` out is read with its
class's default: the DDIM and DDPM classes of the open diffusion library clip when the key is
absent, and the message says that the value is assumed.

## What the run loses

Clipping the predicted clean sample to [-1, 1], and dynamic thresholding (Saharia et al. 2022),
assume pixel values in a known, bounded range. Latents are not bounded that way: their scale
depends on the autoencoder and its scaling factor, and values beyond 1 carry real content.
Clipping them flattens highlights and shadows, the very detail that dark night scenes and white
product backgrounds need.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: latent storyboard model
autoencoder: lanternfish-ae-f8
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  clip_sample: true
\`\`\`

## The repaired config

\`\`\`yaml
autoencoder: lanternfish-ae-f8
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  clip_sample: false
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. The fix turns clipping off; it changes only sampling.

## Numbers you can tune


## Published sources

- Saharia et al. 2022, "Photorealistic Text-to-Image Diffusion Models with Deep Language
  Understanding" (dynamic thresholding, for pixel-space models).
- Rombach, Blattmann, Lorenz, Esser and Ommer 2022, "High-Resolution Image Synthesis with Latent
  Diffusion Models" (latents and their scaling).
`;

const meta = {
  id: 'latent-thresholding',
  summary: 'Sample clipping or dynamic thresholding on a latent-space model.',
  defaultSeverity: 'warning',
  repair: { effects: ['sampling-only'], everyFinding: true },
  options: {},
  docs,
} satisfies RuleMeta;

export const latentThresholding = defineRule({
  meta,
  check(ctx) {
    const { setup } = ctx;
    const thresholding = setup.fields.thresholding;
    if (!thresholding || thresholding.value !== true) return [];
    // An assumed "on" counts only when it is the consuming class's own default (consumer profile).
    if (thresholding.assumed && !setup.consumer?.decision.className) return [];
    if (setup.fields.latentSpace?.value !== true) return [];
    return [
      {
        message:
          'sample clipping / thresholding is on, but the model denoises latents: latents are not bounded to [-1, 1], ' +
          'so clipping cuts off real content (deep shadows, bright highlights)' +
          assumedNote(setup, ['thresholding', 'latentSpace']),
        at: 'thresholding',
        fixes: [
          {
            title: 'Turn sample clipping / thresholding off (sampling only)',
            effect: 'sampling-only',
            edits: [{ kind: 'set', concept: 'thresholding', value: false }],
          },
        ],
      },
    ];
  },
});
