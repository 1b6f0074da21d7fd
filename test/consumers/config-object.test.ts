/**
 * The config-object family read per component: which component each concept comes from, the
 * legacy discretization's sampling timesteps against numpy, and what is never read (sizes of the
 * network, first-stage and conditioner configs).
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { consumerTimesteps } from '../../server/src/consumers/timesteps';
import { analyzeText, readFile } from '../../server/src/engine/api';
import { explainDocumentJson, formatExplainText } from '../../server/src/views/explainFormat';
import { hoverAt } from '../../server/src/views/hover';

/**
 * numpy 2.4.6: np.linspace(999, 0, N, endpoint=False).astype(int), i.e.
 * generate_roughly_equally_spaced_steps(N, 1000) of generative-models
 * sgm/modules/diffusionmodules/discretizer.py before its [::-1] (stored copy, commit 7ef5489),
 * noisiest first as the flipped sigmas are used. Values printed by numpy and copied here.
 */
const NUMPY_STEPS: Record<number, number[]> = {
  3: [999, 666, 333],
  7: [999, 856, 713, 570, 428, 285, 142],
  25: [999, 959, 919, 879, 839, 799, 759, 719, 679, 639, 599, 559, 519, 479, 439, 399, 359, 319, 279, 239, 199, 159, 119, 79, 39],
  30: [
    999, 965, 932, 899, 865, 832, 799, 765, 732, 699, 666, 632, 599, 566, 532, 499, 466, 432, 399, 366, 333, 299, 266, 233, 199, 166, 133, 99, 66, 33,
  ],
};

function steps(N: number, T = 1000): number[] {
  const r = consumerTimesteps('even-from-last', 'trailing', T, N, 0);
  if (!r.ok) throw new Error(r.problem);
  return r.value;
}

