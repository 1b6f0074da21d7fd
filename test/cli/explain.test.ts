/**
 * `noiselint explain` reproduces the DESIGN section 6 check values, in text and in JSON, through
 * the same entry the bundled CLI runs (`main`).
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../server/src/cli/main';
import type { CliIO } from '../../server/src/cli/io';

function capture(cwd: string) {
  const out: string[] = [];
  const err: string[] = [];
  const io: CliIO = { cwd, stdout: (t) => void out.push(t), stderr: (t) => void err.push(t), isTTY: false, env: {} };
  return { io, out: () => out.join(''), err: () => err.join('') };
}

const dir = mkdtempSync(join(tmpdir(), 'noiselint-explain-'));
function file(name: string, text: string): string {
  writeFileSync(join(dir, name), text);
  return name;
}

async function explainJson(...names: string[]) {
  const c = capture(dir);
  const code = await main(['explain', '--format', 'json', ...names], c.io);
  expect(c.err()).toBe('');
  expect(code).toBe(0);
  return JSON.parse(c.out());
}

const scaledLinear = file(
  'night-storyboard-ft.yaml',
  `# Lanternfish Pictures: night storyboard fine-tune
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  prediction_type: epsilon
  timestep_spacing: leading
  steps_offset: 1
sampling:
  num_inference_steps: 10
`,
);
const linear = file('pixel-linear.json', '{ "num_train_timesteps": 1000, "beta_schedule": "linear", "beta_start": 0.0001, "beta_end": 0.02 }');
const cosine = file(
  'pixel-cosine.jsonc',
  '{\n  // Lanternfish product stills, pixel space\n  "num_train_timesteps": 1000,\n  "beta_schedule": "squaredcos_cap_v2",\n}\n',
);
const spacings = file(
  'spacings.yaml',
  ['leading', 'linspace', 'trailing']
    .map(
      (s) =>
        `num_train_timesteps: 1000\nbeta_schedule: scaled_linear\ntimestep_spacing: ${s}\nsteps_offset: ${s === 'leading' ? 1 : 0}\nnum_inference_steps: 10\n`,
    )
    .join('---\n'),
);

describe('explain --format json', () => {
  it('scaled linear 0.00085 -> 0.012, T = 1000: terminal amplitudes and SNR', async () => {
    const doc = (await explainJson(scaledLinear)).files[0].documents[0];
    // Lin et al. 2023, Table 1 (recalled from memory; float64 recomputation agrees)
    expect(doc.schedule.terminalSignal).toBeCloseTo(0.068265, 6);
    expect(doc.schedule.terminalNoise).toBeCloseTo(0.997667, 6);
    expect(doc.schedule.terminalSnr).toBeCloseTo(0.004682, 6);
    expect(doc.schedule.kind).toBe('scaled_linear');
    expect(doc.schedule.trainSteps).toBe(1000);
    // the rescale of Lin et al. 2023, Algorithm 1 reaches exactly zero
    expect(doc.rescaled).toEqual({ terminalSnr: 0, terminalSignal: 0 });
    expect(doc.setup.predictionTarget).toBe('epsilon');
    expect(doc.setup.assumed).toContain('zeroTerminalSnr');
    expect(doc.setup.assumed).not.toContain('predictionTarget');
  });

  it('linear 1e-4 -> 0.02, T = 1000: SNR_T', async () => {
    const doc = (await explainJson(linear)).files[0].documents[0];
    // Lin et al. 2023, Table 1 (recalled from memory): 4.035993e-05
    expect(doc.schedule.terminalSnr / 4.035993e-5).toBeCloseTo(1, 6);
    expect(doc.sampling).toBeNull();
  });

  it('cosine s = 0.008, T = 1000: SNR_T to 4 digits', async () => {
    const doc = (await explainJson(cosine)).files[0].documents[0];
    // Lin et al. 2023, Table 1 (recalled from memory): 2.4287e-09 to 4 digits; the table truncates
    // (float64 gives 2.42877e-09), so the printed digits 2.4287 bound it from both sides.
    expect(doc.schedule.terminalSnr).toBeGreaterThanOrEqual(2.4287e-9);
    expect(doc.schedule.terminalSnr).toBeLessThan(2.4288e-9);
    expect(doc.schedule.kind).toBe('cosine');
  });

  it('T = 1000, N = 10 sampling timesteps in code indices, noisiest first', async () => {
    const docs = (await explainJson(spacings)).files[0].documents;
    // Lin et al. 2023, Table 2 (recalled from memory), shifted to 0-based code indices (DESIGN section 6)
    expect(docs[0].sampling.timesteps).toEqual([901, 801, 701, 601, 501, 401, 301, 201, 101, 1]);
    expect(docs[1].sampling.timesteps).toEqual([999, 888, 777, 666, 555, 444, 333, 222, 111, 0]);
    expect(docs[2].sampling.timesteps).toEqual([999, 899, 799, 699, 599, 499, 399, 299, 199, 99]);
    // "leading starts at 901, not 1000" (common practice): the first step is not T - 1
    expect(docs[0].sampling.firstTimestep).toBe(901);
    expect(docs[0].sampling.lastTrainStep).toBe(999);
    expect(docs[2].sampling.firstTimestep).toBe(999);
    // SNR at the first step is the schedule's SNR at that index: strictly above the terminal SNR
    expect(docs[0].sampling.snrAtFirst).toBeGreaterThan(docs[0].schedule.terminalSnr);
    expect(docs[2].sampling.snrAtFirst).toBeCloseTo(docs[2].schedule.terminalSnr, 12);
  });

  it('keeps the documented top-level shape for several files', async () => {
    const json = await explainJson(linear, cosine);
    expect(Object.keys(json)).toEqual(['formatVersion', 'files']);
    expect(json.formatVersion).toBe(4);
    expect(json.files.map((f: { path: string }) => f.path)).toEqual([linear, cosine]);
    for (const f of json.files) {
      expect(Object.keys(f.documents[0]).sort()).toEqual(
        ['consumer', 'index', 'isDiffusionConfig', 'problems', 'rescaled', 'sampling', 'schedule', 'setup'].sort(),
      );
    }
  });

  it('shows the consumer decision and its evidence (contract version 2)', async () => {
    const saved = file(
      'scheduler_config.json',
      JSON.stringify({
        _class_name: 'EulerDiscreteScheduler',
        _diffusers_version: '0.30.3',
        beta_schedule: 'scaled_linear',
        beta_start: 0.00085,
        beta_end: 0.012,
        clip_sample: false,
        num_train_timesteps: 1000,
      }),
    );
    const json = await explainJson(saved);
    const consumer = json.files[0].documents[0].consumer;
    expect(consumer.family).toBe('scheduler-config');
    expect(consumer.className).toBe('EulerDiscreteScheduler');
    expect(consumer.basis).toBe('file');
    expect(consumer.evidence).toContain('_class_name: "EulerDiscreteScheduler"');
    expect(consumer.dialect).toBe('python-json');
    // The Euler class takes no clip_sample (diffusers 0.30, scheduling_euler_discrete.py).
    expect(consumer.ignoredKeys.map((k: { key: string }) => k.key)).toEqual(['clip_sample']);
    // Its spacing default is linspace, not the generic leading (same source).
    expect(json.files[0].documents[0].setup.timestepSpacing).toBe('linspace');
    const c = capture(dir);
    expect(await main(['explain', saved], c.io)).toBe(0);
    expect(c.out()).toContain('read as: EulerDiscreteScheduler, scheduler config saved by the open diffusion library');
    expect(c.out()).toMatch(/timestepSpacing\s+linspace\s+\(assumed: EulerDiscreteScheduler's default for an absent timestep_spacing/);
  });
});

describe('explain text', () => {
  it('prints the resolved setup with assumptions, the terminal values, the timesteps and the rescale', async () => {
    const c = capture(dir);
    expect(await main(['explain', scaledLinear], c.io)).toBe(0);
    const text = c.out();
    // Lin et al. 2023, Table 1 (recalled from memory): 0.068265, 0.997667, 4.682e-3 (printed to 6 digits)
    expect(text).toMatch(/sqrt\(abar_T\)\s+0\.0682649/);
    expect(text).toMatch(/sqrt\(1 - abar_T\)\s+0\.997667/);
    expect(text).toMatch(/terminal SNR\s+abar_T\/\(1-abar_T\)\s+0\.00468192/);
    expect(text).toMatch(/zeroTerminalSnr\s+false\s+\(assumed default\)/);
    expect(text).toContain('first sampled step 901, not T - 1 = 999');
    expect(text).toMatch(/901 \(0\.0142\)/);
    expect(text).toMatch(/terminal SNR 0\.00468192 -> 0/);
  });

  it('names a bad value in one line and still prints what it can', async () => {
    const bad = file('broken.yaml', 'num_train_timesteps: 1000\nbeta_schedule: scaled_linear\nbeta_end: .nan\nnum_inference_steps: 2000\n');
    const c = capture(dir);
    expect(await main(['explain', bad], c.io)).toBe(0);
    const text = c.out();
    expect(text).toContain('trainSteps');
    expect(text).toMatch(/problem: .*beta_end/);
    expect(c.err()).toBe('');
  });

  it('refuses a huge T without allocating it, in one line', async () => {
    const huge = file('huge.yaml', 'num_train_timesteps: 1000000000000\nbeta_schedule: linear\n');
    const c = capture(dir);
    expect(await main(['explain', huge], c.io)).toBe(0);
    expect(c.out()).toMatch(/problem: .*100000/);
  });
});

describe('explain errors', () => {
  it('exits 2 with one line for a missing file', async () => {
    const c = capture(dir);
    expect(await main(['explain', 'no-such-run.yaml'], c.io)).toBe(2);
    expect(c.err().trim().split('\n')).toHaveLength(1);
    expect(c.err()).toContain('no-such-run.yaml');
  });

  it('exits 2 for bad arguments', async () => {
    const c = capture(dir);
    expect(await main(['explain', '--format', 'xml', linear], c.io)).toBe(2);
    expect(c.err()).toMatch(/--format must be text or json/);
    const c2 = capture(dir);
    expect(await main(['explain'], c2.io)).toBe(2);
  });
});
