/**
 * How a fix spells what it writes: keys for inserted concepts and enum values, in the spelling
 * family the file already uses. Input spellings (what the reader accepts) live in
 * fields/aliases.ts; every spelling here must also be an input alias there, so that a fixed file
 * reads back as intended (test/fix/spellings.test.ts checks this).
 */
import type { BetaScheduleKind, Concept, PredictionTarget, SamplerFamily, TimestepSpacing } from '../fields/concepts';

export type KeyStyle = 'snake' | 'camel' | 'short';

/** Key written when a fix inserts a concept the file does not set; null: never inserted. */
export const INSERT_KEY: Record<Concept, Record<KeyStyle, string> | null> = {
  trainSteps: { snake: 'num_train_timesteps', camel: 'numTrainTimesteps', short: 'timesteps' },
  betaSchedule: { snake: 'beta_schedule', camel: 'betaSchedule', short: 'beta_schedule' },
  betaStart: { snake: 'beta_start', camel: 'betaStart', short: 'linear_start' },
  betaEnd: { snake: 'beta_end', camel: 'betaEnd', short: 'linear_end' },
  betas: { snake: 'trained_betas', camel: 'trainedBetas', short: 'trained_betas' },
  zeroTerminalSnr: { snake: 'rescale_betas_zero_snr', camel: 'rescaleBetasZeroSnr', short: 'zero_terminal_snr' },
  predictionTarget: { snake: 'prediction_type', camel: 'predictionType', short: 'parameterization' },
  timestepSpacing: { snake: 'timestep_spacing', camel: 'timestepSpacing', short: 'timestep_spacing' },
  stepsOffset: { snake: 'steps_offset', camel: 'stepsOffset', short: 'steps_offset' },
  sampleSteps: { snake: 'num_inference_steps', camel: 'numInferenceSteps', short: 'ddim_steps' },
  guidanceScale: { snake: 'guidance_scale', camel: 'guidanceScale', short: 'cfg_scale' },
  guidanceRescale: { snake: 'guidance_rescale', camel: 'guidanceRescale', short: 'cfg_rescale' },
  offsetNoise: { snake: 'noise_offset', camel: 'noiseOffset', short: 'offset_noise' },
  minSnrGamma: { snake: 'snr_gamma', camel: 'snrGamma', short: 'min_snr_gamma' },
  thresholding: { snake: 'clip_sample', camel: 'clipSample', short: 'thresholding' },
  latentSpace: null,
  sigmaMin: { snake: 'sigma_min', camel: 'sigmaMin', short: 'sigma_min' },
  sigmaMax: { snake: 'sigma_max', camel: 'sigmaMax', short: 'sigma_max' },
  rho: { snake: 'rho', camel: 'rho', short: 'rho' },
  flowShift: { snake: 'flow_shift', camel: 'flowShift', short: 'shift' },
  resolution: { snake: 'resolution', camel: 'resolution', short: 'resolution' },
  sampler: { snake: 'sampler', camel: 'sampler', short: 'sampler' },
  karrasSigmas: { snake: 'use_karras_sigmas', camel: 'useKarrasSigmas', short: 'use_karras_sigmas' },
};

/**
 * Keys that travel in pairs: when the target map spells the partner this way, the inserted key
 * follows it (a map with `cfg_scale` gets `cfg_rescale`, not `guidance_rescale`).
 */
export const PARTNER_KEYS: { concept: Concept; partner: string; key: string }[] = [
  { concept: 'guidanceRescale', partner: 'cfg_scale', key: 'cfg_rescale' },
  { concept: 'guidanceRescale', partner: 'cfgScale', key: 'cfgRescale' },
  { concept: 'guidanceRescale', partner: 'guidance_scale', key: 'guidance_rescale' },
  { concept: 'guidanceRescale', partner: 'guidanceScale', key: 'guidanceRescale' },
  { concept: 'betaEnd', partner: 'linear_start', key: 'linear_end' },
  { concept: 'betaStart', partner: 'linear_end', key: 'linear_start' },
  { concept: 'betaEnd', partner: 'beta_start', key: 'beta_end' },
  { concept: 'betaStart', partner: 'beta_end', key: 'beta_start' },
];

/** Choice of an inserted key: the partner rule first, then the file's style. */
export function insertKeyFor(concept: Concept, style: KeyStyle, keysInTargetMap: readonly string[]): string | null {
  for (const p of PARTNER_KEYS) if (p.concept === concept && keysInTargetMap.includes(p.partner)) return p.key;
  return INSERT_KEY[concept]?.[style] ?? null;
}

/**
 * Enum value spellings, in families. A fix writes the family of the value it replaces; when that
 * is unknown, the family the key suggests; else the one of the file's key style.
 */
/** Targets a key can spell (the EDM preconditioning is implied by a class, never written as a value). */
type SpelledTarget = Exclude<PredictionTarget, 'edm'>;

