/**
 * `noiselint explain --plot-svg`: a standalone SVG of the schedule plot, drawn from the plot data
 * the language server serves. Parsed with a general-purpose XML parser (@xmldom/xmldom, every
 * warning an error); positions of the sampled steps, the skipped band and the tail window are
 * checked against numbers computed here with shared-math (Ho et al. 2020 linear and the scaled
 * linear schedule; DESIGN section 4 spacings).
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { DOMParser, type Element } from '@xmldom/xmldom';
import { afterAll, describe, expect, it } from 'vitest';
import { alphaBarFromBetas, linearBetas, samplingTimesteps, scaledLinearBetas } from '@noiselint/shared-math';
import { main } from '../../server/src/cli/main';
import type { CliIO } from '../../server/src/cli/io';
import { removeTree } from '../workspace/helpers';

function capture(cwd: string) {
  const out: string[] = [];
  const err: string[] = [];
  const io: CliIO = { cwd, stdout: (t) => void out.push(t), stderr: (t) => void err.push(t), isTTY: false, env: {} };
  return { io, out: () => out.join(''), err: () => err.join('') };
}

const dir = mkdtempSync(join(tmpdir(), 'noiselint-svg-'));
afterAll(() => removeTree(dir));

// Lanternfish Pictures demo data: a preview sampler on the linear schedule, leading spacing,
// 50 steps, offset 1 (first step 981: the leading formula of DESIGN section 4).
const SAMPLER = `# Lanternfish Pictures: night storyboard preview sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: linear
  beta_start: 0.0001
  beta_end: 0.02
  timestep_spacing: leading
  steps_offset: 1
sampling:
  num_inference_steps: 50
  guidance_scale: 7.5
`;
const TRAINING = `# Lanternfish Pictures: night storyboard fine-tune
[noise_scheduler]
num_train_timesteps = 1000
beta_schedule = "scaled_linear"
beta_start = 0.00085
beta_end = 0.012
prediction_type = "v_prediction"
`;
writeFileSync(join(dir, 'preview.yaml'), SAMPLER);
writeFileSync(join(dir, 'night-args.toml'), TRAINING);

async function explainSvg(input: string, out: string): Promise<string> {
  const c = capture(dir);
  const code = await main(['explain', input, '--plot-svg', out], c.io);
  expect(c.err()).toBe('');
  expect(code).toBe(0);
  expect(c.out()).toContain(`Plot written to ${out}`);
  return readFileSync(join(dir, out), 'utf8');
}

function parseSvg(text: string) {
  const problems: string[] = [];
  const doc = new DOMParser({ onError: (level, message) => void problems.push(`${level}: ${message}`) }).parseFromString(text, 'image/svg+xml');
  expect(problems).toEqual([]);
  return doc;
}

const all = (root: { getElementsByTagName(n: string): ArrayLike<Element> }, tag: string) => Array.from(root.getElementsByTagName(tag));
const num = (e: Element, name: string) => Number(e.getAttribute(name));
const hasClass = (e: Element, c: string) => (e.getAttribute('class') ?? '').split(' ').includes(c);

interface Box {
  left: number;
  top: number;
  width: number;
  height: number;
  xMin: number;
  xMax: number;
  yMin: number;
  yMax: number;
}

/** A panel's pixel box (its frame) and data domain (its data attributes). */
function panel(svg: ReturnType<typeof parseSvg>, name: string): { g: Element; box: Box } {
  const g = all(svg, 'g').find((x) => x.getAttribute('data-panel') === name);
  if (!g) throw new Error(`no panel ${name}`);
  // The frame drawn directly in this group (an inset's frame sits in its own group).
  const frame = all(g, 'rect').find((r) => hasClass(r, 'frame') && r.parentNode === g)!;
  return {
    g,
    box: {
      left: num(frame, 'x'),
      top: num(frame, 'y'),
      width: num(frame, 'width'),
      height: num(frame, 'height'),
      xMin: num(g, 'data-x-min'),
      xMax: num(g, 'data-x-max'),
      yMin: num(g, 'data-y-min'),
      yMax: num(g, 'data-y-max'),
    },
  };
}

const px = (b: Box, x: number) => b.left + ((x - b.xMin) / (b.xMax - b.xMin)) * b.width;
const py = (b: Box, y: number) => b.top + b.height - ((y - b.yMin) / (b.yMax - b.yMin)) * b.height;
const own = (g: Element, tag: string) => all(g, tag).filter((e) => e.parentNode === g);

