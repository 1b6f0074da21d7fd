/**
 * Argument sets of the older pixel-space models (Nichol & Dhariwal 2021, improved-diffusion; and
 * Dhariwal & Nichol 2021, guided-diffusion): the flat dict of script_util.py
 * (model_and_diffusion_defaults, diffusion_defaults, classifier_defaults plus the training and
 * sampling scripts' own arguments), dumped as YAML or JSON and passed to
 * create_model_and_diffusion / create_gaussian_diffusion.
 *
 * How the code reads them (checked against the stored sources of openai/guided-diffusion,
 * guided_diffusion/script_util.py, and openai/improved-diffusion, improved_diffusion/respace.py
 * and gaussian_diffusion.py):
 * - `diffusion_steps` is T (default 1000); `noise_schedule` is "linear" or "cosine" (anything
 *   else raises NotImplementedError in get_named_beta_schedule).
 * - "linear" is Ho et al. 2020 stretched to any T: betas from 1e-4 * 1000 / T to 0.02 * 1000 / T
 *   (`scale = 1000 / num_diffusion_timesteps`); "cosine" is Nichol & Dhariwal 2021 with s = 0.008
 *   and betas capped at 0.999.
 * - `predict_xstart` switches the target from epsilon to x0; there is no v target and no
 *   zero-SNR rescale in this code.
 * - `timestep_respacing` decides the sampling steps: "" keeps all T, "ddimN" an exact integer
 *   stride from step 0, and "a,b,c" equal sections of T with a, b and c evenly spaced steps each
 *   (respace.py space_timesteps, see shared-math respacedTimesteps). A number instead of a string
 *   fails there (len() of an int).
 * - `use_ddim` (image_sample.py) picks the DDIM update over the ancestral one; it does not change
 *   which steps are kept.
 * - `image_size` is the pixel resolution of the model; `learn_sigma`, `sigma_small`, `use_kl`,
 *   `rescale_timesteps` and `rescale_learned_sigmas` shape the variance and the loss, not the
 *   noise schedule; the model, classifier, training and sampling arguments are taken and ignored.
 */
import type { ConsumerClass, ConsumerFamily } from '../types';

const SOURCE =
  'openai/guided-diffusion guided_diffusion/script_util.py and openai/improved-diffusion improved_diffusion/respace.py, gaussian_diffusion.py';

const DIFFUSION_KEYS = [
  'learn_sigma',
  'sigma_small',
  'diffusion_steps',
  'noise_schedule',
  'timestep_respacing',
  'use_kl',
  'predict_xstart',
  'rescale_timesteps',
  'rescale_learned_sigmas',
];
const MODEL_KEYS = [
  'image_size',
  'num_channels',
  'num_res_blocks',
  'num_heads',
  'num_heads_upsample',
  'num_head_channels',
  'attention_resolutions',
  'channel_mult',
  'dropout',
  'class_cond',
  'use_checkpoint',
  'use_scale_shift_norm',
  'resblock_updown',
  'use_fp16',
  'use_new_attention_order',
  'large_size',
  'small_size',
];
const CLASSIFIER_KEYS = [
  'classifier_use_fp16',
  'classifier_width',
  'classifier_depth',
  'classifier_attention_resolutions',
  'classifier_use_scale_shift_norm',
  'classifier_resblock_updown',
  'classifier_pool',
  'classifier_scale',
  'classifier_path',
];
const SCRIPT_KEYS = [
  // image_train.py
  'data_dir',
  'schedule_sampler',
  'lr',
  'weight_decay',
  'lr_anneal_steps',
  'batch_size',
  'microbatch',
  'ema_rate',
  'log_interval',
  'save_interval',
  'resume_checkpoint',
  'fp16_scale_growth',
  // image_sample.py, classifier_sample.py
  'clip_denoised',
  'num_samples',
  'use_ddim',
  'model_path',
  'base_samples',
];

const NO_ZERO_SNR =
  'this code has no zero-SNR setting, get_named_beta_schedule makes only "linear" and "cosine": rescale the betas in ' +
  'the training code (Lin et al. 2023, Algorithm 1) and train with an x0 target, or move to code that takes a rescaled schedule';

