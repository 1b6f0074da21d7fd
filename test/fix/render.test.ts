/**
 * Concept edits rendered as minimal text edits: values replaced in place, keys inserted next to
 * their siblings, entries removed with their lines, explicit beta lists rewritten in their own
 * layout. All fixtures are invented Lanternfish Pictures configs.
 */
import { describe, expect, it } from 'vitest';
import { parseText } from '../../server/src/parse';
import { checkFix, lines, type FixCase } from './helpers';

const yamlBlock: FixCase[] = [
  {
    name: 'set a number; the trailing comment on the line survives',
    before: lines(
      '# Lanternfish Pictures: night storyboard sampler',
      'sampling:',
      '  guidance_scale: 7.5   # strong guidance for dark frames',
      '  guidance_rescale: 0.0 # off for now',
      '',
    ),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines(
      '# Lanternfish Pictures: night storyboard sampler',
      'sampling:',
      '  guidance_scale: 7.5   # strong guidance for dark frames',
      '  guidance_rescale: 0.7 # off for now',
      '',
    ),
  },
  {
    name: 'set a boolean',
    before: lines('scheduler:', '  num_train_timesteps: 1000', '  beta_schedule: scaled_linear', '  rescale_betas_zero_snr: false  # TODO', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines('scheduler:', '  num_train_timesteps: 1000', '  beta_schedule: scaled_linear', '  rescale_betas_zero_snr: true  # TODO', ''),
  },
  {
    name: 'booleans keep the casing the file uses',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: linear', 'clip_sample: True', 'rescale_betas_zero_snr: False', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines('num_train_timesteps: 1000', 'beta_schedule: linear', 'clip_sample: True', 'rescale_betas_zero_snr: True', ''),
  },
  {
    name: 'a plain enum value stays plain',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: leading # as shipped', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines('num_train_timesteps: 1000', 'timestep_spacing: trailing # as shipped', 'num_inference_steps: 30', ''),
  },
  {
    name: 'a double-quoted enum value stays double-quoted',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: "leading"', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines('num_train_timesteps: 1000', 'timestep_spacing: "trailing"', 'num_inference_steps: 30', ''),
  },
  {
    name: 'a single-quoted enum value stays single-quoted',
    before: lines('num_train_timesteps: 1000', "timestep_spacing: 'linspace'", 'num_inference_steps: 8', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines('num_train_timesteps: 1000', "timestep_spacing: 'trailing'", 'num_inference_steps: 8', ''),
  },
  {
    name: 'prediction_type family: epsilon -> v_prediction',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'prediction_type: epsilon', ''),
    edits: [{ kind: 'set', concept: 'predictionTarget', value: 'v' }],
    after: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'prediction_type: v_prediction', ''),
  },
  {
    name: 'parameterization family: eps -> v',
    before: lines(
      'model:',
      '  params:',
      '    timesteps: 1000',
      '    linear_start: 0.00085',
      '    linear_end: 0.012',
      '    parameterization: eps',
      '',
    ),
    edits: [{ kind: 'set', concept: 'predictionTarget', value: 'v' }],
    after: lines('model:', '  params:', '    timesteps: 1000', '    linear_start: 0.00085', '    linear_end: 0.012', '    parameterization: v', ''),
  },
  {
    name: 'a boolean target key: v_parameterization false -> true',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'v_parameterization: false', ''),
    edits: [{ kind: 'set', concept: 'predictionTarget', value: 'v' }],
    after: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'v_parameterization: true', ''),
  },
  {
    name: 'a boolean target key cannot say x0: give up',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'v_parameterization: false', ''),
    edits: [{ kind: 'set', concept: 'predictionTarget', value: 'x0' }],
    after: null,
  },
  {
    name: 'a misspelled enum value (a value problem) is replaced in place',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: trailling   # typo', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines('num_train_timesteps: 1000', 'timestep_spacing: trailing   # typo', 'num_inference_steps: 30', ''),
  },
  {
    name: '`key:` with no value gets one after the colon',
    before: lines('guidance_scale: 7.5', 'guidance_rescale:', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('guidance_scale: 7.5', 'guidance_rescale: 0.7', 'num_inference_steps: 30', ''),
  },
  {
    name: 'an integer concept is written as an integer',
    before: lines('num_train_timesteps: 1000', 'num_inference_steps: 1500', ''),
    edits: [{ kind: 'set', concept: 'sampleSteps', value: 1000 }],
    after: lines('num_train_timesteps: 1000', 'num_inference_steps: 1000', ''),
  },
  {
    name: 'a float written with a dot stays a float (1.0, not 1)',
    before: lines('guidance_scale: 7.5', 'guidance_rescale: 1.5', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 1 }],
    after: lines('guidance_scale: 7.5', 'guidance_rescale: 1.0', ''),
  },
  {
    name: 'the value already there: no edit',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: trailing', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines('num_train_timesteps: 1000', 'timestep_spacing: trailing', ''),
  },
];

