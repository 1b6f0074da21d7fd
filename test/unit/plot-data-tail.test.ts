/**
 * The plot data both plot views draw from: the range of training steps the sampler never visits
 * and the tail window they zoom into. Spacing facts: DESIGN section 4 (leading and trailing
 * formulas); terminal amplitude: Lin et al. 2023, Table 1 (recalled from memory).
 */
import { describe, expect, it } from 'vitest';
import { readFile } from '../../server/src/engine/api';
import { plotDataFor, skippedRange, tailWindow } from '../../server/src/views/plotData';

const sampler = (spacing: string, steps: number, offset = 0) => `# Lanternfish Pictures: preview sampler
num_train_timesteps: 1000
beta_schedule: scaled_linear
beta_start: 0.00085
beta_end: 0.012
timestep_spacing: ${spacing}
steps_offset: ${offset}
num_inference_steps: ${steps}
`;

const docOf = (text: string) => plotDataFor(readFile(text, { path: 'preview.yaml' }), 'file:///preview.yaml', 1).documents[0];

describe('skipped range and tail window', () => {
  it('leading, N = 10, offset 1 starts at 901: steps 902..999 are never visited', () => {
    const doc = docOf(sampler('leading', 10, 1));
    expect(doc!.sampled[0]!.t).toBe(901);
    expect(doc!.skipped).toEqual({ lastVisited: 901, lastStep: 999, count: 98 });
    // The window widens to show the whole skipped range.
    expect(doc!.tail.from).toBeLessThanOrEqual(901);
  });

  it('trailing starts at 999 (T - 1): nothing is skipped; the tail is the last tenth', () => {
    const doc = docOf(sampler('trailing', 10));
    expect(doc!.sampled[0]!.t).toBe(999);
    expect(doc!.skipped).toBeNull();
    expect(doc!.tail).toMatchObject({ from: 899, to: 999 });
  });

  it('the tail ceiling holds the largest amplitude in the window and is well below 1 for a 0.068 leak', () => {
    const doc = docOf(sampler('trailing', 30));
    // sqrt(abar_T) = 0.068265 (Lin et al. 2023, Table 1, recalled from memory).
    expect(doc!.terminalSignal).toBeCloseTo(0.068265, 5);
    const inWindow = doc!.current.signal.filter((_, i) => doc!.t[i]! >= doc!.tail.from);
    expect(doc!.tail.signalMax).toBeGreaterThanOrEqual(Math.max(...inWindow));
    expect(doc!.tail.signalMax).toBeLessThanOrEqual(0.25);
  });

  it('edge cases: no sampled steps, out-of-range steps only, a flat curve', () => {
    expect(skippedRange(1000, [])).toBeNull();
    expect(skippedRange(1000, [{ t: 1000, order: 0, logSnr: null, snr: NaN, signal: NaN, outOfRange: true }])).toBeNull();
    expect(tailWindow([], [], null)).toEqual({ from: 0, to: 0, signalMax: 1 });
    expect(tailWindow([0, 1, 2], [{ logSnr: [0, 0, 0], signal: [0, 0, 0] }], null).signalMax).toBe(1);
  });
});
