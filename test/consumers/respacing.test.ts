/**
 * Timestep respacing of the pixel-model code, checked three ways:
 * - hand-derived values from the rule of respace.py space_timesteps (openai/improved-diffusion,
 *   stored copy): "ddimN" is range(0, T, i) for the first i with ceil(T / i) = N; "a,b,c" cuts T
 *   into equal sections spaced evenly inside;
 * - an independent transliteration written here (integer arithmetic for the strides where they are
 *   whole, Python's round-half-to-even by its own implementation);
 * - where python3 is installed, the Python algorithm itself (transcribed below from the stored
 *   source), run by the real interpreter, so float accumulation and round() are Python's own.
 * Then the same numbers through a whole pixel-model argument file, loader and consumer stage.
 */
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { respacedTimesteps } from '@noiselint/shared-math';
import { analyzeText } from '../../server/src/engine/api';

/** Independent: round half to even by comparing with the exact midpoint. */
function pyRound(x: number): number {
  const lower = Math.floor(x);
  const diff = x - lower;
  if (diff === 0.5) return lower % 2 === 0 ? lower : lower + 1;
  return Math.round(x);
}

function independent(T: number, spec: string): number[] | null {
  if (spec.startsWith('ddim')) {
    const want = Number(spec.slice(4));
    for (let i = 1; i < T; i++) {
      const members: number[] = [];
      for (let t = 0; t < T; t += i) members.push(t);
      if (members.length === want) return members.reverse();
    }
    return null;
  }
  const counts = spec.split(',').map(Number);
  const all: number[] = [];
  let start = 0;
  counts.forEach((count, j) => {
    const size = Math.floor(T / counts.length) + (j < T % counts.length ? 1 : 0);
    const stride = count <= 1 ? 1 : (size - 1) / (count - 1);
    let cur = 0;
    for (let k = 0; k < count; k++) {
      all.push(start + pyRound(cur));
      cur += stride;
    }
    start += size;
  });
  return [...new Set(all)].sort((a, b) => b - a);
}

const CASES: [number, string][] = [
  [1000, 'ddim50'],
  [1000, 'ddim25'],
  [1000, 'ddim30'],
  [1000, 'ddim100'],
  [1000, 'ddim250'],
  [4000, 'ddim100'],
  [1000, '250'],
  [4000, '250'],
  [1000, '10,15,20'],
  [300, '10,15,20'],
  [1000, '50'],
  [1000, '7'],
  [1000, '1'],
  [4000, '25,25,50'],
  [1000, '100,1'],
];

