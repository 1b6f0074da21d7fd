/**
 * The alias table (DESIGN section 3): key spellings that name each concept and value spellings
 * that name each enum member. These are input spellings found in existing configs; the tool's
 * own names are the concepts in concepts.ts.
 *
 * Key kinds (the ambiguity policy):
 * - 'key': a specific spelling. A scalar value that cannot be read becomes a ValueProblem.
 * - 'ambiguous': a generic word (`schedule`, `timesteps`, `shift`, `rho`, `betas`, `scheduler`,
 *   `sampler`, `objective`). It counts only when the value fits: an enum value that is known or within a
 *   small edit distance of a known spelling (reported as unknown-value with a suggestion), a
 *   number for `shift` and `rho`, an integer for `timesteps`, a list of at least 3 numbers for
 *   `betas` (Adam's `betas: [0.9, 0.999]` is not a schedule). Maps are sections, never values. Ambiguous keys
 *   under a learning-rate, optimizer, warm-up or EMA section are ignored (`lr_scheduler.schedule:
 *   linear` is not a beta schedule).
 * - 'class-name': a field whose value names a class or function (`_class_name`, `class_name`,
 *   `target`, `_target_`). It counts only when the value looks like a scheduler or sampler name
 *   (ends in Scheduler/Sampler, or starts with `sample_`) and names a known method; anything
 *   else is ignored silently (other classes are not our business).
 *
 * A key may also be a dotted path suffix (`model.params.timesteps`), which matches when the
 * entry's path ends with those segments; dotted aliases are specific ('key'). Keys compare
 * case-insensitively with `_`, `-` and camelCase treated alike.
 */
import type { Concept } from './concepts';

export type AliasKind = 'key' | 'ambiguous' | 'class-name';

export interface KeyAlias {
  /** As written in configs (documentation and key style); compared via keySegments(). */
  spelling: string;
  kind: AliasKind;
  /** Spelling family: 'short' for the terse family (`timesteps`, `linear_start`). */
  style: 'snake' | 'short';
}

const key = (spelling: string, style: 'snake' | 'short' = 'snake'): KeyAlias => ({ spelling, kind: 'key', style });
const ambiguous = (spelling: string, style: 'snake' | 'short' = 'snake'): KeyAlias => ({
  spelling,
  kind: 'ambiguous',
  style,
});
const className = (spelling: string): KeyAlias => ({ spelling, kind: 'class-name', style: 'snake' });

export const KEY_ALIASES: Record<Concept, KeyAlias[]> = {
  trainSteps: [
    key('num_train_timesteps'),
    key('num_timesteps'),
    key('diffusion_steps'),
    key('num_diffusion_timesteps'),
    key('model.params.timesteps', 'short'),
    ambiguous('timesteps', 'short'),
  ],
  betaSchedule: [key('beta_schedule'), key('noise_schedule'), ambiguous('schedule')],
  betaStart: [key('beta_start'), key('linear_start', 'short')],
  betaEnd: [key('beta_end'), key('linear_end', 'short')],
  // `betas` alone is also the Adam optimizer's pair: it needs a list of at least 3 numbers.
  betas: [key('trained_betas'), key('given_betas', 'short'), ambiguous('betas')],
  zeroTerminalSnr: [key('rescale_betas_zero_snr'), key('zero_terminal_snr')],
  predictionTarget: [key('prediction_type'), key('parameterization', 'short'), key('v_parameterization'), ambiguous('objective')],
  timestepSpacing: [key('timestep_spacing')],
  stepsOffset: [key('steps_offset')],
  sampleSteps: [
    key('num_inference_steps'),
    key('sampling_steps'),
    key('sample_steps'),
    key('num_sampling_steps'),
    key('ddim_steps', 'short'),
    key('sampler.steps'),
    key('sampling.steps'),
    key('inference.steps'),
    key('sampler.timesteps'),
    key('sampling.timesteps'),
    key('inference.timesteps'),
  ],
  guidanceScale: [key('guidance_scale'), key('cfg_scale'), key('unconditional_guidance_scale', 'short')],
  guidanceRescale: [key('guidance_rescale'), key('cfg_rescale')],
  offsetNoise: [key('noise_offset'), key('offset_noise')],
  minSnrGamma: [key('snr_gamma'), key('min_snr_gamma')],
  thresholding: [key('clip_sample'), key('thresholding'), key('dynamic_thresholding')],
  latentSpace: [],
  sigmaMin: [key('sigma_min')],
  sigmaMax: [key('sigma_max')],
  rho: [ambiguous('rho')], // also an optimizer parameter
  flowShift: [key('flow_shift'), ambiguous('shift')],
  resolution: [key('resolution'), key('image_size')],
  sampler: [
    key('sampler_name'),
    ambiguous('sampler'),
    ambiguous('scheduler'),
    ambiguous('sampler.name'),
    ambiguous('sampler.type'),
    ambiguous('scheduler.name'),
    ambiguous('scheduler.type'),
    className('_class_name'),
    className('class_name'),
    className('target'),
  ],
  karrasSigmas: [key('use_karras_sigmas'), key('karras_sigmas')],
};

