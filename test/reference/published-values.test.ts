/**
 * DESIGN section 6: check values and their sources. Each numeric check names its source beside it.
 */
import { describe, expect, it } from 'vitest';
import {
  computeSchedule,
  guidanceRescale,
  karrasSigmas,
  flowTimestepShift,
  populationStd,
  samplingTimesteps,
  COMMON_GUIDANCE_RESCALE,
  COMMON_GUIDANCE_SCALE,
} from '@noiselint/shared-math';
import { expectPrinted } from './digits';

function schedule(p: Parameters<typeof computeSchedule>[0]) {
  const r = computeSchedule(p);
  if (!r.ok) throw new Error(r.problem);
  return r.value;
}

describe('terminal SNR of common schedules (T = 1000)', () => {
  it('scaled linear 0.00085 -> 0.012', () => {
    const s = schedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012 });
    // Lin et al. 2023, Table 1 (recalled from memory; float64 recomputation agrees): sqrt(abar_T) = 0.068265
    expectPrinted(s.terminalSignal, '0.068265');
    // Lin et al. 2023, Table 1 (recalled from memory; float64 recomputation agrees): sqrt(1 - abar_T) = 0.997667
    expectPrinted(s.terminalNoise, '0.997667');
    // Lin et al. 2023, Table 1 (recalled from memory; float64 recomputation agrees): SNR_T = 0.004682
    expectPrinted(s.terminalSnr, '0.004682');
  });

  it('linear 1e-4 -> 0.02', () => {
    const s = schedule({ kind: 'linear', trainSteps: 1000, betaStart: 1e-4, betaEnd: 0.02 });
    // Lin et al. 2023, Table 1 (from memory): SNR_T = 4.035993e-05
    expectPrinted(s.terminalSnr, '4.035993e-05');
  });

  it('cosine s = 0.008', () => {
    const s = schedule({ kind: 'cosine', trainSteps: 1000, cosineOffset: 0.008 });
    // Lin et al. 2023, Table 1 (from memory): SNR_T = 2.4287e-09, to 4 digits. The table truncates
    // (float64 gives 2.42877e-09), so this checks 4 significant digits: 2.429e-09.
    expectPrinted(s.terminalSnr, '2.429e-09');
    expect(s.terminalSnr).toBeGreaterThanOrEqual(2.4287e-9); // Lin et al. 2023, Table 1 (from memory): printed digits 2.4287
    expect(s.terminalSnr).toBeLessThan(2.4288e-9); // Lin et al. 2023, Table 1 (from memory): printed digits 2.4287
  });
});

describe('sampling timesteps, T = 1000, N = 10', () => {
  const toPaper = (steps: number[]) => steps.map((t) => t + 1);
  const get = (spacing: 'leading' | 'linspace' | 'trailing', offset = 0) => {
    const r = samplingTimesteps(spacing, 1000, 10, offset);
    if (!r.ok) throw new Error(r.problem);
    return r.value;
  };

  it("paper's 1-based steps", () => {
    // Lin et al. 2023, Table 2 (from memory): leading 901, 801, ..., 1
    expect(toPaper(get('leading'))).toEqual([901, 801, 701, 601, 501, 401, 301, 201, 101, 1]);
    // Lin et al. 2023, Table 2 (from memory): linspace 1000, 889, ..., 1
    expect(toPaper(get('linspace'))).toEqual([1000, 889, 778, 667, 556, 445, 334, 223, 112, 1]);
    // Lin et al. 2023, Table 2 (from memory): trailing 1000, 900, ..., 100
    expect(toPaper(get('trailing'))).toEqual([1000, 900, 800, 700, 600, 500, 400, 300, 200, 100]);
  });

  it('code indices (0-based), stepsOffset 1 for leading', () => {
    // derived from Lin et al. 2023, Table 2: leading (offset 1) 901, 801, ..., 1
    expect(get('leading', 1)).toEqual([901, 801, 701, 601, 501, 401, 301, 201, 101, 1]);
    // derived from Lin et al. 2023, Table 2: linspace 999, 888, ..., 0
    expect(get('linspace')).toEqual([999, 888, 777, 666, 555, 444, 333, 222, 111, 0]);
    // derived from Lin et al. 2023, Table 2: trailing 999, 899, ..., 99
    expect(get('trailing')).toEqual([999, 899, 799, 699, 599, 499, 399, 299, 199, 99]);
  });

  it('leading starts at 901, not 1000', () => {
    // common practice (and Lin et al. 2023, Table 2, from memory): leading never visits the last step
    expect(get('leading', 1)[0]).toBe(901);
    expect(get('leading', 1)[0]).not.toBe(999);
  });
});

