/**
 * Config-object documents: every part of the model is a sub-config `{ target: <class path>,
 * params: {...} }` that the code instantiates with `params` as keyword arguments. The engine
 * (`model.target`, a DiffusionEngine) takes a denoiser config (a scaling class: what the network
 * predicts; for a discrete denoiser, a discretization class: the training schedule), a sampler
 * config (its step count, its own discretization and a guider: the guidance scale), a loss config
 * (offset noise, the training sigma sampler with a third discretization), and network, first-stage
 * and conditioner configs whose sizes and resolutions belong to those components, not to the
 * diffusion. Sampling-side files hold the sampler config alone, at the top level or under
 * `sampling:`.
 *
 * Each class takes a fixed list of keyword arguments: an unknown one raises a TypeError when the
 * config is instantiated, so a fix never inserts one. A class path is matched by its last segment,
 * whatever the module prefix (`sgm.` today, `ldm.` in the first release of this code).
 *
 * Checked against stored copies of the open generative-models code (module sgm):
 * - sgm/modules/diffusionmodules/discretizer.py (commit 7ef5489): LegacyDDPMDiscretization(
 *   linear_start=0.00085, linear_end=0.0120, num_timesteps=1000) builds make_beta_schedule("linear"),
 *   which is linear in sqrt(beta) (util.py, commit 07bf825: linspace(sqrt(start), sqrt(end))**2),
 *   and has no zero-SNR option; get_sigmas(n) takes generate_roughly_equally_spaced_steps(n, T) =
 *   linspace(T - 1, 0, n, endpoint=False).astype(int)[::-1] for n < T, every step for n = T, and
 *   raises ValueError for n > T, then flips the sigmas so that sampling starts at T - 1.
 *   EDMDiscretization(sigma_min=0.002, sigma_max=80.0, rho=7.0).
 * - denoiser.py (07bf825): Denoiser(scaling_config); DiscreteDenoiser(scaling_config, num_idx,
 *   discretization_config, do_append_zero=False, quantize_c_noise=True, flip=True). The first
 *   release took a weighting_config as well (configs/inference/sd_xl_base.yaml at commit 3df5c81).
 * - denoiser_scaling.py (07bf825): EDMScaling(sigma_data=0.5), EpsScaling, VScaling,
 *   VScalingWithEDMcNoise (none of the last three takes an argument).
 * - sampling.py (07bf825): BaseDiffusionSampler(discretization_config, num_steps=None,
 *   guider_config=None -> IdentityGuider, verbose=False, device="cuda"); EDMSampler adds s_churn,
 *   s_tmin, s_tmax, s_noise; AncestralSampler adds eta, s_noise; LinearMultistepSampler adds order.
 * - guiders.py (07bf825): VanillaCFG(scale) (no default, no rescale); IdentityGuider();
 *   LinearPredictionGuider(max_scale, num_frames, min_scale=1.0, additional_cond_keys=None).
 * - loss.py (059d8e9; 029ad74 for the older `type`): StandardDiffusionLoss(sigma_sampler_config,
 *   loss_weighting_config, loss_type="l2", offset_noise_level=0.0, batch2model_keys=None).
 * - sigma_sampling.py (31fe459): DiscreteSampling(discretization_config, num_idx,
 *   do_append_zero=False, flip=True); EDMSampling(p_mean=-1.2, p_std=1.2).
 * - sgm/models/diffusion.py (059d8e9): DiffusionEngine's keyword arguments.
 */
import type { ComponentClass, ComponentRole, ConsumerClass, ConsumerFamily } from '../types';

const REPO = 'generative-models';
const MODULES = 'sgm/modules/diffusionmodules';

const src = (file: string, commit: string, what: string) => `${REPO} ${file} (${what}; checked in a stored copy at commit ${commit})`;

const NO_ZERO_SNR =
  'LegacyDDPMDiscretization has no zero-SNR option: rescale the betas in a discretization class of your own ' +
  '(Lin et al. 2023, Algorithm 1) and name it in every discretization_config (denoiser, loss sigma sampler, sampler); needs retraining';
const NO_RESCALE =
  'this guider has no guidance rescale: lower the guider scale, or use a guider class of your own that applies it (Lin et al. 2023, eq. 16)';
