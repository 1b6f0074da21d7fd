/**
 * Fix builders more than one rule offers, written once: the same title, effect and edit wherever
 * the fix appears. (The zero-SNR rescale and trailing spacing builders live in util.ts; the
 * closest-spelling edit in suggest.ts.)
 */
import type { ConceptFix } from './types';
import { RETRAIN_NOTE } from './util';

/** Switch the prediction target to velocity (Salimans & Ho 2022): changes what the model learns. */
export function velocityTargetFix(): ConceptFix {
  return {
    title: `Switch the prediction target to v ${RETRAIN_NOTE}`,
    effect: 'needs-retraining',
    edits: [{ kind: 'set', concept: 'predictionTarget', value: 'v' }],
  };
}

/** Sample with as many steps as there are training steps (N = T): sampling only. */
export function stepsToTrainStepsFix(trainSteps: number): ConceptFix {
  return {
    title: `Set the number of sampling steps to ${trainSteps} (sampling only)`,
    effect: 'sampling-only',
    edits: [{ kind: 'set', concept: 'sampleSteps', value: trainSteps }],
  };
}
