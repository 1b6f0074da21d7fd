/**
 * Flat training-script argument sets: the arguments of the sd-scripts training scripts
 * (train_network.py, train_db.py, fine_tune.py, sdxl_train.py, sdxl_train_network.py), written as
 * the TOML file that `--config_file` reads, or as a YAML or JSON dump of the parsed arguments.
 *
 * How the script reads them (checked against stored copies of kohya-ss/sd-scripts and its forks,
 * library/train_util.py):
 * - `read_config_from_file` loads the TOML and merges every first-level table into one flat
 *   namespace (`[model_arguments]`, `[training_arguments]` ... are only headings), then hands it
 *   to argparse as the starting namespace. Values from the file keep the type the loader gave
 *   them: argparse applies neither `type=` nor `choices=` to them.
 * - `--v_parameterization` and `--zero_terminal_snr` are store_true flags (v-prediction target;
 *   the Lin et al. 2023 rescale of the training schedule, fix_noise_scheduler_betas_for_zero_terminal_snr).
 * - `--noise_offset` (float, default None: off), `--min_snr_gamma` (float, default None: off;
 *   Hang et al. 2023, library/custom_train_functions.py).
 * - `--resolution` is a string, "size" or "width,height", split on the comma by the script.
 * - The training noise schedule is fixed by the script: DDPMScheduler with scaled_linear betas
 *   0.00085 -> 0.012 over T = 1000 (SCHEDULER_LINEAR_START / _END / _TIMESTEPS in train_util.py).
 * - `--sample_sampler` (choices ddim, pndm, lms, euler, euler_a, heun, dpm_2, dpm_2_a, dpmsolver,
 *   dpmsolver++, dpmsingle, k_lms, k_euler, k_euler_a, k_dpm_2, k_dpm_2_a) names the scheduler of
 *   the preview images. get_my_scheduler builds it from the same fixed constants and never applies
 *   the zero-SNR rescale, so the preview sampler is not the training schedule: the key is the
 *   script's own setting here, not this tool's sampler concept. Preview steps and guidance scale
 *   are per prompt in the sample_prompts file (`--s`, `--l`), not arguments.
 * Everything else (learning rate, optimizer, network, dataset, saving) is taken and ignored by
 * this tool: an argument it does not model is never an error.
 */
import type { ConceptDefaults, ConsumerClass, ConsumerFamily } from '../types';

/** The schedule of the common latent text-to-image models: scaled_linear 0.00085 -> 0.012 over T = 1000. */
const LATENT_SCHEDULE: ConceptDefaults = { trainSteps: 1000, betaSchedule: 'scaled_linear', betaStart: 0.00085, betaEnd: 0.012 };

const SOURCE =
  'kohya-ss sd-scripts, library/train_util.py (add_sd_models_arguments, add_training_arguments, add_dataset_arguments, ' +
  'read_config_from_file, get_my_scheduler) and library/custom_train_functions.py; checked against stored copies of the source';