const yamlInsert: FixCase[] = [
  {
    name: 'insert after the last sibling of the same group, with its indentation',
    before: lines(
      '# Lanternfish Pictures: high-key product stills',
      'scheduler:',
      '  num_train_timesteps: 1000',
      '  beta_schedule: scaled_linear   # latent default',
      '  beta_start: 0.00085',
      '  beta_end: 0.012',
      '',
      '# optimiser settings below',
      'training:',
      '  learning_rate: 1.0e-5',
      '',
    ),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      '# Lanternfish Pictures: high-key product stills',
      'scheduler:',
      '  num_train_timesteps: 1000',
      '  beta_schedule: scaled_linear   # latent default',
      '  beta_start: 0.00085',
      '  beta_end: 0.012',
      '  rescale_betas_zero_snr: true',
      '',
      '# optimiser settings below',
      'training:',
      '  learning_rate: 1.0e-5',
      '',
    ),
  },
  {
    name: 'a sampling concept goes next to the sampling siblings, after a trailing comment',
    before: lines(
      'scheduler:',
      '  num_train_timesteps: 1000',
      '  beta_schedule: scaled_linear',
      'sampling:',
      '  num_inference_steps: 30',
      '  guidance_scale: 9.0 # night frames need strong guidance',
      '  seed: 42',
      '',
    ),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines(
      'scheduler:',
      '  num_train_timesteps: 1000',
      '  beta_schedule: scaled_linear',
      'sampling:',
      '  num_inference_steps: 30',
      '  guidance_scale: 9.0 # night frames need strong guidance',
      '  guidance_rescale: 0.7',
      '  seed: 42',
      '',
    ),
  },
  {
    name: 'cfg_scale in the map: the new key is cfg_rescale',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'rescale_betas_zero_snr: true', 'cfg_scale: 7.5', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines(
      'num_train_timesteps: 1000',
      'beta_schedule: scaled_linear',
      'rescale_betas_zero_snr: true',
      'cfg_scale: 7.5',
      'cfg_rescale: 0.7',
      '',
    ),
  },
  {
    name: 'camelCase file: camelCase key',
    before: lines('noiseSchedule:', '  numTrainTimesteps: 1000', '  betaSchedule: scaled_linear', '  predictionType: v_prediction', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      'noiseSchedule:',
      '  numTrainTimesteps: 1000',
      '  betaSchedule: scaled_linear',
      '  predictionType: v_prediction',
      '  rescaleBetasZeroSnr: true',
      '',
    ),
  },
  {
    name: 'short-key file: short key',
    before: lines('model:', '  params:', '    timesteps: 1000', '    linear_start: 0.00085', '    linear_end: 0.012', '    parameterization: v', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      'model:',
      '  params:',
      '    timesteps: 1000',
      '    linear_start: 0.00085',
      '    linear_end: 0.012',
      '    parameterization: v',
      '    zero_terminal_snr: true',
      '',
    ),
  },
  {
    name: 'aligned values stay aligned',
    before: lines('num_train_timesteps:  1000', 'beta_schedule:        scaled_linear', 'beta_end:             0.012', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines(
      'num_train_timesteps:  1000',
      'beta_schedule:        scaled_linear',
      'beta_end:             0.012',
      'timestep_spacing:     trailing',
      '',
    ),
  },
  {
    name: 'several inserts at one place keep the order of the edits',
    before: lines('scheduler:', '  num_train_timesteps: 1000', '  beta_schedule: scaled_linear', 'run: lanternfish-nightboard-v3', ''),
    edits: [
      { kind: 'set', concept: 'zeroTerminalSnr', value: true },
      { kind: 'set', concept: 'predictionTarget', value: 'v' },
      { kind: 'set', concept: 'timestepSpacing', value: 'trailing' },
    ],
    after: lines(
      'scheduler:',
      '  num_train_timesteps: 1000',
      '  beta_schedule: scaled_linear',
      '  rescale_betas_zero_snr: true',
      '  prediction_type: v_prediction',
      '  timestep_spacing: trailing',
      'run: lanternfish-nightboard-v3',
      '',
    ),
  },
  {
    name: 'the last line has no line break: the insert adds one before itself',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear'),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'rescale_betas_zero_snr: true'),
  },
  {
    name: 'a map inside a list item: the indentation of its keys, not of the dash',
    before: lines('stages:', '  - num_train_timesteps: 1000', '    beta_schedule: scaled_linear', '  - name: upscale', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      'stages:',
      '  - num_train_timesteps: 1000',
      '    beta_schedule: scaled_linear',
      '    rescale_betas_zero_snr: true',
      '  - name: upscale',
      '',
    ),
  },
  {
    name: 'inserted enum values follow the quoting most strings in the file use',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: "scaled_linear"', 'run_name: "lanternfish-stills"', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: lines('num_train_timesteps: 1000', 'beta_schedule: "scaled_linear"', 'timestep_spacing: "trailing"', 'run_name: "lanternfish-stills"', ''),
  },
  {
    name: 'a YAML flow map gets `, key: value` in its own spacing',
    before: lines('scheduler: {num_train_timesteps: 1000, beta_schedule: scaled_linear}', 'sampling: {num_inference_steps: 30}', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      'scheduler: {num_train_timesteps: 1000, beta_schedule: scaled_linear, rescale_betas_zero_snr: true}',
      'sampling: {num_inference_steps: 30}',
      '',
    ),
  },
  {
    name: 'a second document of a multi-document file',
    documentIndex: 1,
    before: lines('run: lanternfish-a', 'num_train_timesteps: 1000', '---', 'num_train_timesteps: 1000', 'beta_schedule: linear', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      'run: lanternfish-a',
      'num_train_timesteps: 1000',
      '---',
      'num_train_timesteps: 1000',
      'beta_schedule: linear',
      'rescale_betas_zero_snr: true',
      '',
    ),
  },
];

