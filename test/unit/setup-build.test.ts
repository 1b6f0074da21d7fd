/**
 * setup/: one typed Setup per document, with recognition, role, assumed defaults, value problems
 * and duplicate handling. Fixtures are Lanternfish Pictures demo files (invented data).
 */
import { describe, expect, it } from 'vitest';
import { parseText, type SourceFormat } from '../../server/src/parse';
import { buildSetup, valueOf, type Setup } from '../../server/src/setup';

function setups(text: string, format: SourceFormat = 'yaml', opts?: Parameters<typeof buildSetup>[1]): Setup[] {
  return parseText(text, format).documents.map((d) => buildSetup(d, opts));
}
function setup(text: string, format: SourceFormat = 'yaml', opts?: Parameters<typeof buildSetup>[1]): Setup {
  const all = setups(text, format, opts);
  expect(all.length).toBe(1);
  return all[0]!;
}

// runs/night-storyboard-ft.yaml
const NIGHT_STORYBOARD = `run_name: night-storyboard-ft
pretrained: lanternfish/storyboard-base-v3
vae:
  path: lanternfish/storyboard-vae
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: epsilon
training:
  resolution: 768
  noise_offset: 0.05
  snr_gamma: 5.0
  learning_rate: 1e-5
`;

// sampling/product-stills.json
const PRODUCT_STILLS = `{
  "scheduler": {
    "_class_name": "DDIMScheduler",
    "num_train_timesteps": 1000,
    "beta_schedule": "scaled_linear",
    "rescale_betas_zero_snr": true,
    "prediction_type": "v_prediction",
    "timestep_spacing": "trailing",
    "trained_betas": null
  },
  "num_inference_steps": 30,
  "guidance_scale": 7.5
}`;

describe('Lanternfish fixtures', () => {
  it('runs/night-storyboard-ft.yaml: a training file with assumed sampling-side defaults', () => {
    const s = setup(NIGHT_STORYBOARD);
    expect(s.isDiffusionConfig).toBe(true);
    expect(s.role).toBe('training');
    expect(s.problems).toEqual([]);
    expect(s.keyStyle).toBe('snake');
    expect(valueOf(s, 'trainSteps')).toBe(1000);
    expect(valueOf(s, 'betaSchedule')).toBe('scaled_linear');
    expect(valueOf(s, 'betaEnd')).toBe(0.012);
    expect(valueOf(s, 'offsetNoise')).toBe(0.05);
    expect(valueOf(s, 'minSnrGamma')).toBe(5);
    expect(s.fields.trainSteps!.assumed).toBe(false);
    expect(s.fields.trainSteps!.source!.path).toBe('noise_scheduler.num_train_timesteps');
    expect([...s.assumed].sort()).toEqual(['latentSpace', 'stepsOffset', 'timestepSpacing', 'zeroTerminalSnr']);
    expect(s.fields.timestepSpacing).toMatchObject({ value: 'leading', assumed: true, source: null });
    expect(s.fields.latentSpace!.value).toBe(true);
    expect(s.fields.guidanceRescale).toBeUndefined(); // no guidance scale: not assumed
    expect(s.fields.sampleSteps).toBeUndefined();
    expect(s.rootMap).not.toBeNull();
  });

  it('sampling/product-stills.json: a sampling file', () => {
    const s = setup(PRODUCT_STILLS, 'json');
    expect(s.isDiffusionConfig).toBe(true);
    expect(s.role).toBe('sampling');
    expect(valueOf(s, 'sampler')).toBe('ddim');
    expect(valueOf(s, 'predictionTarget')).toBe('v');
    expect(valueOf(s, 'zeroTerminalSnr')).toBe(true);
    expect(valueOf(s, 'sampleSteps')).toBe(30);
    expect(s.fields.guidanceRescale).toMatchObject({ value: 0, assumed: true, source: null });
    // scaled_linear without a range: 0.00085 / 0.012 (common practice for latent models, recalled from memory)
    expect(s.fields.betaStart).toMatchObject({ value: 0.00085, assumed: true });
    expect(s.fields.betaEnd).toMatchObject({ value: 0.012, assumed: true });
    expect(s.fields.betas).toBeUndefined();
    expect(s.nullKeys?.betas?.path).toBe('scheduler.trained_betas');
  });

  it('field sources slice back to the key and the value', () => {
    const s = setup(PRODUCT_STILLS, 'json');
    const src = s.fields.guidanceScale!.source!;
    expect(PRODUCT_STILLS.slice(src.keySpan.start, src.keySpan.end)).toBe('"guidance_scale"');
    expect(PRODUCT_STILLS.slice(src.valueSpan.start, src.valueSpan.end)).toBe('7.5');
    expect(src.parent).toBe(s.rootMap);
  });
});