describe('guidance 7.5 with rescale 0.7', () => {
  it('is the recommended default and lands between plain CFG and the fully rescaled output', () => {
    // common practice: guidance 7.5 with rescale 0.7 works well
    expect(COMMON_GUIDANCE_SCALE).toBe(7.5);
    expect(COMMON_GUIDANCE_RESCALE).toBe(0.7);
    const pos = [0.3, -1.2, 0.8, 0.1, -0.4, 1.5, -0.9, 0.2];
    const neg = [0.1, -0.8, 0.5, 0.3, -0.1, 0.9, -0.6, 0.0];
    const cfg = pos.map((p, i) => neg[i]! + 7.5 * (p - neg[i]!)); // Lin et al. 2023, eq. 13
    const out = guidanceRescale(pos, neg, COMMON_GUIDANCE_SCALE, COMMON_GUIDANCE_RESCALE);
    // Lin et al. 2023, eqs. 14-16: x_out = cfg * (phi * std(pos) / std(cfg) + 1 - phi), so its std
    // is phi * std(pos) + (1 - phi) * std(cfg).
    const expected = 0.7 * populationStd(pos) + 0.3 * populationStd(cfg);
    expect(populationStd(out)).toBeCloseTo(expected, 12);
    expect(populationStd(out)).toBeLessThan(populationStd(cfg));
    expect(populationStd(out)).toBeGreaterThan(populationStd(pos));
  });
});

describe('rescaled schedule', () => {
  it.each([
    ['scaled_linear', { kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012 }],
    ['linear', { kind: 'linear', trainSteps: 1000, betaStart: 1e-4, betaEnd: 0.02 }],
    ['cosine', { kind: 'cosine', trainSteps: 1000 }],
  ] as const)('%s: SNR_T = 0 exactly and the first abar unchanged', (_name, p) => {
    const plain = schedule(p);
    const rescaled = schedule({ ...p, rescaleZeroSnr: true });
    // Lin et al. 2023, Algorithm 1: SNR_T = 0 exactly
    expect(rescaled.terminalSnr).toBe(0);
    expect(rescaled.terminalSignal).toBe(0);
    expect(rescaled.betas[999]).toBe(1);
    expect(rescaled.logSnrMin).toBe(-Infinity);
    // Lin et al. 2023, Algorithm 1: first abar unchanged (bit-exact here)
    expect(rescaled.alphaBar[0]).toBe(plain.alphaBar[0]);
    expect(rescaled.logSnrMax).toBe(plain.logSnrMax);
  });

  it('follows Algorithm 1 at every step', () => {
    const plain = schedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012 });
    const rescaled = schedule({ kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012, rescaleZeroSnr: true });
    const a = Array.from(plain.alphaBar, Math.sqrt);
    const a0 = a[0]!;
    const aT = a[999]!;
    for (let i = 0; i < 1000; i++) {
      // Lin et al. 2023, Algorithm 1: sqrt(abar) <- (sqrt(abar) - a_T) * a_0 / (a_0 - a_T)
      const expected = (a[i]! - aT) * (a0 / (a0 - aT));
      const got = Math.sqrt(rescaled.alphaBar[i]!);
      expect(Math.abs(got - expected)).toBeLessThanOrEqual(1e-12 * Math.max(expected, 1e-3));
    }
  });
});

describe('Karras et al. 2022 sigmas', () => {
  it('first = smax and last = smin', () => {
    const r = karrasSigmas(25);
    if (!r.ok) throw new Error(r.problem);
    expect(r.value[0]).toBe(80); // Karras et al. 2022: first sigma = sigma_max (default 80)
    expect(r.value[24]).toBe(0.002); // Karras et al. 2022: last sigma = sigma_min (default 0.002)
    const custom = karrasSigmas(7, 0.03, 14.6, 5);
    if (!custom.ok) throw new Error(custom.problem);
    expect(custom.value[0]).toBe(14.6); // Karras et al. 2022: first = sigma_max
    expect(custom.value[6]).toBe(0.03); // Karras et al. 2022: last = sigma_min
  });
});

describe('flow timestep shift', () => {
  it('s = 3 at t = 0.5 gives 0.75', () => {
    // Esser et al. 2024, formula t' = s t / (1 + (s - 1) t): 1.5 / 2 = 0.75
    expect(flowTimestepShift(0.5, 3)).toBeCloseTo(0.75, 15);
  });
});