export const TARGET_SPELLINGS: Record<'long' | 'short' | 'words' | 'pred', Record<SpelledTarget, string>> = {
  // prediction_type style: epsilon, v_prediction, sample.
  long: { epsilon: 'epsilon', v: 'v_prediction', x0: 'sample', flow: 'flow' },
  // parameterization style: eps, v, x0.
  short: { epsilon: 'eps', v: 'v', x0: 'x0', flow: 'flow' },
  // noise, velocity, x_start.
  words: { epsilon: 'noise', v: 'velocity', x0: 'x_start', flow: 'flow' },
  // objective style: pred_noise, pred_v, pred_x0.
  pred: { epsilon: 'pred_noise', v: 'pred_v', x0: 'pred_x0', flow: 'pred_flow' },
};

/** Keys whose value family is known from the key alone (compared case- and separator-insensitively). */
const TARGET_FAMILY_BY_KEY: Record<string, keyof typeof TARGET_SPELLINGS> = {
  predictiontype: 'long',
  parameterization: 'short',
  objective: 'pred',
};

export const SCHEDULE_SPELLINGS: Record<'long' | 'short', Record<BetaScheduleKind, string>> = {
  // The snake-case family names the cosine schedule squaredcos_cap_v2 (Nichol & Dhariwal 2021 with
  // the 0.999 cap); other families write cosine.
  long: { linear: 'linear', scaled_linear: 'scaled_linear', cosine: 'squaredcos_cap_v2', sigmoid: 'sigmoid' },
  short: { linear: 'linear', scaled_linear: 'scaled_linear', cosine: 'cosine', sigmoid: 'sigmoid' },
};

export const SPACING_SPELLINGS: Record<TimestepSpacing, string> = {
  leading: 'leading',
  linspace: 'linspace',
  trailing: 'trailing',
  uniform: 'uniform',
  quadratic: 'quadratic',
};

export const SAMPLER_SPELLINGS: Record<SamplerFamily, string> = {
  ddim: 'ddim',
  ddpm: 'ddpm',
  euler: 'euler',
  'euler-ancestral': 'euler_ancestral',
  heun: 'heun',
  'dpm-solver': 'dpm_solver',
  'dpm-solver-multistep': 'dpm_solver_multistep',
  'dpm-solver-singlestep': 'dpm_solver_singlestep',
  lms: 'lms',
  unipc: 'unipc',
  pndm: 'pndm',
  'flow-euler': 'flow_euler',
};

function squash(s: string): string {
  return s.toLowerCase().replace(/[_\-\s]/g, '');
}

/**
 * Spelling of an enum value of `concept`. `oldValue` is the raw value being replaced (unquoted),
 * `key` the key it sits under. Returns null when the value cannot be written in that place.
 */
export function spellEnum(concept: Concept, value: string, context: { key: string | null; oldValue: string | null; style: KeyStyle }): string | null {
  const old = context.oldValue?.trim() ?? null;
  switch (concept) {
    case 'predictionTarget': {
      const target = value as PredictionTarget;
      let family: keyof typeof TARGET_SPELLINGS | undefined;
      if (old) {
        for (const [name, spellings] of Object.entries(TARGET_SPELLINGS) as [keyof typeof TARGET_SPELLINGS, Record<string, string>][]) {
          if (Object.values(spellings).some((s) => s !== 'flow' && squash(s) === squash(old))) {
            family = name;
            break;
          }
        }
      }
      family ??= context.key ? TARGET_FAMILY_BY_KEY[squash(context.key)] : undefined;
      family ??= context.style === 'short' ? 'short' : 'long';
      return target === 'edm' ? null : (TARGET_SPELLINGS[family][target] ?? null);
    }
    case 'betaSchedule': {
      const kind = value as BetaScheduleKind;
      let family: 'long' | 'short' = context.style === 'snake' ? 'long' : 'short';
      if (old && squash(old) === 'squaredcoscapv2') family = 'long';
      else if (old && squash(old) === 'cosine') family = 'short';
      return SCHEDULE_SPELLINGS[family][kind] ?? null;
    }
    case 'timestepSpacing':
      return SPACING_SPELLINGS[value as TimestepSpacing] ?? null;
    case 'sampler': {
      // A class-name value (e.g. `DDIMSampler`) cannot be rewritten by spelling alone.
      if (old && /[A-Z]/.test(old) && !/[_\-\s]/.test(old)) return null;
      return SAMPLER_SPELLINGS[value as SamplerFamily] ?? null;
    }
    default:
      return null;
  }
}

/**
 * A boolean key that stands for a prediction target (`v_parameterization: true`): the boolean to
 * write for a target, or null when the target cannot be expressed that way.
 */
export function targetAsBoolean(target: PredictionTarget): boolean | null {
  if (target === 'v') return true;
  if (target === 'epsilon') return false;
  return null;
}

/** Concepts whose values are integers (written without a decimal point). */
export const INTEGER_CONCEPTS: ReadonlySet<Concept> = new Set<Concept>(['trainSteps', 'stepsOffset', 'sampleSteps', 'resolution']);
