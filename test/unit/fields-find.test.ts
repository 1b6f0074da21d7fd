/**
 * fields/: the alias table finds concepts at any depth, under any spelling family, and reads
 * values into the tool's vocabulary. Unknown enum values get the closest known spelling.
 */
import { describe, expect, it } from 'vitest';
import { parseText, type SourceFormat } from '../../server/src/parse';
import { findConcepts, type ConceptHit } from '../../server/src/fields';
import type { Concept } from '../../server/src/fields';

function hits(text: string, format: SourceFormat = 'yaml', extra?: Partial<Record<Concept, string[]>>): ConceptHit[] {
  const file = parseText(text, format);
  return findConcepts(file.documents[0]?.root ?? null, extra);
}

function valuesOf(list: ConceptHit[]): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const h of list) if (h.status === 'ok' && !(h.concept in out)) out[h.concept] = h.value;
  return out;
}

describe('key spellings', () => {
  it('finds concepts in nested sections with snake_case keys', () => {
    const text = `
run: night-storyboard-ft
model:
  noise_scheduler:
    num_train_timesteps: 1000
    beta_schedule: scaled_linear
    beta_start: 0.00085
    beta_end: 0.012
    prediction_type: v_prediction
    rescale_betas_zero_snr: true
    timestep_spacing: trailing
    steps_offset: 1
training:
  noise_offset: 0.0
  snr_gamma: 5
  resolution: 768
`;
    expect(valuesOf(hits(text))).toEqual({
      trainSteps: 1000,
      betaSchedule: 'scaled_linear',
      betaStart: 0.00085,
      betaEnd: 0.012,
      predictionTarget: 'v',
      zeroTerminalSnr: true,
      timestepSpacing: 'trailing',
      stepsOffset: 1,
      offsetNoise: 0,
      minSnrGamma: 5,
      resolution: 768,
    });
  });

  it('treats camelCase, kebab-case and upper case keys alike', () => {
    const json = '{"numTrainTimesteps": 1000, "Beta-Schedule": "linear", "PREDICTION_TYPE": "eps", "guidanceScale": 7.5}';
    const found = hits(json, 'json');
    expect(valuesOf(found)).toEqual({ trainSteps: 1000, betaSchedule: 'linear', predictionTarget: 'epsilon', guidanceScale: 7.5 });
    expect(found.find((h) => h.concept === 'trainSteps')!.keyStyle).toBe('camel');
  });

  it('reports the path and spans of each hit', () => {
    const text = 'pipelines:\n  - scheduler:\n      guidance_rescale: 0.7\n';
    const h = hits(text)[0]!;
    expect(h.concept).toBe('guidanceRescale');
    expect(h.source.path).toBe('pipelines[0].scheduler.guidance_rescale');
    expect(text.slice(h.source.keySpan.start, h.source.keySpan.end)).toBe('guidance_rescale');
    expect(text.slice(h.source.valueSpan.start, h.source.valueSpan.end)).toBe('0.7');
    expect(h.source.parent.entries).toContain(h.source.entry);
  });

  it('matches dotted path suffixes and flat dotted keys', () => {
    // `timesteps` under model.params is specific; elsewhere it is a generic word.
    const ldm = 'model:\n  params:\n    timesteps: 1000\n    linear_start: 0.00085\n    linear_end: 0.012\n    parameterization: eps\n';
    const found = hits(ldm);
    const steps = found.find((h) => h.concept === 'trainSteps')!;
    expect(steps.alias.spelling).toBe('model.params.timesteps');
    expect(steps.alias.kind).toBe('key');
    expect(steps.keyStyle).toBe('short');
    expect(valuesOf(found)).toEqual({ trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012, predictionTarget: 'epsilon' });
    const flat = hits('{"noise_scheduler.beta_schedule": "cosine", "sampler.steps": 30}', 'json');
    expect(valuesOf(flat)).toEqual({ betaSchedule: 'cosine', sampleSteps: 30 });
  });

  it('uses extra aliases from the project file first', () => {
    const text = 'lanternfish:\n  denoise_count: 1000\n  num_train_timesteps: 500\n';
    const found = hits(text, 'yaml', { trainSteps: ['lanternfish.denoise_count'] });
    const steps = found.filter((h) => h.concept === 'trainSteps');
    expect(steps.map((h) => h.value)).toEqual([1000, 500]);
    expect(steps[0]!.extra).toBe(true);
  });

  it('ignores unknown keys', () => {
    expect(hits('learning_rate: 1e-5\nbatch_size: 4\ndataset: /data/lanternfish/night\n')).toEqual([]);
  });

  it('follows YAML merge keys, letting own keys override merged ones', () => {
    const text = [
      'base: &base',
      '  beta_schedule: scaled_linear',
      '  num_train_timesteps: 1000',
      'finetune:',
      '  <<: *base',
      '  num_train_timesteps: 500',
    ].join('\n');
    const ft = hits(text).filter((h) => h.source.path.startsWith('finetune'));
    expect(ft.map((h) => [h.concept, h.value])).toEqual([
      ['trainSteps', 500],
      ['betaSchedule', 'scaled_linear'],
    ]);
  });
});

