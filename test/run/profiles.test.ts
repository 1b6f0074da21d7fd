/**
 * The run rescale asks the consumer profile how a document's reader takes each change
 * (setup/readerAnswers.ts): the class's own rescale flag, nothing where the class has no way that
 * works (then the plan says what to change instead and is not blocked), spacing left alone where
 * the class ignores it, and the first-sigma clamp that a class applies itself under its flag.
 * Scheduler facts recalled from memory of diffusers 0.30 and checked against the stored copy of
 * scheduling_pndm.py (its step divides by abar_t) and ldm/models/diffusion/ddpm.py
 * (register_schedule computes `1. - betas` and reads `betas.shape`).
 */
import { describe, expect, it } from 'vitest';
import { readFile } from '../../server/src/engine/api';
import { applyEdits } from '../../server/src/fix/apply';
import { planRunRescale } from '../../server/src/fix/runRescale';
import { GENERIC_READER, PROFILE_READER, readerAnswersFor } from '../../server/src/setup/readerAnswers';

function plan(text: string, path: string) {
  const format = path.endsWith('.json') ? 'json' : 'yaml';
  const reading = readFile(text, { path, format });
  return { reading, plan: planRunRescale([{ path, side: 'alone', reading }]) };
}

const scheduler = (fields: Record<string, unknown>) =>
  JSON.stringify(
    {
      _class_name: 'DDIMScheduler',
      _diffusers_version: '0.30.3',
      beta_end: 0.012,
      beta_schedule: 'scaled_linear',
      beta_start: 0.00085,
      num_train_timesteps: 1000,
      prediction_type: 'epsilon',
      steps_offset: 1,
      timestep_spacing: 'leading',
      ...fields,
    },
    null,
    2,
  ) + '\n';

describe('run rescale through consumer profiles', () => {
  it('a scheduler config gets the profile answers; an unrecognised file the generic ones', () => {
    const ddim = readFile(scheduler({}), { path: 'scheduler/scheduler_config.json', format: 'json' });
    expect(readerAnswersFor(ddim.documents[0]!.setup)).toBe(PROFILE_READER);
    const plain = readFile('beta_schedule: scaled_linear\nnum_train_timesteps: 1000\n', { path: 'train.yaml', format: 'yaml' });
    expect(readerAnswersFor(plain.documents[0]!.setup)).toBe(GENERIC_READER);
  });

  it('DDIM: writes its own flag, v, trailing; the result reaches zero terminal SNR', () => {
    const text = scheduler({});
    const { plan: p } = plan(text, 'scheduler/scheduler_config.json');
    expect(p.blocked).toEqual([]);
    const after = applyEdits(text, p.files[0]!.textEdits!);
    const json = JSON.parse(after) as Record<string, unknown>;
    expect(json.rescale_betas_zero_snr).toBe(true);
    expect(json.prediction_type).toBe('v_prediction');
    expect(json.timestep_spacing).toBe('trailing');
    // Lin et al. 2023, Algorithm 1: the rescaled schedule ends at SNR 0.
    expect(p.numbers[0]!.terminalSnr.after).toBe(0);
  });

  it('PNDM has no flag and a rescaled trained_betas would divide by abar = 0: no schedule edit, a note, not blocked', () => {
    const text = scheduler({ _class_name: 'PNDMScheduler', set_alpha_to_one: false, skip_prk_steps: true });
    const { plan: p } = plan(text, 'scheduler/scheduler_config.json');
    expect(p.blocked).toEqual([]);
    const edits = p.files[0]!.changes.flatMap((c) => c.edits);
    expect(edits.some((e) => e.concept === 'zeroTerminalSnr' || e.concept === 'betas')).toBe(false);
    // No rescale, so no target switch either: v alone would change the model for nothing.
    expect(edits.some((e) => e.concept === 'predictionTarget')).toBe(false);
    expect(p.notes.join('\n')).toContain('PNDMScheduler has no zero-SNR rescale');
    expect(p.notes.join('\n')).toContain('divide by abar = 0');
    expect(p.changesTraining).toBe(false);
  });

  it('the latent-diffusion model: given_betas is never written into the YAML (a list fails at start-up)', () => {
    const text = [
      'model:',
      '  target: ldm.models.diffusion.ddpm.LatentDiffusion',
      '  params:',
      '    linear_start: 0.00085',
      '    linear_end: 0.0120',
      '    timesteps: 1000',
      '    first_stage_key: jpg',
      '    cond_stage_key: txt',
      '    image_size: 64',
      '    channels: 4',
      '',
    ].join('\n');
    const { plan: p } = plan(text, 'configs/storyboard-ldm.yaml');
    expect(p.blocked).toEqual([]);
    expect(p.files[0]!.changes.flatMap((c) => c.edits)).toEqual([]);
    expect(p.notes.join('\n')).toContain('pass the rescaled betas as a numpy array from the training code');
  });

  it('Euler with Karras sigmas: spacing is left alone, and the class bounds the first sigma under its flag', () => {
    const text = scheduler({ _class_name: 'EulerDiscreteScheduler', use_karras_sigmas: true, timestep_spacing: 'linspace', steps_offset: 0 });
    const { plan: p } = plan(text, 'scheduler/scheduler_config.json');
    const change = p.files[0]!.changes[0]!;
    expect(change.edits.some((e) => e.concept === 'timestepSpacing')).toBe(false);
    expect(change.edits.some((e) => e.kind === 'set' && e.concept === 'zeroTerminalSnr')).toBe(true);
    expect(change.what.join('\n')).toContain('EulerDiscreteScheduler clamps abar at the last step to 2^-24');
    expect(p.notes.join('\n')).not.toContain('the sampling code must');
  });

  it('Heun with Karras sigmas has no flag: the note says to use another class, and nothing is written', () => {
    const text = scheduler({ _class_name: 'HeunDiscreteScheduler', use_karras_sigmas: true, timestep_spacing: 'linspace', steps_offset: 0 });
    const { plan: p } = plan(text, 'scheduler/scheduler_config.json');
    expect(p.files[0]!.changes.flatMap((c) => c.edits)).toEqual([]);
    expect(p.notes.join('\n')).toContain('HeunDiscreteScheduler has no zero-SNR rescale');
    expect(p.notes.join('\n')).toContain('infinite first sigma');
  });
});