/** Arguments of the sd-scripts training scripts (the common ones; unknown keys are kept by argparse and have no effect). */
const SD_SCRIPTS_KEYS = [
  // models
  'v2',
  'v_parameterization',
  'pretrained_model_name_or_path',
  'tokenizer_cache_dir',
  'vae',
  // optimizer and learning rate
  'optimizer_type',
  'use_8bit_adam',
  'use_lion_optimizer',
  'learning_rate',
  'max_grad_norm',
  'optimizer_args',
  'lr_scheduler_type',
  'lr_scheduler_args',
  'lr_scheduler',
  'lr_warmup_steps',
  'lr_decay_steps',
  'lr_scheduler_num_cycles',
  'lr_scheduler_power',
  'lr_scheduler_timescale',
  'lr_scheduler_min_lr_ratio',
  'fused_backward_pass',
  'unet_lr',
  'text_encoder_lr',
  'learning_rate_te',
  // training
  'output_dir',
  'output_name',
  'huggingface_repo_id',
  'save_precision',
  'save_every_n_epochs',
  'save_every_n_steps',
  'save_n_epoch_ratio',
  'save_last_n_epochs',
  'save_last_n_epochs_state',
  'save_last_n_steps',
  'save_last_n_steps_state',
  'save_state',
  'save_state_on_train_end',
  'resume',
  'train_batch_size',
  'max_token_length',
  'mem_eff_attn',
  'torch_compile',
  'dynamo_backend',
  'xformers',
  'sdpa',
  'max_train_steps',
  'max_train_epochs',
  'max_data_loader_n_workers',
  'persistent_data_loader_workers',
  'seed',
  'gradient_checkpointing',
  'gradient_accumulation_steps',
  'mixed_precision',
  'full_fp16',
  'full_bf16',
  'fp8_base',
  'ddp_timeout',
  'ddp_gradient_as_bucket_view',
  'ddp_static_graph',
  'clip_skip',
  'logging_dir',
  'log_with',
  'log_prefix',
  'log_tracker_name',
  'wandb_run_name',
  'log_tracker_config',
  'log_config',
  'noise_offset',
  'noise_offset_random_strength',
  'multires_noise_iterations',
  'multires_noise_discount',
  'ip_noise_gamma',
  'ip_noise_gamma_random_strength',
  'adaptive_noise_scale',
  'zero_terminal_snr',
  'min_timestep',
  'max_timestep',
  'loss_type',
  'huber_schedule',
  'huber_c',
  'huber_scale',
  'lowram',
  'highvram',
  'sample_every_n_steps',
  'sample_every_n_epochs',
  'sample_at_first',
  'sample_prompts',
  'sample_sampler',
  'config_file',
  'output_config',
  'metadata_title',
  'metadata_author',
  'metadata_description',
  'metadata_license',
  'metadata_tags',
  'prior_loss_weight',
  'save_model_as',
  'use_safetensors',
  'no_half_vae',
  // dataset
  'train_data_dir',
  'reg_data_dir',
  'in_json',
  'dataset_repeats',
  'dataset_config',
  'dataset_class',
  'cache_info',
  'shuffle_caption',
  'caption_separator',
  'caption_extension',
  'caption_extention',
  'keep_tokens',
  'keep_tokens_separator',
  'secondary_separator',
  'enable_wildcard',
  'caption_prefix',
  'caption_suffix',
  'color_aug',
  'flip_aug',
  'face_crop_aug_range',
  'random_crop',
  'debug_dataset',
  'resolution',
  'cache_latents',
  'cache_latents_to_disk',
  'vae_batch_size',
  'enable_bucket',
  'min_bucket_reso',
  'max_bucket_reso',
  'bucket_reso_steps',
  'bucket_no_upscale',
  'token_warmup_min',
  'token_warmup_step',
  'alpha_mask',
  'caption_dropout_rate',
  'caption_dropout_every_n_epochs',
  'caption_tag_dropout_rate',
  'skip_cache_check',
  // loss weighting (custom_train_functions.py)
  'min_snr_gamma',
  'scale_v_pred_loss_like_noise_pred',
  'v_pred_like_loss',
  'debiased_estimation_loss',
  'weighted_captions',
  'masked_loss',
  // networks (train_network.py)
  'no_metadata',
  'network_weights',
  'network_module',
  'network_dim',
  'network_alpha',
  'network_dropout',
  'network_args',
  'network_train_unet_only',
  'network_train_text_encoder_only',
  'training_comment',
  'dim_from_weights',
  'scale_weight_norms',
  'base_weights',
  'base_weights_multiplier',
  'fp8_base_unet',
  'skip_until_initial_step',
  'initial_epoch',
  'initial_step',
  // DreamBooth and SDXL scripts
  'stop_text_encoder_training',
  'no_token_padding',
  'train_text_encoder',
  'cache_text_encoder_outputs',
  'cache_text_encoder_outputs_to_disk',
  'disable_mmap_load_safetensors',
];

