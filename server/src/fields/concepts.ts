/** The tool's own vocabulary (DESIGN section 3). Alias spellings live in aliases.ts. */

export type BetaScheduleKind = 'linear' | 'scaled_linear' | 'cosine' | 'sigmoid';
/** 'edm': the preconditioning of Karras et al. 2022 (a class implies it; no key spells it). */
export type PredictionTarget = 'epsilon' | 'v' | 'x0' | 'flow' | 'edm';
export type TimestepSpacing = 'leading' | 'linspace' | 'trailing' | 'uniform' | 'quadratic';
export type SamplerFamily =
  | 'ddim'
  | 'ddpm'
  | 'euler'
  | 'euler-ancestral'
  | 'heun'
  | 'dpm-solver'
  | 'dpm-solver-multistep'
  | 'dpm-solver-singlestep'
  | 'lms'
  | 'unipc'
  | 'pndm'
  | 'flow-euler';

/** Normalised value type of each concept. */
export interface ConceptValues {
  trainSteps: number;
  betaSchedule: BetaScheduleKind;
  betaStart: number;
  betaEnd: number;
  betas: number[];
  zeroTerminalSnr: boolean;
  predictionTarget: PredictionTarget;
  timestepSpacing: TimestepSpacing;
  stepsOffset: number;
  sampleSteps: number;
  guidanceScale: number;
  guidanceRescale: number;
  offsetNoise: number;
  minSnrGamma: number;
  thresholding: boolean;
  latentSpace: boolean;
  sigmaMin: number;
  sigmaMax: number;
  rho: number;
  flowShift: number;
  resolution: number;
  sampler: SamplerFamily;
  karrasSigmas: boolean;
}

export type Concept = keyof ConceptValues;

export const CONCEPTS: readonly Concept[] = [
  'trainSteps',
  'betaSchedule',
  'betaStart',
  'betaEnd',
  'betas',
  'zeroTerminalSnr',
  'predictionTarget',
  'timestepSpacing',
  'stepsOffset',
  'sampleSteps',
  'guidanceScale',
  'guidanceRescale',
  'offsetNoise',
  'minSnrGamma',
  'thresholding',
  'latentSpace',
  'sigmaMin',
  'sigmaMax',
  'rho',
  'flowShift',
  'resolution',
  'sampler',
  'karrasSigmas',
];

/**
 * Where a concept normally lives; a fix that inserts a missing concept puts it next to a sibling
 * of the same group.
 */
export type ConceptGroup = 'schedule' | 'sampling' | 'training' | 'model';

export const CONCEPT_GROUP: Record<Concept, ConceptGroup> = {
  trainSteps: 'schedule',
  betaSchedule: 'schedule',
  betaStart: 'schedule',
  betaEnd: 'schedule',
  betas: 'schedule',
  zeroTerminalSnr: 'schedule',
  predictionTarget: 'schedule',
  timestepSpacing: 'schedule',
  stepsOffset: 'schedule',
  sigmaMin: 'schedule',
  sigmaMax: 'schedule',
  rho: 'schedule',
  flowShift: 'schedule',
  karrasSigmas: 'schedule',
  sampler: 'sampling',
  sampleSteps: 'sampling',
  guidanceScale: 'sampling',
  guidanceRescale: 'sampling',
  thresholding: 'sampling',
  offsetNoise: 'training',
  minSnrGamma: 'training',
  resolution: 'training',
  latentSpace: 'model',
};
