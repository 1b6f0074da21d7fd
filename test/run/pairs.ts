/**
 * Training + sampling pairs of one Lanternfish Pictures run, written in YAML, JSON and JSONC and
 * in the key spellings of several code families, plus helpers that analyse a pair the way check
 * does (the sampling side with its training partner).
 */
import { analyzeText, readFile, type FileResult } from '../../server/src/engine/api';
import type { SourceFormat } from '../../server/src/parse/types';
import type { PartnerDocument } from '../../server/src/rules/types';

export interface RunPair {
  name: string;
  format: SourceFormat;
  ext: 'yaml' | 'json' | 'jsonc';
  train: string;
  sample: string;
}

/** Scaled linear 0.00085 -> 0.012 over T = 1000, epsilon, offset noise: the leaky run (Lin et al. 2023, Table 1). */
const YAML_SNAKE: RunPair = {
  name: 'yaml, snake_case scheduler keys',
  format: 'yaml',
  ext: 'yaml',
  train: `# Lanternfish Pictures: night storyboard fine-tune (lf-nightboard-ft-015)
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear   # copied from the base model
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: epsilon

training:
  resolution: 768
  # Added because night skies stayed mid-grey.
  noise_offset: 0.08
`,
  sample: `# Lanternfish Pictures: preview sampler for ft-015
scheduler:
  timestep_spacing: leading   # the preview job's default
  steps_offset: 1
sampling:
  sampler: ddim
  num_inference_steps: 30
  guidance_scale: 7.5
`,
};

const JSON_SNAKE: RunPair = {
  name: 'json, snake_case keys',
  format: 'json',
  ext: 'json',
  train: `{
  "noise_scheduler": {
    "num_train_timesteps": 1000,
    "beta_schedule": "scaled_linear",
    "beta_start": 0.00085,
    "beta_end": 0.012,
    "prediction_type": "epsilon"
  },
  "training": { "resolution": 768, "noise_offset": 0.05 }
}
`,
  sample: `{
  "sampler": "ddim",
  "num_inference_steps": 25,
  "guidance_scale": 7.5
}
`,
};

/** JSONC in camelCase with comments everywhere (the editor's settings style). */
const JSONC_CAMEL: RunPair = {
  name: 'jsonc, camelCase keys',
  format: 'jsonc',
  ext: 'jsonc',
  train: `// Lanternfish Pictures: product stills fine-tune
{
  "noiseScheduler": {
    "numTrainTimesteps": 1000,
    "betaSchedule": "scaled_linear", // latent model
    "betaStart": 0.00085,
    "betaEnd": 0.012,
    "predictionType": "epsilon"
  },
  "training": {
    "resolution": 1024,
    // white backgrounds came out grey
    "noiseOffset": 0.1
  }
}
`,
  sample: `// Lanternfish Pictures: product stills preview
{
  "sampler": "euler", // sigma-space sampler
  "numInferenceSteps": 30,
  "guidanceScale": 7.0
}
`,
};

/** The code family that writes linear_start / linear_end and `parameterization`. */
const YAML_SHORT: RunPair = {
  name: 'yaml, linear_start/linear_end family',
  format: 'yaml',
  ext: 'yaml',
  train: `# Lanternfish Pictures: storyboard base model (pixel preview)
model:
  params:
    timesteps: 1000
    linear_start: 0.00085
    linear_end: 0.012
    parameterization: eps
    noise_offset: 0.05  # mid-grey skies
`,
  sample: `# Lanternfish Pictures: storyboard previews
sampling:
  sampler: ddim
  sample_steps: 50
  cfg_scale: 6.0
`,
};

export const RUN_PAIRS: readonly RunPair[] = [YAML_SNAKE, JSON_SNAKE, JSONC_CAMEL, YAML_SHORT];

/** The training file read on its own; its documents as partners of the sampling file. */
export function partnersOf(pair: Pick<RunPair, 'train' | 'format' | 'ext'>, trainText = pair.train, label = `train.${pair.ext}`): PartnerDocument[] {
  const read = readFile(trainText, { path: label, format: pair.format });
  return read.documents.filter((d) => d.setup.isDiffusionConfig).map((d) => ({ path: label, setup: d.setup, analysis: d.analysis }));
}

export interface AnalysedPair {
  train: FileResult;
  sample: FileResult;
}

/** Both sides as check analyses them: the training file on its own side, the sampling file with its partner. */
export function analysePair(
  pair: Pick<RunPair, 'format' | 'ext'>,
  trainText: string,
  sampleText: string,
  trainSide: Pick<RunPair, 'format' | 'ext'> = pair,
): AnalysedPair {
  const trainLabel = `train.${trainSide.ext}`;
  const sampleLabel = `sample.${pair.ext}`;
  const trainDocs = partnersOf({ ...trainSide, train: trainText }, trainText, trainLabel);
  const sampleRead = readFile(sampleText, { path: sampleLabel, format: pair.format });
  const sampleDocs = sampleRead.documents
    .filter((d) => d.setup.isDiffusionConfig)
    .map((d) => ({ path: sampleLabel, setup: d.setup, analysis: d.analysis }));
  return {
    train: analyzeText(trainText, { path: trainLabel, format: trainSide.format, partners: sampleDocs, pairRole: 'training' }),
    sample: analyzeText(sampleText, { path: sampleLabel, format: pair.format, partners: trainDocs, pairRole: 'sampling' }),
  };
}
