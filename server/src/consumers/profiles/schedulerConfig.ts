/**
 * Scheduler config files (`scheduler_config.json`, `scheduler/scheduler_config.json`) that the
 * common open diffusion library saves next to a model: a flat JSON object with `_class_name`
 * and `_diffusers_version`, whose other keys are the scheduler class's constructor arguments.
 * `from_config` passes the keys the constructor takes and ignores the rest, so a key the class
 * does not take has no effect, and an absent key means the constructor's default.
 *
 * The four classes marked clampsZeroSnrSigma set alphas_cumprod[-1] = 2**-24 when
 * rescale_betas_zero_snr is on ("close to 0 without being 0 so first sigma is not inf"; recalled
 * from memory of diffusers 0.30).
 *
 * Facts per class: recalled from memory of diffusers 0.30 (src/diffusers/schedulers/), checked
 * where noted against stored copies of the sources (huggingface/diffusers; a copy of 0.27's
 * constructors in A1ex-Chen/DL_project_log; the 0.23.0 API reference). Timestep rules from each
 * class's set_timesteps.
 */
import type { ConsumerClass, ConsumerFamily } from '../types';

const SOURCE = 'diffusers 0.30, src/diffusers/schedulers';
const SPACINGS = ['linspace', 'leading', 'trailing'];
const PREDICTION_TYPES = ['epsilon', 'sample', 'v_prediction'];
const BETA_SCHEDULES = ['linear', 'scaled_linear', 'squaredcos_cap_v2'];
const BETA_KEYS = ['num_train_timesteps', 'beta_start', 'beta_end', 'beta_schedule', 'trained_betas'];
const BETA_CONCEPTS = {
  trainSteps: 'num_train_timesteps',
  betaStart: 'beta_start',
  betaEnd: 'beta_end',
  betaSchedule: 'beta_schedule',
  betas: 'trained_betas',
  predictionTarget: 'prediction_type',
} as const;
const LINEAR_DEFAULTS = {
  trainSteps: 1000,
  betaSchedule: 'linear',
  betaStart: 0.0001,
  betaEnd: 0.02,
  predictionTarget: 'epsilon',
} as const;
const NOT_A_SCHEDULER_SETTING = {
  guidanceRescale: 'guidance rescale is not a scheduler setting: pass guidance_rescale (e.g. 0.7) to the pipeline call that samples',
  guidanceScale: 'guidance scale is an argument of the pipeline call, not of the scheduler config',
  sampleSteps: 'the step count is an argument of the pipeline call (num_inference_steps), not of the scheduler config',
} as const;
/**
 * What to do instead where a class has no zero-SNR flag. A rescaled `trained_betas` list is no way
 * around it: it ends at abar = 0, which PNDM's step divides by (sample_coeff = sqrt(abar_prev /
 * abar_t), read from scheduling_pndm.py) and which makes a sigma-space class's first sigma,
 * sqrt((1 - abar) / abar), infinite; only the classes with the flag clamp it.
 */
const ZERO_SNR_FLAG_CLASSES =
  'use a class that takes rescale_betas_zero_snr (DDIMScheduler, DDPMScheduler, EulerDiscreteScheduler, DPMSolverMultistepScheduler, UniPCMultistepScheduler)';
const ZERO_SNR_ELSEWHERE = `${ZERO_SNR_FLAG_CLASSES}; a rescaled trained_betas list would give an infinite first sigma at abar = 0`;
const ZERO_SNR_ELSEWHERE_PNDM = `${ZERO_SNR_FLAG_CLASSES}; with a rescaled trained_betas list its step would divide by abar = 0 at the last step`;

function cls(c: Omit<ConsumerClass, 'cannotExpress'> & { cannotExpress?: ConsumerClass['cannotExpress'] }): ConsumerClass {
  return { ...c, cannotExpress: { ...NOT_A_SCHEDULER_SETTING, ...c.cannotExpress } };
}

