/**
 * A scheduler class instantiated from a map nested in a larger config (Hydra's `_target_`, or
 * `target` with `params`): that class reads that map with its own defaults, the rest of the file
 * is read the generic way, and fixes write each concept where its reader takes it. Class
 * defaults: EulerDiscreteScheduler spaces with linspace, DDIMScheduler with leading and
 * steps_offset 0 (diffusers scheduler __init__ signatures, consumers/profiles/schedulerConfig.ts;
 * recalled from memory of diffusers 0.30 and checked against stored copies there).
 */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { applyEdits } from '../../server/src/fix';

const HEAD = '# Lanternfish Pictures: storyboard sampler (invented demo data)\n';

function decisionOf(text: string) {
  const result = analyzeText(text, { path: '/studio/conf/sampler.yaml' });
  return { result, setup: result.documents[0]!.setup, decision: result.documents[0]!.setup.consumer?.decision };
}

describe('schedulers instantiated from a nested map', () => {
  it('takes the class defaults of a Hydra _target_ (Euler: linspace, so 30 steps start at 999)', () => {
    const text = `${HEAD}sampler:\n  scheduler:\n    _target_: diffusers.schedulers.EulerDiscreteScheduler\n    num_train_timesteps: 1000\n    beta_schedule: scaled_linear\n  num_inference_steps: 30\n`;
    const { result, setup, decision } = decisionOf(text);
    expect(decision?.family).toBe('scheduler-config');
    expect(decision?.className).toBe('EulerDiscreteScheduler');
    expect(decision?.dialect).toBe('omegaconf');
    expect(setup.fields.timestepSpacing?.value).toBe('linspace');
    expect(setup.fields.timestepSpacing?.assumed).toBe(true);
    // The step count outside the scheduler's map is still read (generic reading outside it).
    expect(setup.fields.sampleSteps?.value).toBe(30);
    expect(result.findings.map((f) => f.rule)).not.toContain('sampler-skips-last-step');
  });

  it('reads target with params the same way', () => {
    const text = `${HEAD}sampling:\n  scheduler:\n    target: diffusers.DDIMScheduler\n    params:\n      num_train_timesteps: 1000\n      beta_schedule: scaled_linear\n      rescale_betas_zero_snr: true\n      prediction_type: v_prediction\n  num_inference_steps: 25\n  guidance_scale: 7.5\n`;
    const { result, decision } = decisionOf(text);
    expect(decision?.className).toBe('DDIMScheduler');
    const skip = result.findings.find((f) => f.rule === 'sampler-skips-last-step')!;
    // DDIM's own default: leading spacing, steps offset 0: (arange(25) * 40)[::-1] starts at 960.
    expect(skip.message).toContain('first sampling step is 960');
    const fixed = applyEdits(text, skip.fixes[0]!.edits);
    // Written inside params, where the class reads it.
    expect(fixed).toContain('      prediction_type: v_prediction\n      timestep_spacing: trailing\n');
    const over = result.findings.find((f) => f.rule === 'guidance-overexposure')!;
    const rescaled = applyEdits(text, over.fixes[0]!.edits);
    // Not inside the scheduler's params (the class would raise a TypeError), but beside the guidance scale.
    expect(rescaled).toContain('  guidance_scale: 7.5\n  guidance_rescale: 0.7\n');
  });

  it('keeps the generic reading when two scheduler maps are instantiated (which one samples is not known)', () => {
    const text = `${HEAD}train_scheduler:\n  _target_: diffusers.DDPMScheduler\n  num_train_timesteps: 1000\nsample_scheduler:\n  _target_: diffusers.DDIMScheduler\n  num_train_timesteps: 1000\nnum_inference_steps: 50\n`;
    expect(decisionOf(text).decision?.family).toBe('generic');
  });

  it('ignores a _target_ that names no scheduler class', () => {
    const text = `${HEAD}optimizer:\n  _target_: torch.optim.AdamW\n  lr: 1.0e-4\nnum_train_timesteps: 1000\nbeta_schedule: scaled_linear\n`;
    expect(decisionOf(text).decision?.family).toBe('generic');
  });

  it('says that an unknown keyword argument inside the instantiated map raises', () => {
    const text = `${HEAD}scheduler:\n  _target_: diffusers.DDIMScheduler\n  num_train_timesteps: 1000\n  karras_rho: 7\nnum_inference_steps: 50\n`;
    const { setup } = decisionOf(text);
    const ignored = setup.consumer!.ignoredKeys.map((k) => `${k.key}: ${k.reason}`);
    expect(ignored).toEqual(['karras_rho: DDIMScheduler does not take karras_rho: instantiating it raises a TypeError']);
  });

  it('writes no schedule concept the class cannot take outside its map, where nothing would read it', () => {
    // PNDMScheduler has no rescale_betas_zero_snr (scheduling_pndm.py, PNDMScheduler.__init__).
    const text = `${HEAD}sampler:\n  scheduler:\n    _target_: diffusers.PNDMScheduler\n    num_train_timesteps: 1000\n    beta_schedule: scaled_linear\n    beta_start: 0.00085\n    beta_end: 0.012\n  num_inference_steps: 30\n`;
    const { result, decision } = decisionOf(text);
    expect(decision?.className).toBe('PNDMScheduler');
    const leak = result.findings.find((f) => f.rule === 'terminal-snr-leak')!;
    expect(leak.fixes).toEqual([]);
    expect(leak.message).toContain('PNDMScheduler has no zero-SNR rescale');
    // The class does take timestep_spacing: that fix still goes inside its map.
    const skip = result.findings.find((f) => f.rule === 'sampler-skips-last-step')!;
    expect(applyEdits(text, skip.fixes[0]!.edits)).toContain('    beta_end: 0.012\n    timestep_spacing: trailing\n  num_inference_steps: 30\n');
  });
});
