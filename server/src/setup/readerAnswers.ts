/**
 * The questions a multi-file fix asks about the program that reads a document: can it express
 * the zero-terminal-SNR rescale as a flag, does its sampler use a timestep spacing, and what
 * bounds the infinite first sigma of a zero-SNR schedule for it. One interface, so that the
 * answers of the generic reading below can be replaced per consumer by reader profiles.
 */
import type { Concept, ConceptValues } from '../fields/concepts';
import type { Setup } from './types';

export interface ReaderWrite {
  concept: Concept;
  value: ConceptValues[Concept];
}

export type SigmaBound =
  /** Settings that make the reader bound the first sigma. */
  | { kind: 'settings'; writes: ReaderWrite[]; note: string }
  /** The reader has no such setting: what the sampling code must do. */
  | { kind: 'code'; instruction: string };

export interface ReaderAnswers {
  /** Where the source names the reader these answers come from ("generic reading", a profile). */
  readonly basis: string;
  /** How the rescale is written: the reader's flag, or the rescaled explicit beta list. */
  zeroSnrWrite(setup: Setup): 'flag' | 'betas';
  /** 'trailing' where the sampler uses a timestep spacing; 'ignored' where it does not. */
  spacingWrite(setup: Setup): 'trailing' | 'ignored';
  /** For a sigma-space sampler on a zero-SNR schedule. */
  sigmaBound(setup: Setup): SigmaBound;
}

/**
 * What sampling code must do at the last step of a zero-SNR schedule in sigma space. The clamp
 * of abar_T to 2^-24 (sigma about 4096, the smallest float16 subnormal) is what the open
 * scheduler classes do under their rescale flag (read from their source); common practice.
 */
export const SIGMA_CLAMP_INSTRUCTION =
  'clamp abar at the last training step to 2^-24 (sigma about 4096) before computing sigmas, and take that first step in float32';

/**
 * The generic reading (DESIGN section 3): a flag for parametric schedules, the list where the file
 * gives explicit betas; spacing is used except with Karras sigmas (their spacing comes from the
 * sigma range); no known setting bounds the first sigma, so the sampling code must.
 */
export const GENERIC_READER: ReaderAnswers = {
  basis: 'generic reading',
  zeroSnrWrite(setup) {
    return setup.fields.betas?.source ? 'betas' : 'flag';
  },
  spacingWrite(setup) {
    return setup.fields.karrasSigmas?.value === true ? 'ignored' : 'trailing';
  },
  sigmaBound() {
    return { kind: 'code', instruction: SIGMA_CLAMP_INSTRUCTION };
  },
};

/** The answers for a document: the swap point for reader profiles. */
export function readerAnswersFor(_setup: Setup): ReaderAnswers {
  return GENERIC_READER;
}