const FIXED_SCHEDULE =
  'the script fixes the training schedule: DDPMScheduler, scaled_linear 0.00085 -> 0.012 over T = 1000; ' + 'only --zero_terminal_snr changes it';

export const SD_SCRIPTS_CLASS: ConsumerClass = {
  name: 'sd-scripts',
  source: `${SOURCE} (recalled from memory where a stored copy did not show it)`,
  keys: SD_SCRIPTS_KEYS,
  conceptKeys: {
    predictionTarget: 'v_parameterization',
    zeroTerminalSnr: 'zero_terminal_snr',
    offsetNoise: 'noise_offset',
    minSnrGamma: 'min_snr_gamma',
    resolution: 'resolution',
  },
  defaults: {
    ...LATENT_SCHEDULE,
    predictionTarget: 'epsilon',
    zeroTerminalSnr: false,
    latentSpace: true,
  },
  timesteps: 'standard',
  cannotExpress: {
    trainSteps: FIXED_SCHEDULE,
    betaSchedule: FIXED_SCHEDULE,
    betaStart: FIXED_SCHEDULE,
    betaEnd: FIXED_SCHEDULE,
    betas: `${FIXED_SCHEDULE}: there is no beta-list argument`,
    latentSpace: 'it trains latent-diffusion models through their autoencoder',
    timestepSpacing: 'the preview sampler is built by get_my_scheduler with the scheduler class defaults; its spacing is not an argument',
    sampleSteps: 'preview steps are set per prompt in the sample_prompts file (--s), not as an argument',
    guidanceScale: 'the preview guidance scale is set per prompt in the sample_prompts file (--l), not as an argument',
    guidanceRescale: 'the preview pipeline of sd-scripts takes no guidance rescale; set it in the sampling code that uses the trained model',
  },
  args: {
    flattensSections: true,
    booleanConcepts: {
      v_parameterization: { concept: 'predictionTarget', whenTrue: 'v', whenFalse: 'epsilon' },
      zero_terminal_snr: { concept: 'zeroTerminalSnr', whenTrue: true, whenFalse: false },
    },
    // v_parameterization is a store_true flag: it can say v or epsilon, nothing else.
    writableValues: { predictionTarget: ['epsilon', 'v'] },
  },
};

/**
 * The arguments of the open diffusion library's example training scripts
 * (examples/text_to_image/train_text_to_image.py, train_text_to_image_lora.py,
 * train_text_to_image_sdxl.py, examples/dreambooth/train_dreambooth*.py), dumped as YAML or JSON
 * (for a launcher, or the tracker config the script logs with `vars(args)`).
 *
 * How the script reads them (checked against a stored copy of huggingface/diffusers
 * examples/text_to_image/train_text_to_image.py; the other scripts' extra keys recalled from
 * memory):
 * - The training schedule is not an argument: `DDPMScheduler.from_pretrained(
 *   pretrained_model_name_or_path, subfolder="scheduler")` loads the base model's own
 *   scheduler/scheduler_config.json. Its T, betas and rescale flag are whatever that file says;
 *   there is no zero-terminal-SNR argument.
 * - `--prediction_type` (str, default None): None keeps the scheduler config's own target;
 *   otherwise `register_to_config(prediction_type=...)`, and the loss then accepts exactly
 *   "epsilon" or "v_prediction" (anything else raises ValueError at the first step).
 * - `--snr_gamma` (float, default None: plain MSE): min(SNR, gamma) / SNR weights, with SNR + 1 in
 *   place of SNR for v_prediction (Hang et al. 2023, section 3.4 and 4.2).
 * - `--noise_offset` (float, default 0; `if args.noise_offset:`).
 * - `--resolution` (int, default 512; 1024 in the SDXL script): the square crop of the training images.
 * - Validation images come from the pipeline built on the same base model with 20 steps
 *   (`num_inference_steps=20`) and that model's scheduler: no spacing, step or guidance argument.
 * Everything else (optimizer, EMA, dataset, logging, hub) is taken and ignored by this tool.
 */