function pythonNumpy(): boolean {
  try {
    execFileSync('python3', ['-c', 'import numpy'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

describe('legacy discretization timesteps (even-from-last)', () => {
  it.each(Object.entries(NUMPY_STEPS))('N = %s matches numpy', (n, want) => {
    expect(steps(Number(n))).toEqual(want);
  });

  it('differs from trailing spacing where truncation and rounding part (N = 30)', () => {
    // Trailing (DESIGN section 4) gives 999, 966, 932, ...: the legacy code truncates 965.7 to 965.
    expect(steps(30).slice(0, 3)).toEqual([999, 965, 932]);
  });

  it('N = T is every step; N > T is refused as the code raises', () => {
    expect(steps(1000)).toEqual(Array.from({ length: 1000 }, (_, i) => 999 - i));
    expect(consumerTimesteps('even-from-last', 'trailing', 1000, 1001, 0).ok).toBe(false);
  });

  it.runIf(pythonNumpy())('matches numpy run now for many N and T', () => {
    const cases = [
      [1000, 1],
      [1000, 13],
      [1000, 333],
      [1000, 999],
      [500, 49],
      [4000, 77],
    ];
    const script = `import numpy as np, json\nprint(json.dumps([np.linspace(T-1,0,N,endpoint=False).astype(int).tolist() for T,N in ${JSON.stringify(cases)}]))`;
    const want = JSON.parse(execFileSync('python3', ['-c', script], { encoding: 'utf8' })) as number[][];
    cases.forEach(([T, N], i) => expect(steps(N!, T), `T ${T}, N ${N}`).toEqual(want[i]));
  });
});

const ENGINE = `# Lanternfish Pictures: engine read per component
model:
  target: sgm.models.diffusion.DiffusionEngine
  params:
    learning_rate_typo: 3
    denoiser_config:
      target: sgm.modules.diffusionmodules.denoiser.DiscreteDenoiser
      params:
        num_idx: 1000
        scaling_config:
          target: sgm.modules.diffusionmodules.denoiser_scaling.VScaling
        discretization_config:
          target: sgm.modules.diffusionmodules.discretizer.LegacyDDPMDiscretization
          params:
            linear_end: 0.03
    network_config:
      target: sgm.modules.diffusionmodules.openaimodel.UNetModel
      params:
        image_size: 128
        num_timesteps: 50
        guidance_scale: 12
    first_stage_config:
      target: sgm.models.autoencoder.AutoencoderKL
      params:
        ddconfig:
          resolution: 2048
    sampler_config:
      target: sgm.modules.diffusionmodules.sampling.EulerEDMSampler
      params:
        num_steps: 30
        s_churn: 0.0
        cfg_rescale: 0.7
        discretization_config:
          target: sgm.modules.diffusionmodules.discretizer.LegacyDDPMDiscretization
          params:
            linear_end: 0.03
        guider_config:
          target: sgm.modules.diffusionmodules.guiders.VanillaCFG
          params:
            scale: 6.0
`;

describe('per-component reading', () => {
  const result = analyzeText(ENGINE, { path: '/studio/engine.yaml' });
  const setup = result.documents[0]!.setup;

  it('reads each concept from its component', () => {
    expect(setup.fields.predictionTarget?.value).toBe('v');
    expect(setup.fields.predictionTarget?.source?.path).toBe('model.params.denoiser_config.params.scaling_config.target');
    expect(setup.fields.betaEnd?.source?.path).toBe('model.params.denoiser_config.params.discretization_config.params.linear_end');
    expect(setup.fields.betaSchedule?.value).toBe('scaled_linear');
    expect(setup.fields.sampleSteps?.value).toBe(30);
    expect(setup.fields.guidanceScale?.value).toBe(6);
    expect(setup.fields.sampler?.value).toBe('euler');
    expect(setup.role).toBe('both');
  });

  it('never reads sizes or look-alike keys of other components', () => {
    expect(setup.fields.resolution).toBeUndefined();
    expect(setup.fields.trainSteps?.assumed).toBe(true);
    expect(setup.fields.trainSteps?.value).toBe(1000);
    // cfg_rescale under the sampler is not a sampler argument: it does not count as a rescale.
    expect(setup.fields.guidanceRescale?.value).toBe(0);
    expect(setup.fields.guidanceRescale?.assumed).toBe(true);
  });

  it('applies the class defaults, naming the class', () => {
    expect(setup.fields.betaStart?.value).toBe(0.00085);
    expect(setup.fields.betaStart?.note).toContain("LegacyDDPMDiscretization's default for an absent linear_start");
    expect(setup.fields.latentSpace?.value).toBe(true);
  });

  it('lists the keys a class does not take (it raises a TypeError when instantiated)', () => {
    const ignored = setup.consumer!.ignoredKeys.map((k) => k.path);
    expect(ignored).toContain('learning_rate_typo');
    expect(ignored).toContain('model.params.sampler_config.params.cfg_rescale');
    expect(ignored).not.toContain('model.params.sampler_config.params.s_churn');
  });

  it('samples the legacy steps from T - 1 and flags nothing loud', () => {
    const sampling = result.documents[0]!.analysis.sampling!;
    expect(sampling.timesteps.slice(0, 4)).toEqual([999, 965, 932, 899]);
    expect(result.findings.filter((f) => f.severity === 'error' || f.severity === 'warning')).toEqual([]);
  });

  it('is found even when the text names no concept key (class defaults only)', () => {
    const bare = `model:
  target: sgm.models.diffusion.DiffusionEngine
  params:
    denoiser_config:
      target: sgm.modules.diffusionmodules.denoiser.DiscreteDenoiser
      params:
        num_idx: 1000
        scaling_config:
          target: sgm.modules.diffusionmodules.denoiser_scaling.VScaling
        discretization_config:
          target: sgm.modules.diffusionmodules.discretizer.LegacyDDPMDiscretization
`;
    const r = analyzeText(bare, { path: '/studio/sd_768.yaml' });
    expect(r.isDiffusionConfig).toBe(true);
    // The classes' own schedule (0.00085 -> 0.012, T = 1000) leaks: signal 0.068 (Lin et al. 2023, Table 1).
    expect(r.findings.map((f) => `${f.rule}/${f.severity}`)).toEqual(['terminal-snr-leak/warning']);
    expect(r.findings[0]!.message).toContain('0.068');
  });

  it('an unknown class in a slot is not an error (it may be the project own class)', () => {
    const custom = ENGINE.replace('denoiser_scaling.VScaling', 'my_studio.scaling.NightScaling');
    const r = analyzeText(custom, { path: '/studio/engine.yaml' });
    expect(r.findings.filter((f) => f.severity === 'error')).toEqual([]);
    expect(r.documents[0]!.setup.consumer!.decision.evidence.join('\n')).toContain('NightScaling has no profile');
  });
});

describe('the decision flows to explain, its JSON and the hover', () => {
  const text = ENGINE;
  const reading = readFile(text, { path: '/studio/engine.yaml' });

  it('explain text and JSON name the family, the engine and the per-component evidence', () => {
    const json = explainDocumentJson(reading.documents[0]!);
    expect(json.consumer?.family).toBe('config-object');
    expect(json.consumer?.className).toBe('sgm.models.diffusion.DiffusionEngine');
    expect(json.consumer?.evidence.join('\n')).toContain('scaling VScaling');
    expect(json.consumer?.ignoredKeys.map((k) => k.key)).toContain('cfg_rescale');
    const explained = formatExplainText(reading);
    expect(explained).toContain('read as: sgm.models.diffusion.DiffusionEngine, config-object');
    expect(explained).toContain('loader: YAML read by OmegaConf');
  });

  it('hovering the scaling class explains the target and names the reader', () => {
    const offset = text.indexOf('denoiser_scaling.VScaling') + 5;
    const hover = hoverAt(reading, offset, 'plaintext');
    expect(hover?.text).toContain('Velocity target');
    expect(hover?.text).toContain('Read as sgm.models.diffusion.DiffusionEngine');
  });
});