describe('value spellings', () => {
  const cases: [string, Concept, unknown][] = [
    ['prediction_type: epsilon', 'predictionTarget', 'epsilon'],
    ['prediction_type: noise', 'predictionTarget', 'epsilon'],
    ['prediction_type: v_prediction', 'predictionTarget', 'v'],
    ['prediction_type: velocity', 'predictionTarget', 'v'],
    ['prediction_type: sample', 'predictionTarget', 'x0'],
    ['parameterization: x0', 'predictionTarget', 'x0'],
    ['prediction_type: x_start', 'predictionTarget', 'x0'],
    ['prediction_type: flow', 'predictionTarget', 'flow'],
    ['prediction_type: rectified_flow', 'predictionTarget', 'flow'],
    ['v_parameterization: true', 'predictionTarget', 'v'],
    ['v_parameterization: false', 'predictionTarget', 'epsilon'],
    ['objective: pred_v', 'predictionTarget', 'v'],
    ['beta_schedule: squaredcos_cap_v2', 'betaSchedule', 'cosine'],
    ['beta_schedule: Scaled-Linear', 'betaSchedule', 'scaled_linear'],
    ['beta_schedule: sigmoid', 'betaSchedule', 'sigmoid'],
    ['timestep_spacing: linspace', 'timestepSpacing', 'linspace'],
    ['_class_name: DDIMScheduler', 'sampler', 'ddim'],
    ['_class_name: EulerAncestralDiscreteScheduler', 'sampler', 'euler-ancestral'],
    ['_class_name: DPMSolverMultistepScheduler', 'sampler', 'dpm-solver-multistep'],
    ['_class_name: FlowMatchEulerDiscreteScheduler', 'sampler', 'flow-euler'],
    ['_class_name: UniPCMultistepScheduler', 'sampler', 'unipc'],
    ['_target_: lanternfish.samplers.HeunDiscreteScheduler', 'sampler', 'heun'],
    ['target: lanternfish.samplers.PLMSSampler', 'sampler', 'pndm'],
    ['sampler_name: "Euler a"', 'sampler', 'euler-ancestral'],
    ['sampler: dpmpp_2m', 'sampler', 'dpm-solver-multistep'],
    ['sampler: k_lms', 'sampler', 'lms'],
    ['scheduler: ddim', 'sampler', 'ddim'],
    ['use_karras_sigmas: true', 'karrasSigmas', true],
    ['clip_sample: "off"', 'thresholding', false],
    ['thresholding: yes', 'thresholding', true],
    ['zero_terminal_snr: 1', 'zeroTerminalSnr', true],
    ['resolution: [768, 512]', 'resolution', 768],
    ['flow_shift: 3.0', 'flowShift', 3],
    ['cfg_scale: 7', 'guidanceScale', 7],
    ['sigma_max: 80', 'sigmaMax', 80],
  ];
  for (const [text, concept, expected] of cases) {
    it(`${text} -> ${concept} ${String(expected)}`, () => {
      const found = hits(`${text}\n`);
      expect(found.length).toBeGreaterThan(0);
      expect(found[0]!.concept).toBe(concept);
      expect(found[0]!.status).toBe('ok');
      expect(found[0]!.value).toEqual(expected);
    });
  }

  it('reads a trailing "karras" as Karras sigmas plus the sampler', () => {
    const found = hits('sampler_name: "DPM++ 2M Karras"\n');
    expect(found.map((h) => [h.concept, h.value])).toEqual([
      ['sampler', 'dpm-solver-multistep'],
      ['karrasSigmas', true],
    ]);
    expect(valuesOf(hits('scheduler: karras\n'))).toEqual({ karrasSigmas: true });
  });

  it('reads explicit beta lists, numeric strings included', () => {
    const found = hits('trained_betas: [0.0001, "2e-4", 3.0e-4]\n');
    expect(found[0]!.value).toEqual([0.0001, 0.0002, 0.0003]);
  });
});

describe('unknown enum values', () => {
  it('suggests the closest known spelling in the style of the file', () => {
    const h = hits('beta_schedule: scaled-linaer\n')[0]!;
    expect(h.status).toBe('problem');
    expect(h.problem!.kind).toBe('unknown-value');
    expect(h.problem!.suggestion).toBe('scaled-linear');
    expect(h.problem!.message).toContain('scaled-linaer');
    expect(h.problem!.message).not.toContain('\n');
    const t = hits('timestep_spacing: trialing\n')[0]!;
    expect(t.problem!.suggestion).toBe('trailing');
    const p = hits('prediction_type: V_PREDICTON\n')[0]!;
    expect(p.problem!.suggestion).toBe('V_PREDICTION');
  });

  it('reports values with nothing close without a suggestion', () => {
    const h = hits('prediction_type: banana\n')[0]!;
    expect(h.problem!.kind).toBe('unknown-value');
    expect(h.problem!.suggestion).toBeUndefined();
  });

  it('does not report samplers it knows but does not model', () => {
    expect(hits('sampler_name: dpm_2\n')).toEqual([]);
    expect(hits('_class_name: LCMScheduler\n')).toEqual([]);
  });
});

