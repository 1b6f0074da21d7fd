/**
 * The questions a multi-file fix asks about the program that reads a document: can it express
 * the zero-terminal-SNR rescale (a flag, an explicit beta list, or not at all), does its sampler
 * use a timestep spacing, what bounds the infinite first sigma of a zero-SNR schedule for it, and
 * what to change instead where it cannot take a setting. The generic reading answers for
 * documents no consumer profile recognises; the profile reading answers from the consumer's facts
 * (setup.consumer, filled by the consumer profile stage).
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
  /**
   * How the rescale is written: the reader's flag, the rescaled explicit beta list, or 'none'
   * when the reader can take neither (then `cannot` says what to change instead).
   */
  zeroSnrWrite(setup: Setup): 'flag' | 'betas' | 'none';
  /** 'trailing' where the sampler uses a timestep spacing; 'ignored' where it does not. */
  spacingWrite(setup: Setup): 'trailing' | 'ignored';
  /** For a sigma-space sampler on a zero-SNR schedule. */
  sigmaBound(setup: Setup): SigmaBound;
  /** What to change instead when the reader cannot take a concept; null when it can. */
  cannot(setup: Setup, concept: Concept): string | null;
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
  cannot() {
    return null;
  },
};

/** The consumer's own words for a concept it cannot take, or null when it takes it. */
function cannotTake(setup: Setup, concept: Concept): string | null {
  const consumer = setup.consumer;
  if (!consumer?.insertKeys) return null;
  if (consumer.insertKeys[concept] !== null || setup.fields[concept]?.source) return null;
  return consumer.cannotExpress[concept] ?? `${consumer.decision.className ?? 'the consuming code'} has no setting for ${concept}`;
}

/**
 * The answers of a consumer profile (consumers/profiles/): the class's rescale flag where it has
 * one; the rescaled list under its explicit-beta key where that is its only way (the
 * latent-diffusion model's given betas); none where it has neither that works. Spacing is
 * ignored by a class with a fixed spacing, and by a class that starts Karras sigmas at the largest
 * training sigma. A class that clamps the last abar under its own flag bounds the first sigma.
 */
export const PROFILE_READER: ReaderAnswers = {
  basis: 'consumer profile',
  zeroSnrWrite(setup) {
    const consumer = setup.consumer;
    if (setup.fields.betas?.source) return 'betas';
    if (consumer?.rescaleViaBetas) return 'betas';
    return cannotTake(setup, 'zeroTerminalSnr') === null ? 'flag' : 'none';
  },
  spacingWrite(setup) {
    const consumer = setup.consumer;
    if (consumer?.fixedSpacing) return 'ignored';
    if (consumer?.karrasStartsAtMax && setup.fields.karrasSigmas?.value === true) return 'ignored';
    if (cannotTake(setup, 'timestepSpacing') !== null) return 'ignored';
    return GENERIC_READER.spacingWrite(setup);
  },
  sigmaBound(setup) {
    const consumer = setup.consumer;
    if (consumer?.clampsZeroSnrSigma && PROFILE_READER.zeroSnrWrite(setup) === 'flag') {
      const who = consumer.decision.className ?? 'the consuming class';
      return { kind: 'settings', writes: [], note: `${who} clamps abar at the last step to 2^-24 under its rescale flag (first sigma about 4096)` };
    }
    return GENERIC_READER.sigmaBound(setup);
  },
  cannot: cannotTake,
};

/** The answers for a document: its consumer profile's where one recognised it, else the generic reading. */
export function readerAnswersFor(setup: Setup): ReaderAnswers {
  return setup.consumer && setup.consumer.decision.family !== 'generic' ? PROFILE_READER : GENERIC_READER;
}