/** Sections under which ambiguous keys are never read (normalised key prefixes). */
export const FOREIGN_SECTION = /^(lr|learningrate|optim|optimizer|warmup|ema)/;

/**
 * Value spellings per enum member, written as they appear in configs. Compared after
 * normalizeValue() (case, separators and `++` -> `pp` ignored). The first spelling of each member
 * is the one offered in suggestions when nothing closer matches.
 */
export const BETA_SCHEDULE_SPELLINGS: Record<string, string[]> = {
  linear: ['linear', 'sqrt_linear'],
  scaled_linear: ['scaled_linear'],
  cosine: ['cosine', 'squaredcos_cap_v2', 'squaredcos', 'cos'],
  sigmoid: ['sigmoid'],
};

export const PREDICTION_TARGET_SPELLINGS: Record<string, string[]> = {
  epsilon: ['epsilon', 'eps', 'noise', 'pred_noise', 'epsilon_prediction'],
  v: ['v_prediction', 'v', 'velocity', 'pred_v', 'v_pred'],
  x0: ['sample', 'x0', 'x_start', 'pred_x0', 'pred_xstart', 'x_0'],
  flow: ['flow', 'flow_velocity', 'rectified_flow', 'flow_matching', 'flow_prediction', 'pred_flow'],
};

export const TIMESTEP_SPACING_SPELLINGS: Record<string, string[]> = {
  leading: ['leading'],
  linspace: ['linspace'],
  trailing: ['trailing'],
  uniform: ['uniform'],
  quadratic: ['quadratic', 'quad'],
};

/**
 * Sampler names as written in configs, UIs and class names (class names are matched after their
 * module path and a trailing Scheduler / Sampler / Discrete are removed). A trailing "karras"
 * (`dpmpp_2m_karras`, "DPM++ 2M Karras") also turns on karrasSigmas; a trailing "gpu" is dropped.
 */
export const SAMPLER_SPELLINGS: Record<string, string[]> = {
  ddim: ['ddim'],
  ddpm: ['ddpm'],
  euler: ['euler', 'k_euler', 'edm_euler'],
  'euler-ancestral': ['euler_ancestral', 'euler_a', 'k_euler_ancestral', 'k_euler_a'],
  heun: ['heun', 'k_heun'],
  'dpm-solver': ['dpm_solver', 'dpm_solver_sde', 'dpmpp', 'dpmpp_sde', 'dpm_fast', 'dpm_adaptive', 'dpm_solver_pp'],
  'dpm-solver-multistep': ['dpm_solver_multistep', 'dpmpp_2m', 'dpmpp_2m_sde', 'dpmpp_3m_sde'],
  'dpm-solver-singlestep': ['dpm_solver_singlestep', 'dpmpp_2s', 'dpmpp_2s_ancestral', 'dpmpp_2s_a'],
  lms: ['lms', 'k_lms'],
  unipc: ['unipc', 'uni_pc', 'unipc_multistep', 'uni_pc_bh2'],
  pndm: ['pndm', 'plms'],
  'flow-euler': ['flow_euler', 'flow_match_euler', 'flow_match'],
};

/** Real samplers the tool does not model: recognised so that they are neither errors nor guesses. */
export const UNMODELLED_SAMPLERS: string[] = [
  'dpm_2',
  'dpm2',
  'dpm_2_ancestral',
  'dpm2_a',
  'kdpm2',
  'kdpm2_ancestral',
  'deis',
  'deis_multistep',
  'lcm',
  'tcd',
  'ipndm',
  'restart',
  'ddpm_wrapper',
  'sa_solver',
  'ddim_inverse',
];

/** Values of a sigma-schedule field (`scheduler: karras`) that only say "Karras sigmas". */
export const KARRAS_ONLY = ['karras'];