describe('non-number values', () => {
  const cases: [string, string][] = [
    ['num_train_timesteps: 1000.5', 'not-an-integer'],
    ['num_inference_steps: many', 'not-a-number'],
    ['beta_end: .nan', 'not-finite'],
    ['beta_end: .inf', 'not-finite'],
    ['beta_end: 1e309', 'not-finite'],
    ['beta_end: "Infinity"', 'not-finite'],
    ['beta_start: true', 'wrong-type'],
    ['guidance_scale: [7.5]', 'wrong-type'],
    ['rescale_betas_zero_snr: maybe', 'wrong-type'],
    ['trained_betas: [0.1, oops]', 'not-a-number'],
    ['trained_betas: 0.1', 'wrong-type'],
    ['prediction_type: 3', 'wrong-type'],
  ];
  for (const [text, kind] of cases) {
    it(`${text} -> ${kind}`, () => {
      const h = hits(`${text}\n`)[0]!;
      expect(h.status).toBe('problem');
      expect(h.problem!.kind).toBe(kind);
    });
  }

  it('accepts numeric strings and integral floats', () => {
    expect(valuesOf(hits('beta_start: "1e-4"\nnum_train_timesteps: 1000.0\n'))).toEqual({ betaStart: 0.0001, trainSteps: 1000 });
  });

  it('treats null values as unset, not as problems', () => {
    const found = hits('{"trained_betas": null, "guidance_rescale": null}', 'json');
    expect(found.map((h) => [h.concept, h.status])).toEqual([
      ['betas', 'unset'],
      ['guidanceRescale', 'unset'],
    ]);
  });
});

describe('generic keys count only when the value fits', () => {
  it('schedule: a beta schedule name yes, a section or an LR schedule no', () => {
    expect(valuesOf(hits('schedule: cosine\n'))).toEqual({ betaSchedule: 'cosine' });
    expect(hits('schedule:\n  lr: 1e-4\n  warmup: 500\n')).toEqual([]);
    expect(hits('lr_scheduler:\n  schedule: linear\n')).toEqual([]);
    expect(hits('optimizer:\n  schedule: cosine\n')).toEqual([]);
    expect(hits('schedule: constant_with_warmup\n')).toEqual([]);
  });

  it('timesteps: integers only', () => {
    expect(valuesOf(hits('timesteps: 1000\n'))).toEqual({ trainSteps: 1000 });
    expect(hits('timesteps: [999, 749, 499, 249]\n')).toEqual([]);
    expect(hits('timesteps: "1000"\n')).toEqual([]);
    expect(hits('timesteps: 0.5\n')).toEqual([]);
  });

  it('shift: numbers only', () => {
    expect(valuesOf(hits('shift: 3.0\n'))).toEqual({ flowShift: 3 });
    expect(hits('shift: left\n')).toEqual([]);
  });

  it('betas: a schedule list, not the optimizer pair', () => {
    expect(hits('optimizer:\n  betas: [0.9, 0.999]\n')).toEqual([]);
    expect(hits('betas: [0.9, 0.999]\n')).toEqual([]);
    expect(valuesOf(hits('betas: [0.001, 0.002, 0.003]\n'))).toEqual({ betas: [0.001, 0.002, 0.003] });
  });

  it('rho outside optimizer sections; timesteps under sampling means sampling steps', () => {
    expect(hits('optim:\n  rho: 0.9\n')).toEqual([]);
    expect(valuesOf(hits('karras:\n  rho: 7\n'))).toEqual({ rho: 7 });
    expect(valuesOf(hits('sampling:\n  timesteps: 50\n'))).toEqual({ sampleSteps: 50 });
  });

  it('a close misspelling under a generic key is still reported', () => {
    const h = hits('schedule: cosnie\n')[0]!;
    expect(h.problem?.suggestion).toBe('cosine');
  });

  it('class-name fields only count for scheduler or sampler classes', () => {
    expect(hits('{"compilerOptions": {"target": "ES2022", "module": "ESNext"}}', 'json')).toEqual([]);
    expect(hits('target: lanternfish.models.UNetStoryboard\n')).toEqual([]);
    expect(hits('dataloader:\n  sampler: RandomSampler\n')).toEqual([]);
    expect(hits('target: lanternfish.models.diffusion.ddpm.DDPM\n')).toEqual([]);
  });

  it('a scheduler section is searched, not read as a value', () => {
    const found = hits('scheduler:\n  _class_name: EulerDiscreteScheduler\n  num_train_timesteps: 1000\n');
    expect(valuesOf(found)).toEqual({ sampler: 'euler', trainSteps: 1000 });
  });
});
