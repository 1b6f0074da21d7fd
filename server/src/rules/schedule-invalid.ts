import { TRAIN_STEPS_MAX, TRAIN_STEPS_MIN, checkBetas } from '@noiselint/shared-math';
import { CONCEPT_GROUP, type Concept } from '../fields/concepts';
import { fmt } from './format';
import { defineRule, type RuleFinding, type RuleMeta } from './types';
import { assumedNote, hasProblem, problemFindings, sourceOf } from './util';

const docs = `
## What triggers it

Schedule values that cannot describe a valid noise schedule:

- a number of training steps T that is not an integer in [2, 100000] (larger values are
  refused before anything is computed);
- a beta start or end outside (0, 1], or a start larger than the end;
- an explicit beta list with a value outside (0, 1], a 1 before the last step, a non-number, or
  a length different from T;
- a non-positive sigma, rho or flow shift, or a sigma minimum not below the maximum;
- schedule fields whose value is not a number, not an integer or of the wrong type;
- a schedule field set twice (two sections or two spellings) with different values: a warning
  on the one that is ignored (the first in the file is used).

## What the run loses

Every other check rests on the schedule's numbers. A beta of 0 or below, or above 1, has no
meaning (abar would grow, or turn negative); a 1 before the last step wipes out all signal for
the remaining steps; a list whose length disagrees with T means the training code either
crashes or silently uses a different schedule from the one written down.

## A flagged config

\`\`\`yaml
# Lanternfish Pictures: experimental schedule
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: linear
  beta_start: 0.02
  beta_end: 0.0001
\`\`\`

## The repaired config

\`\`\`yaml
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: linear
  beta_start: 0.0001
  beta_end: 0.02
\`\`\`

## Effect on a trained checkpoint

No repair offered: the intended value cannot be guessed.

## Numbers you can tune


## Published sources

- Ho, Jain and Abbeel 2020, "Denoising Diffusion Probabilistic Models" (betas in (0, 1),
  increasing: 1e-4 to 0.02 over T = 1000).
- Lin, Liu, Li and Yang 2023, "Common Diffusion Noise Schedules and Sample Steps are Flawed"
  (a last beta of exactly 1 gives zero terminal SNR).
`;

const meta = {
  id: 'schedule-invalid',
  summary: 'Schedule values that cannot describe a valid noise schedule.',
  defaultSeverity: 'error',
  repair: null,
  options: {},
  docs,
} satisfies RuleMeta;

/** Up to three bad entries of a beta list, in one line; null when the list is fine. */
function badBetas(betas: readonly number[]): string | null {
  if (betas.length === 0 || betas.length > TRAIN_STEPS_MAX) return checkBetas(betas);
  const found: string[] = [];
  let more = 0;
  const n = betas.length;
  for (let i = 0; i < n; i++) {
    const b = betas[i];
    let why: string | null = null;
    if (typeof b !== 'number' || !Number.isFinite(b)) why = `beta[${i}] is not a finite number`;
    else if (b <= 0 || b > 1) why = `beta[${i}] = ${fmt(b)} is outside (0, 1]`;
    else if (b === 1 && i !== n - 1) why = `beta[${i}] = 1 before the last step removes all signal from there on`;
    if (!why) continue;
    if (found.length < 3) found.push(why);
    else more++;
  }
  if (found.length === 0) return null;
  return found.join('; ') + (more > 0 ? `; and ${more} more` : '');
}

const POSITIVE: readonly Concept[] = ['sigmaMin', 'sigmaMax', 'rho', 'flowShift'];

export const scheduleInvalid = defineRule({
  meta,
  check(ctx) {
    const { setup, analysis } = ctx;
    const out: RuleFinding[] = problemFindings(setup, 'schedule-invalid');
    const usable = (c: Concept) => sourceOf(setup, c) !== null && !hasProblem(setup, c);

    const T = setup.fields.trainSteps?.value;
    if (usable('trainSteps') && T !== undefined && !(Number.isInteger(T) && T >= TRAIN_STEPS_MIN && T <= TRAIN_STEPS_MAX)) {
      out.push({
        message: `the number of training steps T = ${fmt(T)} is outside ${TRAIN_STEPS_MIN}..${TRAIN_STEPS_MAX}; no schedule is computed`,
        at: 'trainSteps',
      });
    }

    const kind = setup.fields.betaSchedule?.value;
    const explicit = usable('betas');
    if (!explicit && kind !== 'cosine') {
      for (const c of ['betaStart', 'betaEnd'] as const) {
        const v = setup.fields[c]?.value;
        if (usable(c) && v !== undefined && !(v > 0 && v <= 1)) {
          out.push({ message: `${c} ${fmt(v)} is outside (0, 1]`, at: c });
        }
      }
      const b0 = setup.fields.betaStart?.value;
      const b1 = setup.fields.betaEnd?.value;
      if ((usable('betaStart') || usable('betaEnd')) && b0 !== undefined && b1 !== undefined && b0 > 0 && b1 <= 1 && b0 > b1) {
        out.push({
          message:
            `betaStart ${fmt(b0)} is larger than betaEnd ${fmt(b1)}: noise would be added fastest at the start and slowest at the end` +
            assumedNote(setup, ['betaStart', 'betaEnd']),
          at: usable('betaStart') ? 'betaStart' : 'betaEnd',
          related: usable('betaStart') && usable('betaEnd') ? [{ concept: 'betaEnd', message: `betaEnd is ${fmt(b1)} here` }] : [],
        });
      }
    }

    const betas = setup.fields.betas?.value;
    if (explicit && betas) {
      const bad = badBetas(betas);
      if (bad) out.push({ message: `the explicit beta list is invalid: ${bad}`, at: 'betas' });
      if (T !== undefined && Number.isInteger(T) && betas.length !== T && !hasProblem(setup, 'trainSteps')) {
        out.push({
          message: `the explicit beta list has ${betas.length} entries but T is ${fmt(T)}` + assumedNote(setup, ['trainSteps']),
          at: 'betas',
          related: usable('trainSteps') ? [{ concept: 'trainSteps', message: `T = ${fmt(T)} is set here` }] : [],
        });
      }
    }

    for (const c of POSITIVE) {
      const v = setup.fields[c]?.value as number | undefined;
      if (usable(c) && v !== undefined && !(v > 0 && Number.isFinite(v))) {
        out.push({ message: `${c} ${fmt(v)} must be a finite number above 0`, at: c });
      }
    }
    const sMin = setup.fields.sigmaMin?.value;
    const sMax = setup.fields.sigmaMax?.value;
    if ((usable('sigmaMin') || usable('sigmaMax')) && sMin !== undefined && sMax !== undefined && sMin > 0 && sMax > 0 && sMin >= sMax) {
      out.push({
        message: `sigmaMin ${fmt(sMin)} is not below sigmaMax ${fmt(sMax)}` + assumedNote(setup, ['sigmaMin', 'sigmaMax']),
        at: usable('sigmaMin') ? 'sigmaMin' : 'sigmaMax',
      });
    }

    // Whatever else stopped the schedule, unless a finding above (or another rule's value problem) explains it.
    const explained = out.length > 0 || setup.problems.some((p) => CONCEPT_GROUP[p.concept] === 'schedule' || p.concept === 'trainSteps');
    if (!explained) {
      for (const problem of analysis.scheduleProblems) {
        out.push({ message: `the schedule cannot be computed: ${problem}`, at: explicit ? 'betas' : 'betaSchedule' });
      }
    }
    return out;
  },
});