const yamlRemove: FixCase[] = [
  {
    name: 'remove an entry with its line; the comment above it stays',
    before: lines('training:', '  snr_gamma: 5.0', '  # brightens night frames (old trick)', '  noise_offset: 0.1', '  learning_rate: 1.0e-5', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('training:', '  snr_gamma: 5.0', '  # brightens night frames (old trick)', '  learning_rate: 1.0e-5', ''),
  },
  {
    name: 'removing a line with a trailing comment touches that comment',
    before: lines('training:', '  noise_offset: 0.1  # brighter blacks', '  learning_rate: 1.0e-5', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('training:', '  learning_rate: 1.0e-5', ''),
    touchesComment: true,
  },
  {
    name: 'remove the last line of a file without a final line break',
    before: lines('num_train_timesteps: 1000', 'noise_offset: 0.05'),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: 'num_train_timesteps: 1000',
  },
  {
    name: 'remove the first key of a list item: the next key moves behind the dash',
    before: lines('runs:', '  - noise_offset: 0.1', '    num_train_timesteps: 1000', '    beta_schedule: linear', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('runs:', '  - num_train_timesteps: 1000', '    beta_schedule: linear', ''),
  },
  {
    name: 'removing the only key of a section would leave it empty: give up',
    before: lines('num_train_timesteps: 1000', 'extras:', '  noise_offset: 0.1', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: null,
  },
  {
    name: 'remove and insert in one fix',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'noise_offset: 0.1', ''),
    edits: [
      { kind: 'remove', concept: 'offsetNoise' },
      { kind: 'set', concept: 'zeroTerminalSnr', value: true },
    ],
    after: lines('num_train_timesteps: 1000', 'beta_schedule: scaled_linear', 'rescale_betas_zero_snr: true', ''),
  },
];

const lineEndings: FixCase[] = [
  {
    name: 'CRLF and a BOM are kept by a set, an insert and a removal',
    before:
      '\uFEFF# Lanternfish Pictures\r\nnum_train_timesteps: 1000\r\nbeta_schedule: scaled_linear\r\nnoise_offset: 0.1\r\ntimestep_spacing: leading\r\n',
    edits: [
      { kind: 'set', concept: 'timestepSpacing', value: 'trailing' },
      { kind: 'remove', concept: 'offsetNoise' },
      { kind: 'set', concept: 'zeroTerminalSnr', value: true },
    ],
    after:
      '\uFEFF# Lanternfish Pictures\r\nnum_train_timesteps: 1000\r\nbeta_schedule: scaled_linear\r\ntimestep_spacing: trailing\r\nrescale_betas_zero_snr: true\r\n',
  },
  {
    name: 'CRLF JSON: a new member on its own line with CRLF',
    format: 'json',
    before: '{\r\n  "num_train_timesteps": 1000,\r\n  "beta_schedule": "scaled_linear"\r\n}\r\n',
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: '{\r\n  "num_train_timesteps": 1000,\r\n  "beta_schedule": "scaled_linear",\r\n  "rescale_betas_zero_snr": true\r\n}\r\n',
  },
];

const json: FixCase[] = [
  {
    name: 'JSON one line: set keeps the double quotes',
    format: 'json',
    before: '{"num_train_timesteps": 1000, "timestep_spacing": "leading", "num_inference_steps": 30}\n',
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: '{"num_train_timesteps": 1000, "timestep_spacing": "trailing", "num_inference_steps": 30}\n',
  },
  {
    name: 'JSON one line: insert with the object spacing',
    format: 'json',
    before: '{"num_train_timesteps":1000,"beta_schedule":"scaled_linear"}',
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: '{"num_train_timesteps":1000,"beta_schedule":"scaled_linear","rescale_betas_zero_snr":true}',
  },
  {
    name: 'JSON one line: remove a middle member and its comma',
    format: 'json',
    before: '{"num_train_timesteps": 1000, "noise_offset": 0.1, "beta_schedule": "linear"}',
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: '{"num_train_timesteps": 1000, "beta_schedule": "linear"}',
  },
  {
    name: 'JSON one line: remove the last member and the comma before it',
    format: 'json',
    before: '{"num_train_timesteps": 1000, "beta_schedule": "linear", "noise_offset": 0.1}',
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: '{"num_train_timesteps": 1000, "beta_schedule": "linear"}',
  },
  {
    name: 'JSON pretty: insert after the last member adds the comma',
    format: 'json',
    before: lines(
      '{',
      '  "scheduler": {',
      '    "num_train_timesteps": 1000,',
      '    "beta_schedule": "scaled_linear"',
      '  },',
      '  "run": "lanternfish"',
      '}',
      '',
    ),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines(
      '{',
      '  "scheduler": {',
      '    "num_train_timesteps": 1000,',
      '    "beta_schedule": "scaled_linear",',
      '    "rescale_betas_zero_snr": true',
      '  },',
      '  "run": "lanternfish"',
      '}',
      '',
    ),
  },
  {
    name: 'JSON pretty: insert after a middle member',
    format: 'json',
    before: lines('{', '  "num_inference_steps": 30,', '  "guidance_scale": 7.5,', '  "seed": 7', '}', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('{', '  "num_inference_steps": 30,', '  "guidance_scale": 7.5,', '  "guidance_rescale": 0.7,', '  "seed": 7', '}', ''),
  },
  {
    name: 'JSON pretty: remove the last member and the comma before it',
    format: 'json',
    before: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear",', '  "noise_offset": 0.1', '}', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear"', '}', ''),
  },
  {
    name: 'JSON pretty: remove a middle member line',
    format: 'json',
    before: lines('{', '  "num_train_timesteps": 1000,', '  "noise_offset": 0.1,', '  "beta_schedule": "linear"', '}', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear"', '}', ''),
  },
  {
    name: 'JSON pretty: remove the last member and insert after the one before it',
    format: 'json',
    before: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear",', '  "noise_offset": 0.1', '}', ''),
    edits: [
      { kind: 'remove', concept: 'offsetNoise' },
      { kind: 'set', concept: 'zeroTerminalSnr', value: true },
    ],
    after: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear",', '  "rescale_betas_zero_snr": true', '}', ''),
  },
  {
    name: 'JSON one line: remove the last member and insert after the one before it',
    format: 'json',
    before: '{"num_train_timesteps": 1000, "beta_schedule": "linear", "noise_offset": 0.1}',
    edits: [
      { kind: 'remove', concept: 'offsetNoise' },
      { kind: 'set', concept: 'zeroTerminalSnr', value: true },
    ],
    after: '{"num_train_timesteps": 1000, "beta_schedule": "linear", "rescale_betas_zero_snr": true}',
  },
  {
    name: 'JSON pretty: numbers and booleans',
    format: 'json',
    before: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear",', '  "rescale_betas_zero_snr": false', '}'),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear",', '  "rescale_betas_zero_snr": true', '}'),
  },
];

const jsonc: FixCase[] = [
  {
    name: 'JSONC: a set keeps the trailing comment',
    format: 'jsonc',
    before: lines('{', '  // Lanternfish Pictures sampler', '  "guidance_scale": 7.5, // strong', '  "guidance_rescale": 0 // off', '}', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('{', '  // Lanternfish Pictures sampler', '  "guidance_scale": 7.5, // strong', '  "guidance_rescale": 0.7 // off', '}', ''),
  },
  {
    name: 'JSONC: insert after a member with a trailing comment puts the comma before the comment',
    format: 'jsonc',
    before: lines('{', '  "num_inference_steps": 30,', '  "guidance_scale": 7.5 // strong', '}', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('{', '  "num_inference_steps": 30,', '  "guidance_scale": 7.5, // strong', '  "guidance_rescale": 0.7', '}', ''),
  },
  {
    name: 'JSONC: insert after a member with a comma and a comment goes below the comment',
    format: 'jsonc',
    before: lines('{', '  "guidance_scale": 7.5, // strong', '  "seed": 3', '}', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: lines('{', '  "guidance_scale": 7.5, // strong', '  "guidance_rescale": 0.7,', '  "seed": 3', '}', ''),
  },
  {
    name: 'JSONC: removing a member keeps the comment line above it',
    format: 'jsonc',
    before: lines(
      '{',
      '  "num_train_timesteps": 1000,',
      '  /* brightens dark frames */',
      '  "noise_offset": 0.1,',
      '  "beta_schedule": "linear"',
      '}',
      '',
    ),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('{', '  "num_train_timesteps": 1000,', '  /* brightens dark frames */', '  "beta_schedule": "linear"', '}', ''),
  },
  {
    name: 'JSONC: removing the last member takes the comma of the previous one, past its comment',
    format: 'jsonc',
    before: lines('{', '  "num_train_timesteps": 1000, // T', '  "noise_offset": 0.1', '}', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: lines('{', '  "num_train_timesteps": 1000 // T', '}', ''),
  },
];

const betaLists: FixCase[] = [
  {
    name: 'block list: same dash indentation',
    before: lines('num_train_timesteps: 4', 'trained_betas:', '  - 0.1', '  - 0.2', '  - 0.3', '  - 0.4', 'prediction_type: v_prediction', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [0.1, 0.25, 0.5, 1] }],
    after: lines('num_train_timesteps: 4', 'trained_betas:', '  - 0.1', '  - 0.25', '  - 0.5', '  - 1.0', 'prediction_type: v_prediction', ''),
  },
  {
    name: 'flow list on one line',
    before: lines('num_train_timesteps: 4', 'trained_betas: [0.1, 0.2, 0.3, 0.4]  # hand tuned', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [0.1, 0.25, 0.5, 1] }],
    after: lines('num_train_timesteps: 4', 'trained_betas: [0.1, 0.25, 0.5, 1.0]  # hand tuned', ''),
  },
  {
    name: 'multi-line flow list keeps the items per line and the continuation indent',
    before: lines('num_train_timesteps: 6', 'betas: [', '    0.01, 0.02, 0.03,', '    0.04, 0.05, 0.06', ']', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [0.01, 0.02, 0.03, 0.04, 0.05, 1] }],
    after: lines('num_train_timesteps: 6', 'betas: [', '    0.01, 0.02, 0.03,', '    0.04, 0.05, 1.0', ']', ''),
  },
  {
    name: 'JSON pretty list, one item per line',
    format: 'json',
    before: lines('{', '  "num_train_timesteps": 3,', '  "trained_betas": [', '    0.1,', '    0.2,', '    0.3', '  ]', '}', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [0.1, 0.2, 1] }],
    after: lines('{', '  "num_train_timesteps": 3,', '  "trained_betas": [', '    0.1,', '    0.2,', '    1.0', '  ]', '}', ''),
  },
  {
    name: 'tiny betas use an exponent YAML 1.1 also reads as a number',
    before: lines('num_train_timesteps: 2', 'trained_betas: [0.1, 0.2]', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [1e-7, 1] }],
    after: lines('num_train_timesteps: 2', 'trained_betas: [1.0e-7, 1.0]', ''),
  },
  {
    name: 'comments inside the list: give up',
    before: lines('num_train_timesteps: 2', 'trained_betas:', '  - 0.1 # first', '  - 0.2', ''),
    edits: [{ kind: 'set', concept: 'betas', value: [0.1, 1] }],
    after: null,
  },
];

const giveUps: FixCase[] = [
  {
    name: 'the value is an alias',
    before: lines('defaults:', '  rescale: &phi 0.0', 'guidance_scale: 7.5', 'guidance_rescale: *phi', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: null,
  },
  {
    name: 'the value carries an anchor (other places share it)',
    before: lines('guidance_scale: 7.5', 'guidance_rescale: &phi 0.0', 'again: *phi', ''),
    edits: [{ kind: 'set', concept: 'guidanceRescale', value: 0.7 }],
    after: null,
  },
  {
    name: 'the value is a block scalar',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: |', '  leading', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: null,
  },
  {
    name: 'insert into a YAML flow map that holds comments',
    before: lines('scheduler: {', '  num_train_timesteps: 1000, # T', '  beta_schedule: scaled_linear', '}', ''),
    edits: [{ kind: 'set', concept: 'zeroTerminalSnr', value: true }],
    after: null,
  },
  {
    name: 'a plain scalar folded over two lines',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: lead', '  ing', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: null,
  },
  {
    name: 'a value with an explicit tag',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing: !!str leading', 'num_inference_steps: 30', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: null,
  },
  {
    name: 'a value that is a map',
    before: lines('num_train_timesteps: 1000', 'timestep_spacing:', '  kind: leading', ''),
    edits: [{ kind: 'set', concept: 'timestepSpacing', value: 'trailing' }],
    after: null,
  },
];

/**
 * Fixes whose text would not parse: the renderer's own shapes would write them, and only the
 * parse of the result (done for these risky shapes) keeps them from being offered. Each case says
 * why by parsing the text the fix would have made.
 */
const wouldNotParse: (FixCase & { broken: string })[] = [
  {
    name: 'removing the kept one of two duplicate JSON keys (the dropped one keeps its comma)',
    format: 'json',
    before: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear",', '  "noise_offset": 0.1,', '  "noise_offset": 0.05', '}', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: null,
    // The line goes and, the member being last in the tree, the comma after the one before it.
    broken: lines('{', '  "num_train_timesteps": 1000,', '  "beta_schedule": "linear"', '  "noise_offset": 0.1,', '}', ''),
  },
  {
    name: 'removing an entry whose value is an anchor an alias still uses',
    before: lines('num_train_timesteps: 1000', 'beta_schedule: linear', 'noise_offset: &jitter 0.1', 'extra_noise: *jitter', ''),
    edits: [{ kind: 'remove', concept: 'offsetNoise' }],
    after: null,
    broken: lines('num_train_timesteps: 1000', 'beta_schedule: linear', 'extra_noise: *jitter', ''),
  },
];

describe('renderConceptEdits', () => {
  describe('never offers a fix whose result would not parse', () => {
    for (const c of wouldNotParse) {
      it(c.name, () => {
        const format = c.format ?? 'yaml';
        const broken = parseText(c.broken, format).problems.filter((p) => p.severity === 'error');
        expect(broken.length, 'the text the fix would make has a syntax error').toBeGreaterThan(0);
        expect(parseText(c.before, format).problems.filter((p) => p.severity === 'error')).toEqual([]);
        checkFix(c);
      });
    }
  });

  const groups: [string, FixCase[]][] = [
    ['YAML block maps: set', yamlBlock],
    ['YAML: insert', yamlInsert],
    ['YAML: remove', yamlRemove],
    ['line endings and BOM', lineEndings],
    ['JSON', json],
    ['JSONC', jsonc],
    ['explicit beta lists', betaLists],
    ['give up', giveUps],
  ];
  const names = new Set<string>();
  for (const [group, cases] of groups) {
    describe(group, () => {
      for (const c of cases) {
        it(c.name, () => {
          expect(names.has(c.name), `duplicate case name: ${c.name}`).toBe(false);
          names.add(c.name);
          checkFix(c);
        });
      }
    });
  }
});