describe('recognition', () => {
  const unrelated: [string, string, SourceFormat][] = [
    [
      '.github/workflows/ci.yml',
      'name: ci\non:\n  push:\n  schedule:\n    - cron: "0 3 * * *"\njobs:\n  test:\n    runs-on: ubuntu-latest\n    timeout-minutes: 30\n    steps:\n      - uses: actions/checkout@v4\n      - run: npm test\n',
      'yaml',
    ],
    ['package.json', '{"name": "lanternfish-tools", "version": "1.0.0", "scripts": {"test": "vitest"}, "dependencies": {"yaml": "2.9.1"}}', 'json'],
    ['tsconfig.json', '{"compilerOptions": {"target": "ES2022", "module": "ESNext", "strict": true}, "include": ["src"]}', 'jsonc'],
    ['docker-compose.yml', 'services:\n  renderer:\n    image: lanternfish/renderer\n    deploy:\n      replicas: 2\n', 'yaml'],
    ['animation.yaml', 'clip:\n  timesteps: 48\n  shift: 2\n', 'yaml'],
  ];
  for (const [name, text, format] of unrelated) {
    it(`${name} is not a diffusion config`, () => {
      const s = setup(text, format);
      expect(s.isDiffusionConfig).toBe(false);
      expect(s.assumed).toEqual([]);
    });
  }

  it('one specific schedule key is enough', () => {
    expect(setup('prediction_type: v_prediction\n').isDiffusionConfig).toBe(true);
    expect(setup('beta_schedule: cosnie\n').isDiffusionConfig).toBe(true); // present, even if unreadable
  });

  it('generic keys need company', () => {
    expect(setup('timesteps: 1000\n').isDiffusionConfig).toBe(false);
    expect(setup('timesteps: 1000\nschedule: cosine\n').isDiffusionConfig).toBe(true);
    expect(setup('timesteps: 1000\nsampler: ddim\n').isDiffusionConfig).toBe(true);
  });

  it('a sampling file with steps and a sampler or a guidance scale', () => {
    expect(setup('sampler: euler_a\nnum_inference_steps: 20\n').isDiffusionConfig).toBe(true);
    expect(setup('num_inference_steps: 20\nguidance_scale: 5\n').isDiffusionConfig).toBe(true);
    expect(setup('num_inference_steps: 20\n').isDiffusionConfig).toBe(false);
  });

  it('returns a plain setup for empty documents and scalar roots', () => {
    for (const text of ['', 'just a string\n', '- 1\n- 2\n']) {
      for (const s of setups(text)) {
        expect(s.isDiffusionConfig).toBe(false);
        expect(s.fields).toEqual({});
      }
    }
  });
});

describe('multiple documents', () => {
  it('builds one setup per document', () => {
    const text = [
      '# runs/product-stills-ft.yaml',
      'training:',
      '  num_train_timesteps: 1000',
      '  beta_schedule: linear',
      '  noise_offset: 0.1',
      '---',
      'sampling:',
      '  num_inference_steps: 25',
      '  guidance_scale: 6',
      '  sampler: euler',
      '---',
      'owner: lanternfish-render-team',
    ].join('\n');
    const all = setups(text);
    expect(all.map((s) => s.documentIndex)).toEqual([0, 1, 2]);
    expect(all.map((s) => s.isDiffusionConfig)).toEqual([true, true, false]);
    expect(all[0]!.role).toBe('training');
    expect(all[1]!.role).toBe('sampling');
    expect(valueOf(all[1]!, 'sampleSteps')).toBe(25);
    expect(valueOf(all[0]!, 'sampleSteps')).toBeUndefined();
    expect(all[1]!.documentSpan.start).toBeGreaterThan(all[0]!.documentSpan.start);
  });
});