const enums = (extra: Record<string, string[]> = {}) => ({
  prediction_type: PREDICTION_TYPES,
  beta_schedule: BETA_SCHEDULES,
  timestep_spacing: SPACINGS,
  ...extra,
});

/**
 * The consistency-distilled schedulers (LCMScheduler, Luo et al. 2023; TCDScheduler, Zheng et al.
 * 2024, authors recalled from memory) share one constructor and one step selection: the original_inference_steps grid, which
 * reads neither timestep_spacing nor steps_offset (both files read in stored copies of the library).
 */
function consistencyScheduler(name: string, file: string): ConsumerClass {
  return cls({
    name,
    source: `${SOURCE}/${file} (${name}.__init__, set_timesteps)`,
    keys: [
      ...BETA_KEYS,
      'original_inference_steps',
      'clip_sample',
      'clip_sample_range',
      'set_alpha_to_one',
      'steps_offset',
      'prediction_type',
      'thresholding',
      'dynamic_thresholding_ratio',
      'sample_max_value',
      'timestep_spacing',
      'timestep_scaling',
      'rescale_betas_zero_snr',
    ],
    conceptKeys: { ...BETA_CONCEPTS, zeroTerminalSnr: 'rescale_betas_zero_snr', thresholding: 'clip_sample' },
    defaults: { ...LINEAR_DEFAULTS, betaSchedule: 'scaled_linear', betaStart: 0.00085, betaEnd: 0.012, zeroTerminalSnr: false },
    keyDefaults: { clip_sample: false, thresholding: false, original_inference_steps: 50 },
    separateKeys: [['clip_sample', 'thresholding']],
    // Kept in the config, but set_timesteps reads neither: see timesteps.ts, 'lcm'.
    inertKeys: { timestepSpacing: 'timestep_spacing', stepsOffset: 'steps_offset' },
    fixedSpacing: 'trailing',
    timesteps: 'lcm',
    enums: enums(),
    cannotExpress: {
      timestepSpacing: `${name} does not read timestep_spacing: its steps come from the original_inference_steps grid, which starts at T - 1 when original_inference_steps divides T (50 for T = 1000)`,
    },
  });
}