describe('explain --plot-svg', () => {
  it('writes well-formed SVG with the two panels, the tail inset, the band and the sampled steps', async () => {
    const svg = parseSvg(await explainSvg('preview.yaml', 'preview.svg'));
    const root = svg.documentElement!;
    expect(root.tagName).toBe('svg');
    expect(root.getAttribute('xmlns')).toBe('http://www.w3.org/2000/svg');
    expect(
      all(svg, 'g')
        .map((g) => g.getAttribute('data-panel'))
        .filter(Boolean),
    ).toEqual(['log-snr', 'signal', 'signal-tail']);

    // Leading, T = 1000, N = 50, offset 1 (shared-math, DESIGN section 4): 981, 961, ..., 1.
    const steps = samplingTimesteps('leading', 1000, 50, 1);
    if (!steps.ok) throw new Error(steps.problem);
    expect(steps.value[0]).toBe(981);
    const abar = alphaBarFromBetas((linearBetas(1000, 0.0001, 0.02) as { ok: true; value: Float64Array }).value);

    const signal = panel(svg, 'signal');
    const marks = own(signal.g, 'circle').filter((c) => hasClass(c, 'sampled'));
    expect(marks.map((c) => num(c, 'data-t'))).toEqual(steps.value);
    for (const t of [981, 501, 1]) {
      const c = marks.find((m) => num(m, 'data-t') === t)!;
      expect(num(c, 'cx')).toBeCloseTo(px(signal.box, t), 1);
      expect(num(c, 'cy')).toBeCloseTo(py(signal.box, Math.sqrt(abar[t]!)), 1);
    }
    const logSnr = panel(svg, 'log-snr');
    const first = own(logSnr.g, 'circle').find((c) => num(c, 'data-t') === 981)!;
    expect(num(first, 'cy')).toBeCloseTo(py(logSnr.box, Math.log(abar[981]! / (1 - abar[981]!))), 1);

    // The band covers the steps the sampler never visits: 982..999, from x(981) to x(999).
    for (const g of [logSnr.g, signal.g]) {
      const band = own(g, 'rect').find((r) => hasClass(r, 'skipped'))!;
      expect([num(band, 'data-from'), num(band, 'data-to')]).toEqual([982, 999]);
      const box = g === logSnr.g ? logSnr.box : signal.box;
      expect(num(band, 'x')).toBeCloseTo(px(box, 981), 1);
      expect(num(band, 'x') + num(band, 'width')).toBeCloseTo(px(box, 999), 1);
    }
    expect(svg.documentElement!.textContent).toContain('never t = 982..999 (18 steps)');
  });

  it('zooms the amplitude tail so the leak of the stock schedule fills the window', async () => {
    const svg = parseSvg(await explainSvg('night-args.toml', 'night.svg'));
    const tail = panel(svg, 'signal-tail');
    // Tail window: the last tenth of t (TAIL_SHARE), amplitude 0 .. a round ceiling above the
    // largest amplitude drawn there.
    expect(tail.box.xMin).toBe(899);
    expect(tail.box.yMax).toBeLessThan(0.5);
    // sqrt(abar_T) = 0.068265 for scaled_linear 0.00085 -> 0.012, T = 1000: Lin et al. 2023,
    // Table 1 (recalled from memory); recomputed with shared-math here.
    const abar = alphaBarFromBetas((scaledLinearBetas(1000, 0.00085, 0.012) as { ok: true; value: Float64Array }).value);
    expect(Math.sqrt(abar[999]!)).toBeCloseTo(0.068265, 5);
    const current = own(tail.g, 'polyline').find((p) => hasClass(p, 'current'))!;
    const points = current
      .getAttribute('points')!
      .split(' ')
      .map((p) => p.split(',').map(Number));
    const [lastX, lastY] = points[points.length - 1]!;
    expect(lastX).toBeCloseTo(px(tail.box, 999), 1);
    expect(lastY).toBeCloseTo(py(tail.box, Math.sqrt(abar[999]!)), 1);
    // In the zoomed window the leak is tens of pixels tall; on the 0..1 axis a few.
    const signal = panel(svg, 'signal');
    expect(tail.box.height * (0.068265 / tail.box.yMax)).toBeGreaterThan(25);
    expect(signal.box.height * 0.068265).toBeLessThan(20);
    // The rescaled curve (Lin et al. 2023, Algorithm 1) ends at exactly zero amplitude.
    const rescaled = own(tail.g, 'polyline').find((p) => hasClass(p, 'rescaled'))!;
    const rp = rescaled
      .getAttribute('points')!
      .split(' ')
      .map((p) => p.split(',').map(Number));
    expect(rp[rp.length - 1]![1]).toBeCloseTo(py(tail.box, 0), 1);
    expect(
      own(tail.g, 'text')
        .map((t) => t.textContent)
        .join(' '),
    ).toContain('0.0683');
    // No sampler in a training file: no band.
    expect(all(svg, 'rect').filter((r) => hasClass(r, 'skipped'))).toEqual([]);
  });

  it('is deterministic: the same file gives the same bytes', async () => {
    const a = await explainSvg('preview.yaml', 'a.svg');
    const b = await explainSvg('preview.yaml', 'b.svg');
    expect(a).toBe(b);
  });

  it('refuses two files, and says in one line when the output cannot be written', async () => {
    const c = capture(dir);
    expect(await main(['explain', 'preview.yaml', 'night-args.toml', '--plot-svg', 'x.svg'], c.io)).toBe(2);
    expect(c.err()).toMatch(/--plot-svg/);
    const d = capture(dir);
    expect(await main(['explain', 'preview.yaml', '--plot-svg', 'no-such-folder/x.svg'], d.io)).toBe(2);
    expect(d.err().trim().split('\n')).toHaveLength(1);
    expect(d.err()).toContain('cannot write no-such-folder/x.svg');
  });

  it('a file without a schedule still gives a valid picture that says so', async () => {
    writeFileSync(join(dir, 'queue.toml'), '# render farm queue\n[queue]\nname = "night"\n');
    const svg = parseSvg(await explainSvg('queue.toml', 'queue.svg'));
    expect(svg.documentElement!.textContent).toContain('no noise schedule to plot');
  });
});
