import type { Concept, ConceptValues } from '../fields/concepts';
import { trainingDocumentOf } from '../setup/inherit';
import type { Setup } from '../setup/types';
import { defineRule, type ConceptEdit, type RuleFinding, type RuleMeta } from './types';
import { fmt, fmtDigits } from './format';
import { isSet, showValue, sourceOf } from './util';

const docs = `
## What triggers it

A sampling file that disagrees with its paired training file on something the model was
trained with: the beta schedule, the number of training steps T, beta start or end, an explicit
beta list, the zero-terminal-SNR rescale, or the prediction target. Pairs come from the project
file (\`pairs\`) or from automatic pairing of a training and a sampling file in one folder.
The finding sits in the sampling file and points at the training file's field. Only values the
sampling file writes itself are compared: whatever it leaves out it takes from the training file
(the analysis of the sampling file uses the training file's schedule and target), so a value it
does not set is never a mismatch.

## What the run loses

A sampler reconstructs images with the schedule and target it is told, not the ones the model
learned. A model trained with the zero-terminal-SNR rescale but sampled without it starts from a
step it never saw as pure noise; a v-prediction model sampled as epsilon produces garbage. These
mistakes produce no error, only worse images.

## A flagged config

\`\`\`yaml partner
# training file (paired)
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
\`\`\`

\`\`\`yaml
# Lanternfish Pictures: sampling file for the model above (scheduler copied from the base model)
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: false
  prediction_type: v_prediction
  timestep_spacing: trailing
num_inference_steps: 30
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
  timestep_spacing: trailing
num_inference_steps: 30
\`\`\`

## Effect on a trained checkpoint

Sampling only: the checkpoint stays valid. The fix changes only the sampling file, setting its value to the training file's. The
training file is never edited from here: what the model learned is the reference.

## Numbers you can tune


## Published sources

- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (sampling must use the rescaled schedule the model was trained with).
- Salimans and Ho 2022, "Progressive Distillation for Fast Sampling of Diffusion Models"
  (converting between epsilon and v needs the same abar on both sides).
`;

const meta = {
  id: 'train-sample-mismatch',
  summary: 'Paired training and sampling files disagree on the schedule, T, betas, zero SNR or target.',
  defaultSeverity: 'error',
  repair: { effects: ['sampling-only'], everyFinding: true },
  options: {},
  docs,
} satisfies RuleMeta;

const COMPARED: readonly Concept[] = ['betaSchedule', 'trainSteps', 'betaStart', 'betaEnd', 'betas', 'zeroTerminalSnr', 'predictionTarget'];

const LABEL: Partial<Record<Concept, string>> = {
  betaSchedule: 'beta schedule',
  trainSteps: 'number of training steps',
  betaStart: 'betaStart',
  betaEnd: 'betaEnd',
  betas: 'explicit beta list',
  zeroTerminalSnr: 'zero-terminal-SNR rescale',
  predictionTarget: 'prediction target',
};

function close(a: number, b: number): boolean {
  return a === b || Math.abs(a - b) <= 1e-9 * Math.max(Math.abs(a), Math.abs(b));
}

function same(a: ConceptValues[Concept], b: ConceptValues[Concept]): boolean {
  if (typeof a === 'number' && typeof b === 'number') return close(a, b);
  if (Array.isArray(a) && Array.isArray(b)) return a.length === b.length && a.every((x, i) => close(x, b[i]!));
  return a === b;
}

/** Both values shown with enough digits to tell them apart (0.012 vs 0.0120001). */
function showPair(a: ConceptValues[Concept], b: ConceptValues[Concept]): [string, string] {
  if (typeof a === 'number' && typeof b === 'number') {
    let x = fmt(a);
    let y = fmt(b);
    for (let digits = 4; x === y && digits <= 12; digits++) {
      x = fmtDigits(a, digits);
      y = fmtDigits(b, digits);
    }
    return [x, y];
  }
  return [showValue(a), showValue(b)];
}

/** "has 5 entries where", "differs at beta[3] (0.5 where ... has 0.4) from" */
function betasDifference(mine: number[], theirs: number[]): string {
  if (mine.length !== theirs.length) return `has ${mine.length} entries where ${theirs.length} come from`;
  const i = mine.findIndex((x, k) => !close(x, theirs[k]!));
  const [x, y] = showPair(mine[i]!, theirs[i]!);
  return `differs at beta[${i}] (${x} where the training list has ${y}) from`;
}

function usesExplicitBetas(setup: Setup): boolean {
  return isSet(setup, 'betas');
}

/** Concepts worth comparing between the two setups. */
function comparable(concept: Concept, sampling: Setup, training: Setup): boolean {
  const explicitS = usesExplicitBetas(sampling);
  const explicitT = usesExplicitBetas(training);
  if (concept === 'betas') return explicitS || explicitT;
  if (concept === 'betaSchedule' || concept === 'betaStart' || concept === 'betaEnd') {
    if (explicitS || explicitT) return false;
    if (concept !== 'betaSchedule' && (sampling.fields.betaSchedule?.value === 'cosine' || training.fields.betaSchedule?.value === 'cosine'))
      return false;
  }
  return true;
}

export const trainSampleMismatch = defineRule({
  meta,
  check(ctx) {
    const { setup } = ctx;
    if (ctx.pairRole === 'training' || (ctx.pairRole === undefined && setup.role === 'training')) return [];
    const partner = trainingDocumentOf(ctx.partners);
    if (!partner) return [];
    const training = partner.setup;
    const out: RuleFinding[] = [];
    for (const concept of COMPARED) {
      if (!comparable(concept, setup, training)) continue;
      const mine = setup.fields[concept];
      const theirs = training.fields[concept];
      // What the sampling file does not write it inherits: only its own values can disagree.
      if (!mine || !theirs || mine.assumed || !mine.source || mine.inherited) continue;
      if (same(mine.value, theirs.value)) continue;
      const label = LABEL[concept] ?? concept;
      const [mineShown, theirsShown] = showPair(mine.value, theirs.value);
      const mineText = mineShown;
      const theirsText = `${theirsShown}${theirs.assumed ? ' (assumed: the training file sets none)' : ''}`;
      const theirSource = sourceOf(training, concept);
      const edit = { kind: 'set', concept, value: theirs.value } as ConceptEdit;
      const message =
        concept === 'betas'
          ? `the sampling file's explicit beta list ${betasDifference(mine.value as number[], theirs.value as number[])} the training file ${partner.path}: the sampler must use the betas the model was trained with`
          : `the sampling file's ${label} is ${mineText} but the training file ${partner.path} uses ${theirsText}: the sampler must use what the model was trained with`;
      out.push({
        message,
        at: concept,
        related: theirSource ? [{ source: theirSource, path: partner.path, message: `the training file sets the ${label} here` }] : [],
        fixes: [
          {
            title:
              concept === 'betas'
                ? "Copy the training file's beta list into the sampling file (sampling only)"
                : `Set the sampling file's ${label} to ${theirsShown}, as in training (sampling only)`,
            effect: 'sampling-only',
            edits: [edit],
          },
        ],
      });
    }
    return out;
  },
});