const NO_SPACING = 'the sampler takes its steps from its discretization_config, which has no spacing setting';
const NO_OFFSET = 'the discretization takes no steps offset';
const NO_INSERT = (key: string, where: string) => `write ${key} under ${where}.params (the fix does not create the key)`;

const SAMPLER_KEYS = ['discretization_config', 'num_steps', 'guider_config', 'verbose', 'device'];
const EDM_SAMPLER_KEYS = [...SAMPLER_KEYS, 's_churn', 's_tmin', 's_tmax', 's_noise'];
const ANCESTRAL_KEYS = [...SAMPLER_KEYS, 'eta', 's_noise'];

function component(c: Omit<ComponentClass, 'timesteps' | 'name'> & { timesteps?: ComponentClass['timesteps'] }): ComponentClass {
  return { name: c.shortName, timesteps: 'standard', ...c };
}

function sampler(shortName: string, family: NonNullable<ComponentClass['implies']>['sampler'], keys: string[]): ComponentClass {
  return component({
    shortName,
    roles: ['sampler'],
    source: src(`${MODULES}/sampling.py`, '07bf825', `${shortName}.__init__ and BaseDiffusionSampler.__init__`),
    keys,
    conceptKeys: { sampleSteps: 'num_steps' },
    defaults: {},
    implies: { sampler: family },
    impliesNote: `${shortName} steps through the sigmas of its discretization_config`,
    cannotExpress: { sampleSteps: NO_INSERT('num_steps', 'sampler_config'), timestepSpacing: NO_SPACING },
  });
}

