/**
 * The latent consistency scheduler picks its sampling steps from its own grid and never reads
 * timestep_spacing or steps_offset. Source: diffusers src/diffusers/schedulers/scheduling_lcm.py,
 * LCMScheduler.__init__ (original_inference_steps = 50, timestep_spacing = "leading") and
 * set_timesteps, read in a stored copy of the library: with O = original_inference_steps and
 * k = T // O, the grid is (1..O) * k - 1 reversed, and the N steps are the grid at the indices
 * floor(linspace(0, O, N, endpoint=False)). The expected steps below are worked out by hand from
 * that code: O = 50, N = 4 gives k = 20, indices 0, 12, 25, 37, steps 999, 759, 499, 259;
 * O = 30, N = 4 gives k = 33, indices 0, 7, 15, 22, steps 989, 758, 494, 263.
 */
import { describe, expect, it } from 'vitest';
import { consumerTimesteps } from '../../server/src/consumers/timesteps';
import { analyzeText } from '../../server/src/engine/api';

/** The scheduler config the library saves with a latent consistency pipeline (field set of diffusers 0.22). */
const LCM_CONFIG = `{
  "_class_name": "LCMScheduler",
  "_diffusers_version": "0.22.0.dev0",
  "beta_end": 0.012,
  "beta_schedule": "scaled_linear",
  "beta_start": 0.00085,
  "clip_sample": false,
  "clip_sample_range": 1.0,
  "dynamic_thresholding_ratio": 0.995,
  "num_train_timesteps": 1000,
  "original_inference_steps": 50,
  "prediction_type": "epsilon",
  "rescale_betas_zero_snr": false,
  "sample_max_value": 1.0,
  "set_alpha_to_one": true,
  "steps_offset": 1,
  "thresholding": false,
  "timestep_scaling": 10.0,
  "timestep_spacing": "leading",
  "trained_betas": null
}
`;

const SAMPLER = (original: number) =>
  `# Lanternfish Pictures: four-step storyboard previews (invented demo data)\npreview:\n  scheduler:\n    _target_: diffusers.LCMScheduler\n    original_inference_steps: ${original}\n  num_inference_steps: 4\n  guidance_scale: 1.0\n`;

describe('LCMScheduler', () => {
  it('selects from the original_inference_steps grid, whatever the spacing and offset', () => {
    for (const spacing of ['leading', 'linspace', 'trailing'] as const) {
      expect(consumerTimesteps('lcm', spacing, 1000, 4, 1, undefined, 50)).toEqual({ ok: true, value: [999, 759, 499, 259] });
    }
    expect(consumerTimesteps('lcm', 'leading', 1000, 4, 0, undefined, 30)).toEqual({ ok: true, value: [989, 758, 494, 263] });
    // One step is the top of the grid; all O steps are the whole grid.
    expect(consumerTimesteps('lcm', 'leading', 1000, 1, 0, undefined, 50)).toEqual({ ok: true, value: [999] });
    const all = consumerTimesteps('lcm', 'leading', 1000, 50, 0, undefined, 50);
    expect(all.ok && all.value.length === 50 && all.value[49] === 19).toBe(true);
    // set_timesteps raises ValueError for N > O and for O > T.
    expect(consumerTimesteps('lcm', 'leading', 1000, 60, 0, undefined, 50).ok).toBe(false);
    expect(consumerTimesteps('lcm', 'leading', 1000, 4, 0, undefined, 2000).ok).toBe(false);
  });

  it('a saved LCM scheduler config with timestep_spacing "leading" gets no sampler finding', () => {
    const result = analyzeText(LCM_CONFIG, { path: '/studio/lanternfish-lcm/scheduler/scheduler_config.json' });
    const setup = result.documents[0]!.setup;
    expect(setup.consumer?.decision.className).toBe('LCMScheduler');
    // Accepted keys, so no "does not take" note; read as no concept.
    expect(setup.consumer?.ignoredKeys.map((k) => k.key)).toEqual([]);
    expect(setup.fields.timestepSpacing?.source).toBeFalsy();
    expect(setup.fields.stepsOffset?.source).toBeFalsy();
    const rules = result.findings.map((f) => f.rule);
    expect(rules).not.toContain('sampler-skips-last-step');
    expect(rules).not.toContain('timestep-out-of-range');
    // The schedule itself is the usual latent one, with a non-zero terminal SNR (Lin et al. 2023).
    expect(rules).toContain('terminal-snr-leak');
  });

  it('an instantiated LCM sampler starts at 999 with the default grid, and at 989 with a grid of 30', () => {
    const fine = analyzeText(SAMPLER(50), { path: '/studio/conf/preview.yaml' });
    expect(fine.documents[0]!.analysis.sampling?.timesteps).toEqual([999, 759, 499, 259]);
    expect(fine.findings.map((f) => f.rule)).not.toContain('sampler-skips-last-step');

    const off = analyzeText(SAMPLER(30), { path: '/studio/conf/preview.yaml' });
    expect(off.documents[0]!.analysis.sampling?.timesteps).toEqual([989, 758, 494, 263]);
    const skip = off.findings.find((f) => f.rule === 'sampler-skips-last-step')!;
    expect(skip.message).toContain('first sampling step is 989');
    expect(skip.message).toContain('original_inference_steps grid (30 steps, stride 33)');
    expect(skip.message).toContain('an original_inference_steps that divides 1000 starts the grid at 999');
    // No spacing fix: the class does not read timestep_spacing.
    expect(skip.fixes).toEqual([]);
  });
});

describe('TCDScheduler', () => {
  it('shares the grid: its saved config with timestep_spacing "leading" gets no sampler finding', () => {
    // scheduling_tcd.py: the same constructor and the same set_timesteps grid as LCMScheduler.
    const text = LCM_CONFIG.replace('"LCMScheduler"', '"TCDScheduler"').replace('0.22.0.dev0', '0.27.0');
    const result = analyzeText(text, { path: '/studio/lanternfish-tcd/scheduler/scheduler_config.json' });
    expect(result.documents[0]!.setup.consumer?.decision.className).toBe('TCDScheduler');
    expect(result.documents[0]!.setup.consumer?.timesteps).toBe('lcm');
    expect(result.findings.map((f) => f.rule)).not.toContain('sampler-skips-last-step');
  });
});