const DIFFUSERS_EXAMPLE_KEYS = [
  // models
  'pretrained_model_name_or_path',
  'pretrained_vae_model_name_or_path',
  'revision',
  'variant',
  'non_ema_revision',
  'cache_dir',
  // data
  'dataset_name',
  'dataset_config_name',
  'train_data_dir',
  'image_column',
  'caption_column',
  'max_train_samples',
  'resolution',
  'center_crop',
  'random_flip',
  'image_interpolation_mode',
  'proportion_empty_prompts',
  'dataloader_num_workers',
  // DreamBooth
  'instance_data_dir',
  'instance_prompt',
  'class_data_dir',
  'class_prompt',
  'with_prior_preservation',
  'prior_loss_weight',
  'num_class_images',
  'sample_batch_size',
  'train_text_encoder',
  // validation
  'validation_prompt',
  'validation_prompts',
  'num_validation_images',
  'validation_epochs',
  'validation_steps',
  // training
  'output_dir',
  'seed',
  'train_batch_size',
  'num_train_epochs',
  'max_train_steps',
  'gradient_accumulation_steps',
  'gradient_checkpointing',
  'learning_rate',
  'scale_lr',
  'lr_scheduler',
  'lr_warmup_steps',
  'lr_num_cycles',
  'lr_power',
  'snr_gamma',
  'dream_training',
  'dream_detail_preservation',
  'use_8bit_adam',
  'allow_tf32',
  'use_ema',
  'offload_ema',
  'foreach_ema',
  'adam_beta1',
  'adam_beta2',
  'adam_weight_decay',
  'adam_epsilon',
  'max_grad_norm',
  'prediction_type',
  'noise_offset',
  'input_perturbation',
  'timestep_bias_strategy',
  'timestep_bias_multiplier',
  'timestep_bias_begin',
  'timestep_bias_end',
  'timestep_bias_portion',
  'rank',
  'mixed_precision',
  'enable_xformers_memory_efficient_attention',
  'checkpointing_steps',
  'checkpoints_total_limit',
  'resume_from_checkpoint',
  // logging and hub
  'logging_dir',
  'report_to',
  'tracker_project_name',
  'local_rank',
  'push_to_hub',
  'hub_token',
  'hub_model_id',
];

const BASE_MODEL_SCHEDULE =
  "the script loads the training schedule from the base model: DDPMScheduler.from_pretrained(pretrained_model_name_or_path, subfolder='scheduler')";
const FROM_BASE_MODEL =
  "the base model's scheduler config decides (the script loads DDPMScheduler.from_pretrained(pretrained_model_name_or_path, subfolder='scheduler')); " +
  'assumed here: the usual latent text-to-image schedule without rescale (common practice)';
const CHANGE_IN_BASE_MODEL = `${BASE_MODEL_SCHEDULE}: change it in that model's scheduler/scheduler_config.json`;
const VALIDATION =
  "validation images use the base model's own scheduler and pipeline with 20 steps (num_inference_steps=20 in the script): set it in the sampling code that uses the trained model";

