/**
 * Defaults the setup assumes when a diffusion document leaves a concept out. Each carries the
 * sentence shown to the user, with its basis.
 */
import type { BetaScheduleKind } from '../fields/concepts';

export const DEFAULT_TRAIN_STEPS = 1000;
export const TRAIN_STEPS_NOTE = 'not set: assumed 1000 training steps (Ho et al. 2020; common practice)';

export const DEFAULT_BETA_SCHEDULE: BetaScheduleKind = 'linear';
export const BETA_SCHEDULE_NOTE = 'not set: assumed the linear beta schedule (Ho et al. 2020)';

/** Beta range assumed per schedule family when betaStart / betaEnd are absent. */
export const DEFAULT_BETA_RANGE: Partial<Record<BetaScheduleKind, { start: number; end: number; basis: string }>> = {
  linear: { start: 1e-4, end: 0.02, basis: 'Ho et al. 2020' },
  scaled_linear: {
    start: 0.00085,
    end: 0.012,
    basis: 'common practice for latent models, recalled from memory',
  },
  sigmoid: { start: 1e-4, end: 0.02, basis: 'common practice, same range as linear' },
};

/**
 * In the code family that writes `linear_start` / `linear_end`, the "linear" schedule interpolates
 * sqrt(beta) linearly and squares it: what other code calls scaled_linear (recalled from memory).
 * Its defaults for an absent end of the range are 1e-4 and 2e-2 (recalled from memory).
 */
export const SHORT_FAMILY_RANGE = { start: 1e-4, end: 0.02, basis: 'defaults of that code family, recalled from memory' };
export const SHORT_FAMILY_LINEAR_NOTE =
  '"linear" next to linear_start/linear_end interpolates sqrt(beta) in that code family (recalled from memory): read as scaled_linear';

export const SHORT_FAMILY_DEFAULT_NOTE =
  'with linear_start/linear_end the default schedule of that code family interpolates sqrt(beta) (recalled from memory): assumed scaled_linear';

export const TARGET_NOTE_EPSILON = 'not set: assumed an epsilon (noise) target, the usual default';
export const TARGET_NOTE_FLOW = 'not set: assumed a flow-velocity target (the file sets a flow shift or a flow sampler)';
/** Spacing and offset of discrete samplers when the file sets neither (see SPACING_NOTE, OFFSET_NOTE). */
export const DEFAULT_SPACING = 'leading' as const;
export const DEFAULT_STEPS_OFFSET = 0;
export const SPACING_NOTE = 'not set: assumed leading spacing, the usual default of discrete samplers';
export const OFFSET_NOTE = 'not set: assumed steps offset 0';
export const ZERO_SNR_NOTE = 'not set: assumed the schedule is not rescaled to zero terminal SNR';
export const GUIDANCE_RESCALE_NOTE = 'not set: assumed no guidance rescale (0)';

/** Sampling steps assumed when a file sets a spacing but no step count (common practice). */
export const ASSUMED_SAMPLE_STEPS = 50;

/** Continuous sigma schedule (Karras et al. 2022, their defaults). */
export const DEFAULT_KARRAS = { sigmaMin: 0.002, sigmaMax: 80, rho: 7 } as const;
export const KARRAS_NOTE = 'not set: assumed the default of Karras et al. 2022';

/** Flow matching without a timestep shift (s = 1 leaves t unchanged; Esser et al. 2024). */
export const DEFAULT_FLOW_SHIFT = 1;
export const FLOW_SHIFT_NOTE = 'not set: assumed no timestep shift (1)';

/** Keys that suggest a latent (autoencoder) model; compared against normalised key segments. */
export const LATENT_KEY_HINTS = ['vae', 'latent', 'autoencoder', 'firststage'];