export const CONFIG_OBJECT_COMPONENTS: ComponentClass[] = [
  component({
    shortName: 'LegacyDDPMDiscretization',
    roles: ['discretization', 'sampler-discretization', 'sigma-sampler-discretization'],
    source: src(`${MODULES}/discretizer.py`, '7ef5489', 'LegacyDDPMDiscretization.__init__, get_sigmas'),
    keys: ['linear_start', 'linear_end', 'num_timesteps'],
    conceptKeys: { trainSteps: 'num_timesteps', betaStart: 'linear_start', betaEnd: 'linear_end' },
    defaults: { trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012, zeroTerminalSnr: false, stepsOffset: 0 },
    // make_beta_schedule("linear") interpolates sqrt(beta): what this tool calls scaled_linear.
    implies: { betaSchedule: 'scaled_linear' },
    impliesNote: 'LegacyDDPMDiscretization builds its betas linear in sqrt(beta) (make_beta_schedule "linear"), i.e. scaled_linear',
    timesteps: 'even-from-last',
    fixedSpacing: 'trailing',
    cannotExpress: {
      zeroTerminalSnr: NO_ZERO_SNR,
      betas: NO_ZERO_SNR,
      timestepSpacing: NO_SPACING,
      stepsOffset: NO_OFFSET,
      betaSchedule: 'LegacyDDPMDiscretization always builds a sqrt-linear schedule: change the class to change the family',
      trainSteps: NO_INSERT('num_timesteps', 'discretization_config'),
      betaStart: NO_INSERT('linear_start', 'discretization_config'),
      betaEnd: NO_INSERT('linear_end', 'discretization_config'),
    },
  }),
  component({
    shortName: 'EDMDiscretization',
    roles: ['sampler-discretization'],
    source: src(`${MODULES}/discretizer.py`, '7ef5489', 'EDMDiscretization.__init__, get_sigmas'),
    keys: ['sigma_min', 'sigma_max', 'rho'],
    conceptKeys: { sigmaMin: 'sigma_min', sigmaMax: 'sigma_max', rho: 'rho' },
    defaults: { sigmaMin: 0.002, sigmaMax: 80, rho: 7 },
    continuousSigmas: true,
    cannotExpress: { timestepSpacing: NO_SPACING, stepsOffset: NO_OFFSET },
  }),
  component({
    shortName: 'EpsScaling',
    roles: ['scaling'],
    source: src(`${MODULES}/denoiser_scaling.py`, '07bf825', 'EpsScaling: c_skip 1, c_out -sigma'),
    keys: [],
    conceptKeys: {},
    defaults: {},
    implies: { predictionTarget: 'epsilon' },
    impliesNote: 'EpsScaling (c_skip = 1, c_out = -sigma): the network predicts the noise (epsilon)',
  }),
  component({
    shortName: 'VScaling',
    roles: ['scaling'],
    source: src(`${MODULES}/denoiser_scaling.py`, '07bf825', 'VScaling: c_skip 1/(sigma^2+1), c_out -sigma/sqrt(sigma^2+1)'),
    keys: [],
    conceptKeys: {},
    defaults: {},
    implies: { predictionTarget: 'v' },
    impliesNote: 'VScaling (c_skip = 1 / (sigma^2 + 1), c_out = -sigma / sqrt(sigma^2 + 1)): the network predicts v (Salimans & Ho 2022)',
  }),
  component({
    shortName: 'VScalingWithEDMcNoise',
    roles: ['scaling'],
    source: src(`${MODULES}/denoiser_scaling.py`, '07bf825', 'VScalingWithEDMcNoise: the VScaling factors, c_noise 0.25 log sigma'),
    keys: [],
    conceptKeys: {},
    defaults: {},
    implies: { predictionTarget: 'v' },
    impliesNote: 'VScalingWithEDMcNoise (the VScaling factors with c_noise = 0.25 log sigma): the network predicts v',
  }),
  component({
    shortName: 'EDMScaling',
    roles: ['scaling'],
    source: src(`${MODULES}/denoiser_scaling.py`, '07bf825', 'EDMScaling.__init__(sigma_data=0.5)'),
    keys: ['sigma_data'],
    conceptKeys: {},
    defaults: {},
    implies: { predictionTarget: 'edm' },
    impliesNote:
      'EDMScaling: the preconditioning of Karras et al. 2022 (c_skip = sd^2 / (sigma^2 + sd^2), c_out = sigma sd / sqrt(sigma^2 + sd^2)); ' +
      'it predicts the clean sample at high noise, so it stays defined at zero SNR',
  }),
  component({
    shortName: 'DiscreteDenoiser',
    roles: ['denoiser'],
    source: src(`${MODULES}/denoiser.py`, '07bf825', 'DiscreteDenoiser.__init__'),
    keys: ['scaling_config', 'num_idx', 'discretization_config', 'do_append_zero', 'quantize_c_noise', 'flip', 'weighting_config'],
    conceptKeys: {},
    defaults: {},
  }),
  component({
    shortName: 'Denoiser',
    roles: ['denoiser'],
    source: src(`${MODULES}/denoiser.py`, '07bf825', 'Denoiser.__init__'),
    keys: ['scaling_config', 'weighting_config'],
    conceptKeys: {},
    defaults: {},
  }),
  sampler('EulerEDMSampler', 'euler', EDM_SAMPLER_KEYS),
  sampler('HeunEDMSampler', 'heun', EDM_SAMPLER_KEYS),
  sampler('EulerAncestralSampler', 'euler-ancestral', ANCESTRAL_KEYS),
  sampler('DPMPP2SAncestralSampler', 'dpm-solver-singlestep', ANCESTRAL_KEYS),
  sampler('DPMPP2MSampler', 'dpm-solver-multistep', SAMPLER_KEYS),
  sampler('LinearMultistepSampler', 'lms', [...SAMPLER_KEYS, 'order']),
  component({
    shortName: 'VanillaCFG',
    roles: ['guider'],
    source: src(`${MODULES}/guiders.py`, '07bf825', 'VanillaCFG.__init__(scale)'),
    keys: ['scale', 'dyn_thresh_config'],
    conceptKeys: { guidanceScale: 'scale' },
    defaults: { guidanceRescale: 0 },
    required: ['scale'],
    cannotExpress: { guidanceRescale: `VanillaCFG: ${NO_RESCALE}` },
  }),
  component({
    shortName: 'LinearPredictionGuider',
    roles: ['guider'],
    source: src(`${MODULES}/guiders.py`, '07bf825', 'LinearPredictionGuider.__init__'),
    keys: ['max_scale', 'num_frames', 'min_scale', 'additional_cond_keys'],
    conceptKeys: { guidanceScale: 'max_scale' },
    defaults: { guidanceRescale: 0 },
    required: ['max_scale', 'num_frames'],
    cannotExpress: { guidanceRescale: `LinearPredictionGuider: ${NO_RESCALE}` },
  }),
  component({
    shortName: 'IdentityGuider',
    roles: ['guider'],
    source: src(`${MODULES}/guiders.py`, '07bf825', 'IdentityGuider: no guidance'),
    keys: [],
    conceptKeys: {},
    defaults: {},
  }),
  component({
    shortName: 'StandardDiffusionLoss',
    roles: ['loss'],
    source: src(`${MODULES}/loss.py`, '059d8e9', 'StandardDiffusionLoss.__init__'),
    keys: ['sigma_sampler_config', 'loss_weighting_config', 'loss_type', 'type', 'offset_noise_level', 'batch2model_keys'],
    conceptKeys: { offsetNoise: 'offset_noise_level' },
    defaults: { offsetNoise: 0 },
  }),
  component({
    shortName: 'DiscreteSampling',
    roles: ['sigma-sampler'],
    source: src(`${MODULES}/sigma_sampling.py`, '31fe459', 'DiscreteSampling.__init__'),
    keys: ['discretization_config', 'num_idx', 'do_append_zero', 'flip'],
    conceptKeys: {},
    defaults: {},
  }),
  component({
    shortName: 'EDMSampling',
    roles: ['sigma-sampler'],
    source: src(`${MODULES}/sigma_sampling.py`, '31fe459', 'EDMSampling.__init__'),
    keys: ['p_mean', 'p_std'],
    conceptKeys: {},
    defaults: {},
  }),
];

