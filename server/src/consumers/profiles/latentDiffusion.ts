/**
 * OmegaConf-style latent-diffusion configs: `model.target` names the model class
 * (`ldm.models.diffusion.ddpm.LatentDiffusion` or `DDPM`), `model.params` holds its keyword
 * arguments, and the sub-configs (`unet_config`, `first_stage_config`, `cond_stage_config`) belong
 * to other components: their sizes and resolutions are not the diffusion's. The class takes a
 * fixed list of keyword arguments (an unknown one is a TypeError at start-up), so a fix never
 * inserts another; the schedule has no zero-SNR flag, and `given_betas` is the way to pass a
 * rescaled schedule, but only from code: register_schedule does `1. - betas` and reads
 * `betas.shape`, so a list written in the YAML (an OmegaConf ListConfig) fails at start-up. No
 * fix writes it; the finding says to pass a numpy array from the training code.
 *
 * Recalled from memory of ldm/models/diffusion/ddpm.py (DDPM.__init__, LatentDiffusion.__init__,
 * register_schedule) and ldm/modules/diffusionmodules/util.py (make_beta_schedule,
 * make_ddim_timesteps) in the Stability stablediffusion repository (SD 2.x, which added the "v"
 * parameterization; the older CompVis latent-diffusion code accepts only "eps" and "x0").
 */
import type { ConsumerClass, ConsumerFamily } from '../types';

const SOURCE = 'stablediffusion (SD 2.x), ldm/models/diffusion/ddpm.py';

const DDPM_KEYS = [
  'unet_config',
  'timesteps',
  'beta_schedule',
  'loss_type',
  'ckpt_path',
  'ignore_keys',
  'load_only_unet',
  'monitor',
  'use_ema',
  'first_stage_key',
  'image_size',
  'channels',
  'log_every_t',
  'clip_denoised',
  'linear_start',
  'linear_end',
  'cosine_s',
  'given_betas',
  'original_elbo_weight',
  'v_posterior',
  'l_simple_weight',
  'conditioning_key',
  'parameterization',
  'scheduler_config',
  'use_positional_encodings',
  'learn_logvar',
  'logvar_init',
  'make_it_fit',
  'ucg_training',
  'reset_ema',
  'reset_num_ema_updates',
];
const LATENT_KEYS = [
  'first_stage_config',
  'cond_stage_config',
  'num_timesteps_cond',
  'cond_stage_key',
  'cond_stage_trainable',
  'concat_mode',
  'cond_stage_forward',
  'scale_factor',
  'scale_by_std',
  'force_null_conditioning',
];

const CONCEPT_KEYS = {
  trainSteps: 'timesteps',
  betaSchedule: 'beta_schedule',
  betaStart: 'linear_start',
  betaEnd: 'linear_end',
  betas: 'given_betas',
  predictionTarget: 'parameterization',
} as const;

const DEFAULTS = {
  trainSteps: 1000,
  // "linear" in this code interpolates sqrt(beta): what the tool calls scaled_linear.
  betaSchedule: 'scaled_linear',
  betaStart: 0.0001,
  betaEnd: 0.02,
  predictionTarget: 'epsilon',
  zeroTerminalSnr: false,
} as const;

const CANNOT = {
  zeroTerminalSnr:
    'the model class has no zero-SNR flag, and given_betas cannot come from this file: register_schedule computes ' +
    '`1. - betas` and `betas.shape`, which a list read from the config rejects at start-up; pass the rescaled betas ' +
    'as a numpy array from the training code (given_betas=...), or rescale in register_schedule',
  timestepSpacing:
    'the DDIM sampler of this code always takes steps (0, c, 2c, ...) + 1 with c = T // N; change the sampling script to start at T - 1',
  guidanceRescale: 'guidance rescale is an argument of the sampling script, not of the model config',
  offsetNoise: 'offset noise is not a model-class argument here: it lives in the training loop',
};

const VALUE_MEANINGS = {
  beta_schedule: {
    linear: 'scaled_linear',
    sqrt_linear: 'linear',
    cosine: 'cosine',
  },
};

function ldmClass(name: string, keys: string[], what: string): ConsumerClass {
  return {
    name,
    source: `${SOURCE} (${what}; recalled from memory)`,
    keys,
    conceptKeys: CONCEPT_KEYS,
    defaults: DEFAULTS,
    timesteps: 'ldm-ddim',
    fixedSpacing: 'uniform',
    enums: { parameterization: ['eps', 'x0', 'v'], beta_schedule: ['linear', 'cosine', 'sqrt_linear', 'sqrt'] },
    valueMeanings: VALUE_MEANINGS,
    cannotExpress: CANNOT,
  };
}

export const LATENT_DIFFUSION_CLASSES: ConsumerClass[] = [
  ldmClass('ldm.models.diffusion.ddpm.LatentDiffusion', [...DDPM_KEYS, ...LATENT_KEYS], 'LatentDiffusion.__init__ and DDPM.__init__'),
  ldmClass('ldm.models.diffusion.ddpm.DDPM', DDPM_KEYS, 'DDPM.__init__'),
  ldmClass(
    'ldm.models.diffusion.ddpm.LatentUpscaleDiffusion',
    [...DDPM_KEYS, ...LATENT_KEYS, 'low_scale_config', 'low_scale_key', 'noise_level_key'],
    'LatentUpscaleDiffusion.__init__',
  ),
  ldmClass(
    'ldm.models.diffusion.ddpm.LatentInpaintDiffusion',
    [
      ...DDPM_KEYS,
      ...LATENT_KEYS,
      'concat_keys',
      'masked_image_key',
      'finetune_keys',
      'keep_finetune_dims',
      'c_concat_log_start',
      'c_concat_log_end',
    ],
    'LatentInpaintDiffusion.__init__',
  ),
];

export const LATENT_DIFFUSION_FAMILY: ConsumerFamily = {
  id: 'latent-diffusion',
  title: 'latent-diffusion model config (model.target / model.params, read by OmegaConf)',
  dialect: { yaml: 'omegaconf', json: 'python-json' },
  sectionPath: 'model.params',
  classes: LATENT_DIFFUSION_CLASSES,
};