describe('role', () => {
  it('uses training-ish section names', () => {
    expect(setup('train:\n  beta_schedule: linear\n').role).toBe('training');
    expect(setup('job:\n  trainer:\n    beta_schedule: linear\n').role).toBe('training');
  });
  it('is both with signs of both, or of neither', () => {
    expect(setup('beta_schedule: linear\n').role).toBe('both');
    expect(setup('noise_offset: 0.05\nbeta_schedule: linear\nvalidation:\n  num_inference_steps: 25\n').role).toBe('both');
  });
});

describe('defaults', () => {
  it('assumes the linear schedule of Ho et al. 2020 when nothing is said', () => {
    const s = setup('prediction_type: epsilon\n');
    // Ho et al. 2020: T = 1000, beta from 1e-4 to 0.02
    expect(s.fields.trainSteps).toMatchObject({ value: 1000, assumed: true, source: null });
    expect(s.fields.betaSchedule).toMatchObject({ value: 'linear', assumed: true });
    expect(s.fields.betaStart!.value).toBe(1e-4);
    expect(s.fields.betaEnd!.value).toBe(0.02);
    expect(s.fields.latentSpace!.value).toBe(false);
    expect(s.assumed).toEqual(expect.arrayContaining(['trainSteps', 'betaSchedule', 'betaStart', 'betaEnd']));
    for (const c of s.assumed) {
      expect(s.fields[c]!.assumed).toBe(true);
      expect(s.fields[c]!.source).toBeNull();
      expect(s.fields[c]!.note).toBeTruthy();
    }
  });

  it('keeps a given end of the range and fills the other', () => {
    const s = setup('beta_schedule: linear\nbeta_end: 0.03\n');
    expect(s.fields.betaStart).toMatchObject({ value: 1e-4, assumed: true }); // Ho et al. 2020
    expect(s.fields.betaEnd).toMatchObject({ value: 0.03, assumed: false });
  });

  it('assumes no beta range for cosine', () => {
    const s = setup('beta_schedule: squaredcos_cap_v2\n');
    expect(valueOf(s, 'betaSchedule')).toBe('cosine');
    expect(s.fields.betaStart).toBeUndefined();
    expect(s.fields.betaEnd).toBeUndefined();
  });

  it('takes T from an explicit beta list and assumes no schedule family', () => {
    const s = setup('trained_betas: [0.001, 0.002, 0.003, 0.004]\nprediction_type: epsilon\n');
    expect(s.fields.trainSteps).toMatchObject({ value: 4, assumed: true });
    expect(s.fields.betaSchedule).toBeUndefined();
  });

  it('assumes a flow target and no discrete-schedule defaults for flow-matching files', () => {
    const s = setup('scheduler:\n  _class_name: FlowMatchEulerDiscreteScheduler\n  shift: 3.0\n  num_train_timesteps: 1000\n');
    expect(valueOf(s, 'flowShift')).toBe(3);
    expect(s.fields.predictionTarget).toMatchObject({ value: 'flow', assumed: true });
    expect(s.fields.betaSchedule).toBeUndefined();
    expect(s.fields.timestepSpacing).toBeUndefined();
    expect(s.fields.zeroTerminalSnr).toBeUndefined();
  });

  it('assumes nothing for a present but unreadable value', () => {
    const s = setup('num_train_timesteps: lots\nbeta_schedule: linear\n');
    expect(s.fields.trainSteps).toBeUndefined();
    expect(s.assumed).not.toContain('trainSteps');
    expect(s.problems.map((p) => [p.concept, p.kind])).toEqual([['trainSteps', 'not-a-number']]);
  });

  it('latentSpace: project setting first, then inference', () => {
    expect(valueOf(setup('beta_schedule: linear\n', 'yaml', { latentSpaceDefault: true }), 'latentSpace')).toBe(true);
    expect(valueOf(setup('beta_schedule: scaled_linear\n', 'yaml', { latentSpaceDefault: false }), 'latentSpace')).toBe(false);
    expect(valueOf(setup('beta_schedule: scaled_linear\n'), 'latentSpace')).toBe(true);
    expect(valueOf(setup('model:\n  first_stage_config: {}\nbeta_schedule: linear\n'), 'latentSpace')).toBe(true);
    expect(valueOf(setup('beta_schedule: linear\nimage_size: 64\n'), 'latentSpace')).toBe(false);
  });
});