export const GUIDED_DIFFUSION_CLASS: ConsumerClass = {
  name: 'guided-diffusion',
  source: `${SOURCE} (checked against stored copies; the script arguments recalled from memory)`,
  keys: [...DIFFUSION_KEYS, ...MODEL_KEYS, ...CLASSIFIER_KEYS, ...SCRIPT_KEYS],
  conceptKeys: {
    trainSteps: 'diffusion_steps',
    betaSchedule: 'noise_schedule',
    predictionTarget: 'predict_xstart',
    resolution: 'image_size',
    sampleSteps: 'timestep_respacing',
    timestepSpacing: 'timestep_respacing',
    sampler: 'use_ddim',
  },
  defaults: {
    trainSteps: 1000,
    betaSchedule: 'linear',
    predictionTarget: 'epsilon',
    zeroTerminalSnr: false,
    latentSpace: false,
  },
  timesteps: 'respaced',
  enums: { noise_schedule: ['linear', 'cosine'] },
  cannotExpress: {
    zeroTerminalSnr: NO_ZERO_SNR,
    betas: NO_ZERO_SNR,
    predictionTarget: 'this code predicts epsilon or x0 only (predict_xstart); it has no v target: train with predict_xstart true instead',
    betaStart: 'the linear schedule of this code has no start or end setting: its range is 1e-4 to 0.02 scaled by 1000 / diffusion_steps',
    betaEnd: 'the linear schedule of this code has no start or end setting: its range is 1e-4 to 0.02 scaled by 1000 / diffusion_steps',
    timestepSpacing:
      'write timestep_respacing as a step count ("{steps}" instead of "ddim{steps}"): its steps then run evenly from T - 1 down to 0, ' +
      'and use_ddim keeps the DDIM update',
    sampleSteps: 'the step count is part of timestep_respacing: write it there as a string ("250", "ddim250")',
    guidanceRescale: 'the sampling scripts of this code have no classifier-free guidance rescale',
    guidanceScale: 'the sampling scripts of this code guide with a classifier (classifier_scale), not classifier-free guidance',
    offsetNoise: 'offset noise is not an argument of this code: it lives in the training loop',
    latentSpace: 'the model denoises pixels: its UNet takes images',
  },
  args: {
    booleanConcepts: {
      predict_xstart: { concept: 'predictionTarget', whenTrue: 'x0', whenFalse: 'epsilon' },
      use_ddim: { concept: 'sampler', whenTrue: 'ddim', whenFalse: 'ddpm' },
    },
    respacingKey: 'timestep_respacing',
    derivedConcepts: ['sampleSteps', 'timestepSpacing'],
    writableValues: { predictionTarget: ['epsilon', 'x0'], sampler: ['ddim', 'ddpm'] },
    linearRangePerStep: {
      start: 0.0001,
      end: 0.02,
      referenceSteps: 1000,
      basis: 'get_named_beta_schedule scales the linear range 1e-4 -> 0.02 by 1000 / diffusion_steps',
    },
  },
};

export const PIXEL_ARGS_FAMILY: ConsumerFamily = {
  id: 'pixel-args',
  title: 'pixel-model argument set (the improved-diffusion / guided-diffusion script arguments)',
  dialect: { yaml: 'pyyaml', json: 'python-json', toml: 'tomllib' },
  sectionPath: '',
  classes: [GUIDED_DIFFUSION_CLASS],
  signature: [
    'diffusion_steps',
    'noise_schedule',
    'timestep_respacing',
    'predict_xstart',
    'learn_sigma',
    'sigma_small',
    'rescale_timesteps',
    'rescale_learned_sigmas',
    'use_kl',
    'num_channels',
    'num_res_blocks',
    'attention_resolutions',
    'use_scale_shift_norm',
    'num_head_channels',
    'resblock_updown',
    'schedule_sampler',
    'lr_anneal_steps',
    'use_ddim',
    'clip_denoised',
  ],
  signatureMin: 3,
};