/** Where each component sits, from the engine's params (or the sampling section) down. */
export const COMPONENT_SLOTS: { role: ComponentRole; path: string[] }[] = [
  { role: 'denoiser', path: ['denoiser_config'] },
  { role: 'scaling', path: ['denoiser_config', 'scaling_config'] },
  { role: 'discretization', path: ['denoiser_config', 'discretization_config'] },
  { role: 'loss', path: ['loss_fn_config'] },
  { role: 'sigma-sampler', path: ['loss_fn_config', 'sigma_sampler_config'] },
  { role: 'sigma-sampler-discretization', path: ['loss_fn_config', 'sigma_sampler_config', 'discretization_config'] },
  { role: 'sampler', path: ['sampler_config'] },
  { role: 'sampler-discretization', path: ['sampler_config', 'discretization_config'] },
  { role: 'guider', path: ['sampler_config', 'guider_config'] },
  { role: 'first-stage', path: ['first_stage_config'] },
];

/**
 * The schedule comes from the denoiser's discretization (what the model was trained on); a
 * document without one takes it from the loss's sigma sampler, else from the sampler's own
 * discretization. The other discretizations are compared with it.
 */
export const SCHEDULE_ROLES: ComponentRole[] = ['discretization', 'sigma-sampler-discretization', 'sampler-discretization'];

const ENGINE_KEYS = [
  'network_config',
  'denoiser_config',
  'first_stage_config',
  'conditioner_config',
  'sampler_config',
  'optimizer_config',
  'scheduler_config',
  'loss_fn_config',
  'network_wrapper',
  'ckpt_path',
  'use_ema',
  'ema_decay_rate',
  'scale_factor',
  'disable_first_stage_autocast',
  'input_key',
  'log_keys',
  'no_cond_log',
  'compile_model',
  'en_and_decode_n_samples_a_time',
];

/** The engine class: its keys are the sub-configs and the engine's own settings. */
export const CONFIG_OBJECT_ENGINE: ConsumerClass = {
  name: 'DiffusionEngine',
  source: src('sgm/models/diffusion.py', '059d8e9', 'DiffusionEngine.__init__'),
  keys: ENGINE_KEYS,
  conceptKeys: {},
  defaults: {},
  timesteps: 'even-from-last',
};

export const CONFIG_OBJECT_FAMILY: ConsumerFamily = {
  id: 'config-object',
  title: 'config-object model config (model.target plus denoiser, sampler and guider sub-configs, read by OmegaConf)',
  dialect: { yaml: 'omegaconf', json: 'python-json' },
  sectionPath: 'model.params',
  classes: [CONFIG_OBJECT_ENGINE],
  textHints: ['denoiser_config', 'sampler_config', 'discretization_config'],
};