export const DIFFUSERS_EXAMPLES_CLASS: ConsumerClass = {
  name: 'diffusers-example-scripts',
  source:
    'huggingface/diffusers examples/text_to_image/train_text_to_image.py (parse_args, the training loop); checked against a stored copy of the source, ' +
    'the LoRA, SDXL and DreamBooth scripts recalled from memory',
  keys: DIFFUSERS_EXAMPLE_KEYS,
  conceptKeys: {
    predictionTarget: 'prediction_type',
    offsetNoise: 'noise_offset',
    minSnrGamma: 'snr_gamma',
    resolution: 'resolution',
  },
  defaults: {
    ...LATENT_SCHEDULE,
    zeroTerminalSnr: false,
    predictionTarget: 'epsilon',
    latentSpace: true,
  },
  defaultNotes: {
    trainSteps: FROM_BASE_MODEL,
    betaSchedule: FROM_BASE_MODEL,
    betaStart: FROM_BASE_MODEL,
    betaEnd: FROM_BASE_MODEL,
    zeroTerminalSnr: FROM_BASE_MODEL,
    predictionTarget:
      "an absent or null prediction_type keeps the base model's scheduler config target; assumed epsilon, the usual one (common practice)",
    latentSpace: "the script trains a latent model: it encodes the images with the base model's autoencoder (vae.encode)",
  },
  timesteps: 'standard',
  valueMeanings: { prediction_type: { epsilon: 'epsilon', v_prediction: 'v' } },
  enums: { prediction_type: ['epsilon', 'v_prediction'] },
  cannotExpress: {
    trainSteps: CHANGE_IN_BASE_MODEL,
    betaSchedule: CHANGE_IN_BASE_MODEL,
    betaStart: CHANGE_IN_BASE_MODEL,
    betaEnd: CHANGE_IN_BASE_MODEL,
    betas: CHANGE_IN_BASE_MODEL,
    zeroTerminalSnr: `${BASE_MODEL_SCHEDULE}: set rescale_betas_zero_snr: true (and timestep_spacing: trailing) in that model's scheduler/scheduler_config.json`,
    latentSpace: 'it trains latent-diffusion models through their autoencoder',
    timestepSpacing: VALIDATION,
    sampleSteps: VALIDATION,
    guidanceScale: VALIDATION,
    guidanceRescale: VALIDATION,
  },
  args: { scheduleFromBaseModel: true, writableValues: { predictionTarget: ['epsilon', 'v'] } },
  // Keys these scripts use and the sd-scripts arguments do not.
  signature: [
    'snr_gamma',
    'prediction_type',
    'validation_prompt',
    'validation_prompts',
    'num_validation_images',
    'validation_epochs',
    'center_crop',
    'random_flip',
    'use_ema',
    'non_ema_revision',
    'enable_xformers_memory_efficient_attention',
    'tracker_project_name',
    'image_column',
    'caption_column',
    'dataset_config_name',
    'input_perturbation',
    'checkpoints_total_limit',
    'instance_prompt',
    'instance_data_dir',
    'with_prior_preservation',
    'proportion_empty_prompts',
    'timestep_bias_strategy',
    'dream_training',
  ],
  signatureMin: 3,
};

export const TRAINING_ARGS_FAMILY: ConsumerFamily = {
  id: 'training-args',
  title: 'training-script arguments (a TOML config file, or a YAML or JSON dump of the parsed arguments)',
  dialect: { yaml: 'pyyaml', json: 'python-json', toml: 'tomllib' },
  sectionPath: '',
  classes: [SD_SCRIPTS_CLASS, DIFFUSERS_EXAMPLES_CLASS],
  // Keys of these scripts that other argument sets do not share (shared ones such as learning_rate count for nothing).
  signature: [
    'v_parameterization',
    'zero_terminal_snr',
    'min_snr_gamma',
    'sample_sampler',
    'network_module',
    'network_dim',
    'network_alpha',
    'output_name',
    'save_model_as',
    'max_train_epochs',
    'cache_latents',
    'optimizer_type',
    'v2',
    'sample_every_n_steps',
    'sample_every_n_epochs',
    'sample_prompts',
    'multires_noise_iterations',
    'scale_v_pred_loss_like_noise_pred',
    'dataset_config',
    'xformers',
    'sdpa',
    'unet_lr',
    'text_encoder_lr',
    'save_every_n_epochs',
    'clip_skip',
    'enable_bucket',
    'min_bucket_reso',
    'max_bucket_reso',
    'shuffle_caption',
    'caption_extension',
    'keep_tokens',
    'save_precision',
    'network_train_unet_only',
    'noise_offset_random_strength',
    'debiased_estimation_loss',
    'ip_noise_gamma',
    'persistent_data_loader_workers',
    'max_data_loader_n_workers',
  ],
  signatureMin: 3,
};