describe('respacedTimesteps (space_timesteps of the pixel-model code)', () => {
  it('"ddim50" of 1000 is every 20th step from 0: the noisiest is 980, not 999', () => {
    const r = respacedTimesteps(1000, 'ddim50');
    expect(r.ok && r.value.length).toBe(50);
    expect(r.ok && r.value.slice(0, 3)).toEqual([980, 960, 940]);
    expect(r.ok && r.value[49]).toBe(0);
  });

  it('"ddim30" of 1000 takes stride 34, the first i with ceil(1000 / i) = 30 (33 gives 31)', () => {
    const r = respacedTimesteps(1000, 'ddim30');
    expect(r.ok && r.value[0]).toBe(29 * 34);
    expect(r.ok && r.value.length).toBe(30);
  });

  it('"250" of 1000 runs from 999 to 0 (one section, stride 999 / 249)', () => {
    const r = respacedTimesteps(1000, '250');
    expect(r.ok && [r.value[0], r.value[r.value.length - 1], r.value.length]).toEqual([999, 0, 250]);
  });

  it('the docstring example: 300 steps, "10,15,20" -> sections of 100 with 10, 15 and 20 steps', () => {
    const r = respacedTimesteps(300, '10,15,20');
    if (!r.ok) throw new Error(r.problem);
    const asc = [...r.value].reverse();
    expect(asc.slice(0, 10)).toEqual([0, 11, 22, 33, 44, 55, 66, 77, 88, 99]);
    expect(asc.filter((t) => t >= 100 && t < 200)).toHaveLength(15);
    expect(asc.filter((t) => t >= 200)).toHaveLength(20);
    expect(asc[asc.length - 1]).toBe(299);
  });

  it.each(CASES)('T = %i, "%s" agrees with the independent transliteration', (T, spec) => {
    const r = respacedTimesteps(T, spec);
    expect(r.ok ? r.value : null).toEqual(independent(T, spec));
  });

  it.each([
    [1000, 'ddim600', 'no integer stride gives exactly 600 steps out of 1000'],
    [1000, 'ddim', 'must be a whole number'],
    [1000, '10,x', '"x" is not a whole number'],
    [10, '20', 'a section of 10 steps cannot be divided into 20'],
    [1000, '600,600', 'a section of 500 steps cannot be divided into 600'],
  ])('T = %i, "%s" is refused as the code refuses it: %s', (T, spec, message) => {
    const r = respacedTimesteps(T, spec);
    expect(r.ok).toBe(false);
    expect(!r.ok && r.problem).toContain(message);
  });

  let python = false;
  try {
    execFileSync('python3', ['-c', 'pass'], { stdio: 'ignore' });
    python = true;
  } catch {
    python = false;
  }

  it.skipIf(!python)('agrees with the algorithm run by the real Python interpreter', () => {
    // Transcribed from openai/improved-diffusion, improved_diffusion/respace.py (stored copy).
    const script = [
      'import sys, json',
      'def space_timesteps(num_timesteps, section_counts):',
      '    if isinstance(section_counts, str):',
      '        if section_counts.startswith("ddim"):',
      '            desired_count = int(section_counts[len("ddim"):])',
      '            for i in range(1, num_timesteps):',
      '                if len(range(0, num_timesteps, i)) == desired_count:',
      '                    return set(range(0, num_timesteps, i))',
      '            raise ValueError("no stride")',
      '        section_counts = [int(x) for x in section_counts.split(",")]',
      '    size_per = num_timesteps // len(section_counts)',
      '    extra = num_timesteps % len(section_counts)',
      '    start_idx = 0',
      '    all_steps = []',
      '    for i, section_count in enumerate(section_counts):',
      '        size = size_per + (1 if i < extra else 0)',
      '        if size < section_count:',
      '            raise ValueError("section")',
      '        frac_stride = 1 if section_count <= 1 else (size - 1) / (section_count - 1)',
      '        cur_idx = 0.0',
      '        taken_steps = []',
      '        for _ in range(section_count):',
      '            taken_steps.append(start_idx + round(cur_idx))',
      '            cur_idx += frac_stride',
      '        all_steps += taken_steps',
      '        start_idx += size',
      '    return set(all_steps)',
      'cases = json.loads(sys.stdin.read())',
      'print(json.dumps([sorted(space_timesteps(t, s), reverse=True) for t, s in cases]))',
    ].join('\n');
    const more: [number, string][] = [...CASES, [1000, '3,7,11,13'], [999, '17,19'], [100000, '333'], [2, '2'], [4000, 'ddim7']];
    const got = JSON.parse(execFileSync('python3', ['-c', script], { input: JSON.stringify(more) }).toString()) as number[][];
    const ours = more.map(([T, spec]) => {
      const r = respacedTimesteps(T, spec);
      return r.ok ? r.value : null;
    });
    expect(ours).toEqual(got);
  });
});

describe('a pixel-model sampling file through loader and consumer', () => {
  const file = (respacing: string, T = 1000) =>
    `# Lanternfish Pictures: pixel sampler\nimage_size: 64\nlearn_sigma: true\ndiffusion_steps: ${T}\n` +
    `noise_schedule: cosine\ntimestep_respacing: "${respacing}"\nuse_ddim: true\nclip_denoised: true\n`;

  it.each([
    ['ddim25', 1000],
    ['250', 4000],
    ['10,15,20', 1000],
  ] as [string, number][])('"%s" with T = %i: the sampler visits exactly the kept steps', (spec, T) => {
    const r = analyzeText(file(spec, T), { path: '/studio/pixel/sample.yaml' });
    const doc = r.documents[0]!;
    expect(doc.setup.consumer?.decision.family).toBe('pixel-args');
    const want = independent(T, spec)!;
    expect(doc.analysis.sampling?.timesteps).toEqual(want);
    expect(doc.setup.fields.sampleSteps?.value).toBe(want.length);
  });

  it('the linear schedule is scaled by 1000 / T (get_named_beta_schedule), and the message says it is assumed', () => {
    const text =
      '# Lanternfish Pictures: pixel training\nimage_size: 64\nlearn_sigma: true\ndiffusion_steps: 4000\nnoise_schedule: linear\nlr: 1.0e-4\n';
    const r = analyzeText(text, { path: '/studio/pixel/train.yaml' });
    const fields = r.documents[0]!.setup.fields;
    // 1e-4 * 1000 / 4000 and 0.02 * 1000 / 4000 (openai/guided-diffusion gaussian_diffusion.py, stored copy).
    expect(fields.betaStart?.value).toBeCloseTo(2.5e-5, 15);
    expect(fields.betaEnd?.value).toBeCloseTo(5e-3, 15);
    expect(fields.betaStart?.assumed).toBe(true);
    const leak = r.findings.find((f) => f.rule === 'terminal-snr-leak');
    expect(leak?.message).toContain('(assumed: betaStart = 2.5e-5, betaEnd = 5e-3');
    expect(leak?.severity).toBe('info');
  });
});