export const SCHEDULER_CLASSES: ConsumerClass[] = [
  cls({
    name: 'DDIMScheduler',
    source: `${SOURCE}/scheduling_ddim.py (DDIMScheduler.__init__, set_timesteps)`,
    keys: [
      ...BETA_KEYS,
      'clip_sample',
      'set_alpha_to_one',
      'steps_offset',
      'prediction_type',
      'thresholding',
      'dynamic_thresholding_ratio',
      'clip_sample_range',
      'sample_max_value',
      'timestep_spacing',
      'rescale_betas_zero_snr',
    ],
    conceptKeys: {
      ...BETA_CONCEPTS,
      stepsOffset: 'steps_offset',
      timestepSpacing: 'timestep_spacing',
      zeroTerminalSnr: 'rescale_betas_zero_snr',
      thresholding: 'clip_sample',
    },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'leading', stepsOffset: 0, zeroTerminalSnr: false },
    keyDefaults: { clip_sample: true, thresholding: false },
    separateKeys: [['clip_sample', 'thresholding']],
    timesteps: 'standard',
    enums: enums(),
  }),
  cls({
    name: 'DDPMScheduler',
    source: `${SOURCE}/scheduling_ddpm.py (DDPMScheduler.__init__, set_timesteps)`,
    keys: [
      ...BETA_KEYS,
      'variance_type',
      'clip_sample',
      'prediction_type',
      'thresholding',
      'dynamic_thresholding_ratio',
      'clip_sample_range',
      'sample_max_value',
      'timestep_spacing',
      'steps_offset',
      'rescale_betas_zero_snr',
    ],
    conceptKeys: {
      ...BETA_CONCEPTS,
      stepsOffset: 'steps_offset',
      timestepSpacing: 'timestep_spacing',
      zeroTerminalSnr: 'rescale_betas_zero_snr',
      thresholding: 'clip_sample',
    },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'leading', stepsOffset: 0, zeroTerminalSnr: false },
    keyDefaults: { clip_sample: true, thresholding: false },
    separateKeys: [['clip_sample', 'thresholding']],
    timesteps: 'standard',
    enums: enums({ beta_schedule: [...BETA_SCHEDULES, 'sigmoid'] }),
  }),
  cls({
    name: 'PNDMScheduler',
    source: `${SOURCE}/scheduling_pndm.py (PNDMScheduler.__init__, set_timesteps)`,
    keys: [...BETA_KEYS, 'skip_prk_steps', 'set_alpha_to_one', 'prediction_type', 'timestep_spacing', 'steps_offset'],
    conceptKeys: { ...BETA_CONCEPTS, stepsOffset: 'steps_offset', timestepSpacing: 'timestep_spacing' },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'leading', stepsOffset: 0, zeroTerminalSnr: false },
    timesteps: 'standard',
    enums: enums(),
    cannotExpress: { zeroTerminalSnr: `PNDMScheduler has no zero-SNR rescale: ${ZERO_SNR_ELSEWHERE_PNDM}` },
  }),
  cls({
    name: 'EulerDiscreteScheduler',
    source: `${SOURCE}/scheduling_euler_discrete.py (EulerDiscreteScheduler.__init__, set_timesteps)`,
    keys: [
      ...BETA_KEYS,
      'prediction_type',
      'interpolation_type',
      'use_karras_sigmas',
      'use_exponential_sigmas',
      'use_beta_sigmas',
      'sigma_min',
      'sigma_max',
      'timestep_spacing',
      'timestep_type',
      'steps_offset',
      'rescale_betas_zero_snr',
      'final_sigmas_type',
    ],
    conceptKeys: {
      ...BETA_CONCEPTS,
      stepsOffset: 'steps_offset',
      timestepSpacing: 'timestep_spacing',
      zeroTerminalSnr: 'rescale_betas_zero_snr',
      karrasSigmas: 'use_karras_sigmas',
    },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'linspace', stepsOffset: 0, zeroTerminalSnr: false, karrasSigmas: false },
    clampsZeroSnrSigma: true,
    timesteps: 'standard',
    karrasStartsAtMax: true,
    enums: enums(),
  }),
  cls({
    name: 'EulerAncestralDiscreteScheduler',
    source: `${SOURCE}/scheduling_euler_ancestral_discrete.py (spacing and offset defaults checked against the 0.23.0 API reference)`,
    keys: [...BETA_KEYS, 'prediction_type', 'timestep_spacing', 'steps_offset', 'rescale_betas_zero_snr'],
    conceptKeys: { ...BETA_CONCEPTS, stepsOffset: 'steps_offset', timestepSpacing: 'timestep_spacing', zeroTerminalSnr: 'rescale_betas_zero_snr' },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'linspace', stepsOffset: 0, zeroTerminalSnr: false },
    clampsZeroSnrSigma: true,
    timesteps: 'standard',
    enums: enums(),
  }),
  cls({
    name: 'HeunDiscreteScheduler',
    source: `${SOURCE}/scheduling_heun_discrete.py (HeunDiscreteScheduler.__init__: beta range 0.00085 to 0.012)`,
    keys: [
      ...BETA_KEYS,
      'prediction_type',
      'use_karras_sigmas',
      'use_exponential_sigmas',
      'use_beta_sigmas',
      'clip_sample',
      'clip_sample_range',
      'timestep_spacing',
      'steps_offset',
    ],
    conceptKeys: {
      ...BETA_CONCEPTS,
      stepsOffset: 'steps_offset',
      timestepSpacing: 'timestep_spacing',
      karrasSigmas: 'use_karras_sigmas',
      thresholding: 'clip_sample',
    },
    defaults: {
      ...LINEAR_DEFAULTS,
      betaStart: 0.00085,
      betaEnd: 0.012,
      timestepSpacing: 'linspace',
      stepsOffset: 0,
      zeroTerminalSnr: false,
      karrasSigmas: false,
    },
    keyDefaults: { clip_sample: false },
    timesteps: 'standard',
    karrasStartsAtMax: true,
    enums: enums(),
    cannotExpress: { zeroTerminalSnr: `HeunDiscreteScheduler has no zero-SNR rescale: ${ZERO_SNR_ELSEWHERE}` },
  }),
  cls({
    name: 'LMSDiscreteScheduler',
    source: `${SOURCE}/scheduling_lms_discrete.py (constructor checked against the stored 0.27 copy)`,
    keys: [...BETA_KEYS, 'use_karras_sigmas', 'use_exponential_sigmas', 'use_beta_sigmas', 'prediction_type', 'timestep_spacing', 'steps_offset'],
    conceptKeys: { ...BETA_CONCEPTS, stepsOffset: 'steps_offset', timestepSpacing: 'timestep_spacing', karrasSigmas: 'use_karras_sigmas' },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'linspace', stepsOffset: 0, zeroTerminalSnr: false, karrasSigmas: false },
    timesteps: 'standard',
    karrasStartsAtMax: true,
    enums: enums(),
    cannotExpress: { zeroTerminalSnr: `LMSDiscreteScheduler has no zero-SNR rescale: ${ZERO_SNR_ELSEWHERE}` },
  }),
  cls({
    name: 'DPMSolverMultistepScheduler',
    source: `${SOURCE}/scheduling_dpmsolver_multistep.py (DPMSolverMultistepScheduler.__init__, set_timesteps)`,
    keys: [
      ...BETA_KEYS,
      'solver_order',
      'prediction_type',
      'thresholding',
      'dynamic_thresholding_ratio',
      'sample_max_value',
      'algorithm_type',
      'solver_type',
      'lower_order_final',
      'euler_at_final',
      'use_karras_sigmas',
      'use_exponential_sigmas',
      'use_beta_sigmas',
      'use_lu_lambdas',
      'use_flow_sigmas',
      'flow_shift',
      'final_sigmas_type',
      'lambda_min_clipped',
      'variance_type',
      'timestep_spacing',
      'steps_offset',
      'rescale_betas_zero_snr',
    ],
    conceptKeys: {
      ...BETA_CONCEPTS,
      stepsOffset: 'steps_offset',
      timestepSpacing: 'timestep_spacing',
      zeroTerminalSnr: 'rescale_betas_zero_snr',
      karrasSigmas: 'use_karras_sigmas',
      thresholding: 'thresholding',
    },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'linspace', stepsOffset: 0, zeroTerminalSnr: false, karrasSigmas: false },
    keyDefaults: { thresholding: false },
    clampsZeroSnrSigma: true,
    timesteps: 'n-plus-one',
    karrasStartsAtMax: true,
    enums: enums(),
  }),
  cls({
    name: 'DPMSolverSinglestepScheduler',
    source:
      `${SOURCE}/scheduling_dpmsolver_singlestep.py (constructor and set_timesteps checked against a stored copy, ` +
      'huggingface/diffusers commit 9b25fd2: no timestep_spacing, steps_offset or zero-SNR rescale)',
    keys: [
      ...BETA_KEYS,
      'solver_order',
      'prediction_type',
      'thresholding',
      'dynamic_thresholding_ratio',
      'sample_max_value',
      'algorithm_type',
      'solver_type',
      'lower_order_final',
      'use_karras_sigmas',
      'use_exponential_sigmas',
      'use_beta_sigmas',
      'final_sigmas_type',
      'lambda_min_clipped',
      'variance_type',
    ],
    conceptKeys: { ...BETA_CONCEPTS, karrasSigmas: 'use_karras_sigmas', thresholding: 'thresholding' },
    defaults: { ...LINEAR_DEFAULTS, zeroTerminalSnr: false, karrasSigmas: false, stepsOffset: 0 },
    keyDefaults: { thresholding: false },
    fixedSpacing: 'linspace',
    timesteps: 'n-plus-one',
    karrasStartsAtMax: true,
    enums: { prediction_type: PREDICTION_TYPES, beta_schedule: BETA_SCHEDULES },
    cannotExpress: {
      zeroTerminalSnr: `DPMSolverSinglestepScheduler has no zero-SNR rescale: ${ZERO_SNR_ELSEWHERE}`,
      timestepSpacing: 'DPMSolverSinglestepScheduler takes no timestep_spacing: its steps always start at T - 1',
    },
  }),
  cls({
    name: 'UniPCMultistepScheduler',
    source: `${SOURCE}/scheduling_unipc_multistep.py (UniPCMultistepScheduler.__init__, set_timesteps)`,
    keys: [
      ...BETA_KEYS,
      'solver_order',
      'prediction_type',
      'thresholding',
      'dynamic_thresholding_ratio',
      'sample_max_value',
      'predict_x0',
      'solver_type',
      'lower_order_final',
      'disable_corrector',
      'solver_p',
      'use_karras_sigmas',
      'use_exponential_sigmas',
      'use_beta_sigmas',
      'use_flow_sigmas',
      'flow_shift',
      'timestep_spacing',
      'steps_offset',
      'final_sigmas_type',
      'rescale_betas_zero_snr',
    ],
    conceptKeys: {
      ...BETA_CONCEPTS,
      stepsOffset: 'steps_offset',
      timestepSpacing: 'timestep_spacing',
      zeroTerminalSnr: 'rescale_betas_zero_snr',
      karrasSigmas: 'use_karras_sigmas',
      thresholding: 'thresholding',
    },
    defaults: { ...LINEAR_DEFAULTS, timestepSpacing: 'linspace', stepsOffset: 0, zeroTerminalSnr: false, karrasSigmas: false },
    keyDefaults: { thresholding: false },
    clampsZeroSnrSigma: true,
    timesteps: 'n-plus-one',
    karrasStartsAtMax: true,
    enums: enums(),
  }),
  consistencyScheduler('LCMScheduler', 'scheduling_lcm.py'),
  consistencyScheduler('TCDScheduler', 'scheduling_tcd.py'),
  cls({
    name: 'FlowMatchEulerDiscreteScheduler',
    source: `${SOURCE}/scheduling_flow_match_euler_discrete.py (FlowMatchEulerDiscreteScheduler.__init__, set_timesteps)`,
    keys: [
      'num_train_timesteps',
      'shift',
      'use_dynamic_shifting',
      'base_shift',
      'max_shift',
      'base_image_seq_len',
      'max_image_seq_len',
      'invert_sigmas',
      'shift_terminal',
      'use_karras_sigmas',
      'use_exponential_sigmas',
      'use_beta_sigmas',
      'time_shift_type',
      'stochastic_sampling',
    ],
    conceptKeys: { trainSteps: 'num_train_timesteps', flowShift: 'shift', karrasSigmas: 'use_karras_sigmas' },
    defaults: { trainSteps: 1000, flowShift: 1, predictionTarget: 'flow', karrasSigmas: false },
    timesteps: 'flow',
    cannotExpress: {
      zeroTerminalSnr: 'a flow-matching schedule already ends at zero SNR; it has no rescale setting',
      predictionTarget: 'FlowMatchEulerDiscreteScheduler always reads the output as a flow velocity: it has no prediction_type',
    },
  }),
];

export const SCHEDULER_CONFIG_FAMILY: ConsumerFamily = {
  id: 'scheduler-config',
  title: 'scheduler config saved by the open diffusion library (diffusers)',
  dialect: { yaml: 'pyyaml', json: 'python-json' },
  sectionPath: '',
  classes: SCHEDULER_CLASSES,
};

/** Keys every saved config carries besides the constructor's arguments (read by from_config itself). */
export const SCHEDULER_META_KEYS = ['_class_name', '_diffusers_version'];
