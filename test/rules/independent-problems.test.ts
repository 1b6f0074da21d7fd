/**
 * One problem never hides an independent one: an invalid explicit beta list is reported, and the
 * checks that need only T (the step count, the spacing, timesteps in range) still run. Timestep
 * arithmetic from DESIGN section 4 (leading: k * floor(T / N) + offset; trailing from T - 1).
 */
import { describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';

function findings(text: string, path = 'configs/hand-betas.yaml') {
  return analyzeText(text, { path, format: path.endsWith('.json') ? 'json' : 'yaml' }).findings;
}

const rules = (text: string, path?: string) => findings(text, path).map((f) => f.rule);

describe('an invalid beta list hides nothing else', () => {
  it('N > T is still an error, with its N = T fix', () => {
    const text = '# Lanternfish Pictures: hand-written betas\nnum_train_timesteps: 4\ntrained_betas: [0.1, 0.2, 1.5, 0.3]\nnum_inference_steps: 10\n';
    const got = findings(text);
    expect(got.map((f) => f.rule).sort()).toEqual(['schedule-invalid', 'steps-out-of-range']);
    const steps = got.find((f) => f.rule === 'steps-out-of-range')!;
    expect(steps.message).toContain('10 sampling steps is more than the 4 training steps');
    expect(steps.fixes.length).toBe(1);
  });

  it('a leading spacing that skips the last step is still reported, without SNR numbers it cannot know', () => {
    const text =
      '# Lanternfish Pictures: storyboard preview\nnum_train_timesteps: 1000\ntrained_betas: [0.0001, 0.0002, 1.5]\nnum_inference_steps: 30\ntimestep_spacing: leading\n';
    const got = findings(text);
    expect(got.filter((f) => f.rule === 'schedule-invalid').length).toBeGreaterThan(0);
    const skip = got.find((f) => f.rule === 'sampler-skips-last-step');
    expect(skip, rules(text).join(', ')).toBeDefined();
    // leading, T = 1000, N = 30: 29 * floor(1000 / 30) = 957 (DESIGN section 4).
    expect(skip!.message).toContain('first sampling step is 957 of 0..999');
    expect(skip!.message).toContain('its SNR is unknown: the schedule itself is invalid');
    expect(skip!.message).not.toMatch(/NaN/);
    expect(skip!.fixes.map((x) => x.title)).toEqual(['Set the timestep spacing to trailing (sampling only)']);
  });

  it('timesteps past T - 1 are still an error', () => {
    const text =
      '# Lanternfish Pictures: storyboard preview\nnum_train_timesteps: 1000\ntrained_betas: [0.0001, 0.0002, 1.5]\nnum_inference_steps: 30\ntimestep_spacing: leading\nsteps_offset: 50\n';
    // 957 + 50 = 1007 > 999.
    const got = findings(text).find((f) => f.rule === 'timestep-out-of-range');
    expect(got?.message).toContain('1007');
  });

  it('with a valid list the same file gets its SNR numbers back (the check can tell the two apart)', () => {
    const text =
      '# Lanternfish Pictures: storyboard preview\nnum_train_timesteps: 1000\nbeta_schedule: scaled_linear\nnum_inference_steps: 30\ntimestep_spacing: leading\n';
    const skip = findings(text).find((f) => f.rule === 'sampler-skips-last-step')!;
    expect(skip.message).toMatch(/first sampling step is 957 of 0\.\.999 \(SNR [0-9.e-]+, signal amplitude/);
  });
});
