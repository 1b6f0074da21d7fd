/**
 * The decision for an argument set is shown where a user looks: explain text and JSON, and the
 * hover. A TOML sd-scripts config and a guided-diffusion sampling dump, in the demo scenario.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { CliIO } from '../../server/src/cli/io';
import { main } from '../../server/src/cli/main';
import { readFile } from '../../server/src/engine/api';
import { hoverAt } from '../../server/src/views/hover';

function capture(cwd: string) {
  const out: string[] = [];
  const err: string[] = [];
  const io: CliIO = { cwd, stdout: (t) => void out.push(t), stderr: (t) => void err.push(t), isTTY: false, env: {} };
  return { io, out: () => out.join(''), err: () => err.join('') };
}

const dir = mkdtempSync(join(tmpdir(), 'noiselint-args-'));
const TOML = `# Lanternfish Pictures: night storyboard LoRA
[model_arguments]
pretrained_model_name_or_path = "/mnt/models/lf-base-768-v.safetensors"
v_parameterization = true

[training_arguments]
output_name = "nightboard"
zero_terminal_snr = true
resolution = "768,512"
lantern_notes = "not an sd-scripts argument"
sample_sampler = "euler_a"
`;
const PIXEL = `{"image_size": 64, "learn_sigma": true, "diffusion_steps": 1000, "noise_schedule": "cosine", "timestep_respacing": "ddim25", "use_ddim": true}\n`;
writeFileSync(join(dir, 'nightboard.toml'), TOML);
writeFileSync(join(dir, 'thumbs-sample.json'), PIXEL);

describe('explain and hover name the argument-set reading', () => {
  it('explain JSON: family, class, merged tables, loader and ignored keys', async () => {
    const c = capture(dir);
    expect(await main(['explain', '--format', 'json', 'nightboard.toml'], c.io)).toBe(0);
    const doc = JSON.parse(c.out()).files[0].documents[0];
    expect(doc.consumer.family).toBe('training-args');
    expect(doc.consumer.className).toBe('sd-scripts');
    expect(doc.consumer.dialect).toBe('tomllib');
    expect(doc.consumer.evidence.join('\n')).toContain('tables [model_arguments], [training_arguments] are merged into one namespace');
    expect(doc.consumer.ignoredKeys.map((k: { key: string }) => k.key)).toEqual(['lantern_notes']);
    // "768,512" is width,height (sd-scripts --resolution, type=str): the larger side.
    expect(doc.setup.resolution).toBe(768);
    expect(doc.setup.zeroTerminalSnr).toBe(true);
    expect(doc.setup.predictionTarget).toBe('v');
  });

  it('explain text: the read-as line and the respaced timesteps of a pixel-model dump', async () => {
    const c = capture(dir);
    expect(await main(['explain', 'thumbs-sample.json'], c.io)).toBe(0);
    const text = c.out();
    expect(text).toContain('read as: guided-diffusion, pixel-model argument set');
    // "ddim25" of 1000: stride 40 from step 0 (respace.py space_timesteps), so 960 comes first.
    expect(text).toContain('960');
    expect(text).toContain('first sampled step 960, not T - 1 = 999');
  });

  it('hover names the consumer and the loader', () => {
    const file = readFile(TOML, { path: join(dir, 'nightboard.toml') });
    const at = TOML.indexOf('zero_terminal_snr') + 2;
    const hover = hoverAt(file, at, 'plaintext');
    expect(hover?.text).toContain('Read as sd-scripts (training-script arguments');
    expect(hover?.text).toContain("loader: TOML read by Python's tomllib (TOML 1.0.0)");
  });
});