describe('the linear_start / linear_end family', () => {
  const ldm = 'model:\n  params:\n    timesteps: 1000\n    linear_start: 0.00085\n    linear_end: 0.012\n    parameterization: eps\n';

  it('reads an absent schedule as scaled_linear (that family interpolates sqrt(beta); recalled from memory)', () => {
    const s = setup(ldm);
    expect(s.keyStyle).toBe('short');
    expect(s.fields.betaSchedule).toMatchObject({ value: 'scaled_linear', assumed: true });
    expect(valueOf(s, 'betaStart')).toBe(0.00085);
  });

  it('reads an explicit "linear" there as scaled_linear with a note', () => {
    const s = setup(`${ldm}    beta_schedule: linear\n`);
    expect(s.fields.betaSchedule).toMatchObject({ value: 'scaled_linear', assumed: false });
    expect(s.fields.betaSchedule!.note).toMatch(/sqrt/);
  });

  it('leaves "linear" alone next to beta_start / beta_end', () => {
    const s = setup('beta_schedule: linear\nbeta_start: 0.0001\nbeta_end: 0.02\n');
    expect(valueOf(s, 'betaSchedule')).toBe('linear');
    expect(s.fields.betaSchedule!.note).toBeUndefined();
  });
});

describe('value problems', () => {
  it('keeps bad values out of fields and lists every problem', () => {
    const s = setup(
      [
        'num_train_timesteps: 1000.5',
        'beta_start: "1e-4"',
        'beta_end: .nan',
        'guidance_scale: true',
        'num_inference_steps: "thirty"',
        'prediction_type: v-predicton',
        'guidance_rescale: 1e309',
      ].join('\n'),
    );
    expect(valueOf(s, 'betaStart')).toBe(1e-4); // numeric strings are numbers
    const kinds = Object.fromEntries(s.problems.map((p) => [p.concept, p.kind]));
    expect(kinds).toEqual({
      trainSteps: 'not-an-integer',
      betaEnd: 'not-finite',
      guidanceScale: 'wrong-type',
      sampleSteps: 'not-a-number',
      predictionTarget: 'unknown-value',
      guidanceRescale: 'not-finite',
    });
    for (const c of ['trainSteps', 'betaEnd', 'guidanceScale', 'sampleSteps', 'predictionTarget', 'guidanceRescale'] as const) {
      expect(s.fields[c]).toBeUndefined();
    }
    const target = s.problems.find((p) => p.concept === 'predictionTarget')!;
    expect(target.suggestion).toBe('v-prediction');
    expect(target.source.key).toBe('prediction_type');
  });

  it('reports a concept set twice with different values; the first wins', () => {
    const text = 'noise_scheduler:\n  num_train_timesteps: 1000\nsampling:\n  scheduler:\n    num_train_timesteps: 500\n';
    const s = setup(text);
    expect(valueOf(s, 'trainSteps')).toBe(1000);
    expect(s.problems.length).toBe(1);
    const dup = s.problems[0]!;
    expect(dup.kind).toBe('duplicate');
    expect(dup.source.path).toBe('sampling.scheduler.num_train_timesteps');
    expect(dup.message).toContain('1000');
    expect(dup.message).toContain('500');
  });

  it('says nothing when the repeated value agrees, or comes through an alias', () => {
    expect(setup('a:\n  beta_schedule: linear\nb:\n  beta_schedule: linear\n').problems).toEqual([]);
    expect(setup('a: &s\n  beta_schedule: cosine\nb: *s\n').problems).toEqual([]);
  });

  it('reports conflicting spellings of one concept', () => {
    const s = setup('prediction_type: epsilon\nv_parameterization: true\n');
    expect(valueOf(s, 'predictionTarget')).toBe('epsilon');
    expect(s.problems.map((p) => p.kind)).toEqual(['duplicate']);
  });
});

describe('key style', () => {
  it('detects camelCase files', () => {
    const s = setup('{"numTrainTimesteps": 1000, "betaSchedule": "linear", "predictionType": "epsilon"}', 'json');
    expect(s.keyStyle).toBe('camel');
  });
});

describe('extra aliases', () => {
  it('finds concepts under project-defined keys', () => {
    const s = setup('lanternfish:\n  denoise_count: 1000\n  night_boost: 0.1\n', 'yaml', {
      extraAliases: { trainSteps: ['denoise_count'], offsetNoise: ['lanternfish.night_boost'] },
    });
    expect(s.isDiffusionConfig).toBe(true);
    expect(valueOf(s, 'trainSteps')).toBe(1000);
    expect(valueOf(s, 'offsetNoise')).toBe(0.1);
  });
});
