/**
 * The editor's hover names who reads the document and which loader parses it, as explain does:
 * the consumer decision travels with the setup to every view.
 */
import { describe, expect, it } from 'vitest';
import { readFile } from '../../server/src/engine/api';
import { hoverAt } from '../../server/src/views/hover';

function hover(text: string, path: string, key: string): string {
  const format = path.endsWith('.json') ? 'json' : 'yaml';
  const file = readFile(text, { path, format });
  const h = hoverAt(file, text.indexOf(key) + 1, 'plaintext');
  expect(h, `hover on ${key}`).not.toBeNull();
  return h!.text;
}

describe('hover shows the consumer decision', () => {
  it('a saved scheduler config: the class, the class-name evidence and Python json', () => {
    const text = JSON.stringify(
      { _class_name: 'EulerDiscreteScheduler', _diffusers_version: '0.30.3', beta_schedule: 'scaled_linear', num_train_timesteps: 1000 },
      null,
      2,
    );
    const got = hover(text, 'stills/scheduler/scheduler_config.json', '"beta_schedule"');
    expect(got).toContain('Read as EulerDiscreteScheduler');
    expect(got).toContain('_class_name: "EulerDiscreteScheduler"');
    expect(got).toContain("loader: JSON read by Python's json");
  });

  it('a latent-diffusion model config: the target class and OmegaConf', () => {
    const text = [
      'model:',
      '  target: ldm.models.diffusion.ddpm.LatentDiffusion',
      '  params:',
      '    linear_start: 0.00085',
      '    linear_end: 0.0120',
      '    timesteps: 1000',
      '',
    ].join('\n');
    const got = hover(text, 'configs/storyboard.yaml', 'linear_start');
    expect(got).toContain('Read as ldm.models.diffusion.ddpm.LatentDiffusion');
    expect(got).toContain('OmegaConf');
  });

  it('a file no profile recognises says nothing about a consumer', () => {
    const text = '# Lanternfish Pictures\nbeta_schedule: scaled_linear\nnum_train_timesteps: 1000\n';
    expect(hover(text, 'configs/train.yaml', 'beta_schedule')).not.toContain('Read as');
  });
});
