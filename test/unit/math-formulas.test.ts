/**
 * Closed-form relations of shared-math: SNR helpers, target conversions (Salimans & Ho 2022),
 * min-SNR weights (Hang et al. 2023), continuous families and the schedule cache.
 */
import fc from 'fast-check';
import { beforeEach, describe, expect, it } from 'vitest';
import {
  alphaBarFromBetas,
  alphaBarFromSigma,
  checkBetas,
  classifierFreeGuidance,
  clearScheduleCache,
  computeSchedule,
  epsFromV,
  flowSnr,
  flowTimestepShift,
  guidanceRescale,
  logSnrFromAlphaBar,
  LruCache,
  mean,
  minSnrWeight,
  noiseAmplitude,
  noisySample,
  populationStd,
  rescaleZeroTerminalSnr,
  resolutionLogSnrShift,
  samplingTimesteps,
  scheduleCacheStats,
  sigmaFromAlphaBar,
  signalAmplitude,
  snrFromAlphaBar,
  snrFromSigma,
  vFromEpsX0,
  x0FromEps,
  x0FromV,
  ZERO_SNR_ALPHA_BAR_CLAMP,
} from '@noiselint/shared-math';

const RUNS = { numRuns: 200 };
const abarArb = fc.double({ min: 1e-6, max: 1 - 1e-6, noNaN: true });
const valueArb = fc.double({ min: -4, max: 4, noNaN: true });

function close(a: number, b: number, tol = 1e-12): boolean {
  return Math.abs(a - b) <= tol * Math.max(1, Math.abs(b));
}

describe('SNR helpers at the edges', () => {
  it('abar = 0 and abar = 1', () => {
    // definitions SNR = abar / (1 - abar), sigma = sqrt((1 - abar) / abar) (Ho et al. 2020; Karras et al. 2022)
    expect(snrFromAlphaBar(0)).toBe(0);
    expect(snrFromAlphaBar(1)).toBe(Infinity);
    expect(logSnrFromAlphaBar(0)).toBe(-Infinity);
    expect(logSnrFromAlphaBar(1)).toBe(Infinity);
    expect(sigmaFromAlphaBar(0)).toBe(Infinity);
    expect(sigmaFromAlphaBar(1)).toBe(0);
    expect(signalAmplitude(0.25)).toBe(0.5);
    expect(noiseAmplitude(0.75)).toBe(0.5);
    expect(snrFromAlphaBar(1.5)).toBeNaN();
    expect(signalAmplitude(-0.1)).toBeNaN();
  });

  it('log-SNR is the log of SNR and sigma inverts', () => {
    fc.assert(
      fc.property(abarArb, (abar) => {
        expect(close(logSnrFromAlphaBar(abar), Math.log(snrFromAlphaBar(abar)), 1e-10)).toBe(true);
        expect(close(alphaBarFromSigma(sigmaFromAlphaBar(abar)), abar, 1e-10)).toBe(true);
        // sigma-space SNR with sigma_data = 1 is the discrete SNR (Karras et al. 2022, VP case)
        expect(close(snrFromSigma(sigmaFromAlphaBar(abar), 1), snrFromAlphaBar(abar), 1e-10)).toBe(true);
      }),
      RUNS,
    );
  });

  it('the common zero-SNR clamp 2^-24 gives sigma about 4096', () => {
    // common practice (DESIGN section 4): abar_T clamped to 2^-24, sigma about 4096
    expect(sigmaFromAlphaBar(ZERO_SNR_ALPHA_BAR_CLAMP)).toBeCloseTo(4096, 2);
  });

  it('abar is exactly 0 after a beta of exactly 1', () => {
    expect(Array.from(alphaBarFromBetas([0.5, 1]))).toEqual([0.5, 0]);
  });
});

describe('target conversions (Salimans & Ho 2022)', () => {
  it('v, epsilon and x0 convert into each other', () => {
    fc.assert(
      fc.property(abarArb, valueArb, valueArb, (abar, x0, eps) => {
        const xt = noisySample(abar, x0, eps); // Ho et al. 2020, eq. 4
        const v = vFromEpsX0(abar, eps, x0); // Salimans & Ho 2022: v = sqrt(abar) eps - sqrt(1 - abar) x0
        expect(close(x0FromV(abar, xt, v), x0, 1e-9)).toBe(true);
        expect(close(epsFromV(abar, xt, v), eps, 1e-9)).toBe(true);
        // x0 from epsilon divides by sqrt(abar): only well conditioned away from abar = 0
        fc.pre(abar > 1e-2);
        expect(close(x0FromEps(abar, xt, eps), x0, 1e-9)).toBe(true);
      }),
      RUNS,
    );
  });

  it('at abar = 0 (zero SNR) v still recovers x0 but epsilon cannot', () => {
    // Lin et al. 2023, section 3.2: at zero SNR, x_t is pure noise and v = -x0
    const x0 = 0.3;
    const eps = -1.1;
    const xt = noisySample(0, x0, eps);
    expect(xt).toBe(eps);
    expect(vFromEpsX0(0, eps, x0)).toBe(-x0);
    expect(x0FromV(0, xt, vFromEpsX0(0, eps, x0))).toBe(x0);
    expect(x0FromEps(0, xt, eps)).toBeNaN(); // 0 / 0: the epsilon target is undefined here
    expect(Math.abs(x0FromEps(0, xt, eps + 0.5))).toBe(Infinity);
  });
});

describe('min-SNR-gamma weights (Hang et al. 2023)', () => {
  it('concrete values, gamma = 5', () => {
    // Hang et al. 2023 (formulas as in DESIGN section 4): epsilon min(SNR, g) / SNR
    expect(minSnrWeight(20, 5, 'epsilon')).toBe(0.25);
    expect(minSnrWeight(2, 5, 'epsilon')).toBe(1);
    // Hang et al. 2023: v min(SNR, g) / (SNR + 1)
    expect(minSnrWeight(20, 5, 'v')).toBeCloseTo(5 / 21, 15);
    expect(minSnrWeight(1, 5, 'v')).toBe(0.5);
    // Hang et al. 2023: x0 min(SNR, g)
    expect(minSnrWeight(20, 5, 'x0')).toBe(5);
    expect(minSnrWeight(0.5, 5, 'x0')).toBe(0.5);
  });

  it('the three forms weight the same x0 error (eps error = SNR * x0 error, v error = (SNR + 1) * x0 error)', () => {
    // Hang et al. 2023, section 3 (recalled from memory): the weights are one weighting in three parameterisations
    fc.assert(
      fc.property(fc.double({ min: 1e-4, max: 1e4, noNaN: true }), fc.double({ min: 0.1, max: 20, noNaN: true }), (snr, g) => {
        const x0 = minSnrWeight(snr, g, 'x0');
        expect(close(minSnrWeight(snr, g, 'epsilon') * snr, x0, 1e-12)).toBe(true);
        expect(close(minSnrWeight(snr, g, 'v') * (snr + 1), x0, 1e-12)).toBe(true);
      }),
      RUNS,
    );
  });

  it('zero SNR: epsilon undefined, v and x0 weight 0 (the pure-noise step is never trained)', () => {
    // DESIGN sections 4-5 (min-snr-division, min-snr-drops-terminal-step)
    expect(minSnrWeight(0, 5, 'epsilon')).toBeNaN();
    expect(minSnrWeight(0, 5, 'v')).toBe(0);
    expect(minSnrWeight(0, 5, 'x0')).toBe(0);
    expect(minSnrWeight(Infinity, 5, 'v')).toBe(0);
    expect(minSnrWeight(Infinity, 5, 'epsilon')).toBe(0);
    expect(minSnrWeight(1, 0, 'x0')).toBeNaN();
    expect(minSnrWeight(-1, 5, 'x0')).toBeNaN();
  });
});

describe('continuous families', () => {
  it('flow SNR ((1 - t) / t)^2, zero at t = 1', () => {
    // flow matching x_t = (1 - t) x0 + t eps: SNR = ((1 - t) / t)^2 (DESIGN section 4)
    expect(flowSnr(1)).toBe(0);
    expect(flowSnr(0.5)).toBe(1);
    expect(flowSnr(0.2)).toBeCloseTo(16, 12);
    expect(flowSnr(0)).toBe(Infinity);
    expect(flowSnr(1.2)).toBeNaN();
  });

  it('flow timestep shift keeps the endpoints, is monotone and is the identity at s = 1', () => {
    // Esser et al. 2024, t' = s t / (1 + (s - 1) t)
    fc.assert(
      fc.property(fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0.1, max: 10, noNaN: true }), (t, s) => {
        expect(close(flowTimestepShift(t, 1), t, 1e-15)).toBe(true);
        const shifted = flowTimestepShift(t, s);
        expect(shifted >= 0 && shifted <= 1).toBe(true);
        // s > 1 moves t towards 1; allow one rounding step of float64 just below 1
        if (s > 1) expect(shifted).toBeGreaterThanOrEqual(t - Number.EPSILON);
        // in SNR terms the shift divides SNR by s^2 (follows from the formula)
        if (t > 0.01 && t < 0.99) expect(close(flowSnr(shifted), flowSnr(t) / (s * s), 1e-9)).toBe(true);
      }),
      RUNS,
    );
    expect(flowTimestepShift(0, 3)).toBe(0);
    expect(flowTimestepShift(1, 3)).toBe(1);
    expect(flowTimestepShift(0.5, 0)).toBeNaN();
  });

  it('resolution shift 2 ln(r0 / r)', () => {
    // Hoogeboom et al. 2023: SNR scales by (r0 / r)^2, so log-SNR moves by 2 ln(r0 / r)
    expect(resolutionLogSnrShift(64, 256)).toBeCloseTo(-2 * Math.log(4), 14);
    expect(resolutionLogSnrShift(512, 512)).toBe(0);
    expect(resolutionLogSnrShift(512, 1024)).toBeCloseTo(-1.3862943611198906, 14); // 2 ln(1/2) = -ln 4
    expect(resolutionLogSnrShift(0, 512)).toBeNaN();
  });

  it('snrFromSigma uses sigma_data = 0.5 by default', () => {
    // Karras et al. 2022: sigma_data = 0.5, SNR = sigma_data^2 / sigma^2
    expect(snrFromSigma(0.5)).toBe(1);
    expect(snrFromSigma(80)).toBeCloseTo(0.25 / 6400, 18);
    expect(snrFromSigma(Infinity)).toBe(0);
    expect(snrFromSigma(-1)).toBeNaN();
  });
});

describe('trailing ties round half to even', () => {
  it('T = 1000, N = 16: 937.5 -> 938 and 812.5 -> 812 (half up would give 813)', () => {
    // numpy's round is half to even; values printed once by numpy 2.4.6 (general-purpose reference library)
    const r = samplingTimesteps('trailing', 1000, 16);
    expect(r.ok && r.value.slice(0, 4)).toEqual([999, 937, 874, 811]);
  });
});

describe('spacings agree with numpy arithmetic', () => {
  // Values printed once by numpy 2.4.6 (general-purpose reference library; run by hand, not a
  // dependency): np.round(np.arange(T, 0, -T / N)) - 1 and the DDIM quadratic list.
  it('trailing T = 1000, N = 48 keeps the 937.4999... round-off of numpy arange', () => {
    const r = samplingTimesteps('trailing', 1000, 48);
    expect(r.ok && r.value.slice(0, 6)).toEqual([999, 978, 957, 936, 916, 895]); // numpy 2.4.6 output
  });

  it('trailing T = 15, N = 13: the first 13 of the 14 values numpy arange yields', () => {
    const r = samplingTimesteps('trailing', 15, 13);
    expect(r.ok && r.value).toEqual([14, 13, 12, 11, 9, 8, 7, 6, 5, 4, 2, 1, 0]); // numpy 2.4.6 output (then -1)
  });

  it('quadratic T = 1000, N = 10 (Song et al. 2020, 0.8 factor)', () => {
    const r = samplingTimesteps('quadratic', 1000, 10);
    expect(r.ok && r.value).toEqual([800, 632, 483, 355, 246, 158, 88, 39, 9, 0]); // numpy 2.4.6 output
  });
});

describe('guidance rescale edge cases', () => {
  it('mismatched or empty vectors give an empty result, a flat CFG output is left as is', () => {
    expect(guidanceRescale([1, 2], [1], 7.5, 0.7).length).toBe(0);
    expect(guidanceRescale([], [], 7.5, 0.7).length).toBe(0);
    expect(Array.from(guidanceRescale([1, 1], [1, 1], 7.5, 0.7))).toEqual([1, 1]);
  });
});

describe('schedule cache', () => {
  beforeEach(() => clearScheduleCache());
  const params = { kind: 'scaled_linear', trainSteps: 1000, betaStart: 0.00085, betaEnd: 0.012 } as const;

  it('computes once per distinct parameter set', () => {
    computeSchedule(params);
    computeSchedule({ ...params });
    computeSchedule({ ...params, cosineOffset: 0.5 }); // not read by this kind: same entry
    expect(scheduleCacheStats()).toMatchObject({ hits: 2, misses: 1, entries: 1 });
    computeSchedule({ ...params, rescaleZeroSnr: true });
    computeSchedule({ ...params, betaEnd: 0.0121 });
    expect(scheduleCacheStats()).toMatchObject({ hits: 2, misses: 3, entries: 3 });
  });

  it('hands every caller the same frozen numbers, and a copy is the way to get a mutable array', () => {
    const first = computeSchedule(params);
    if (!first.ok) throw new Error(first.problem);
    const second = computeSchedule({ ...params });
    if (!second.ok) throw new Error(second.problem);
    // Shared, not copied: documents with the same schedule hold one set of arrays.
    expect(second.value).toBe(first.value);
    expect(second.value.alphaBar).toBe(first.value.alphaBar);
    expect(Object.isFrozen(first.value)).toBe(true);
    expect(() => {
      (first.value as { terminalSnr: number }).terminalSnr = 1;
    }).toThrow(TypeError);
    const original = first.value.alphaBar[999];
    const copy = first.value.alphaBar.slice();
    copy.fill(0.5);
    const third = computeSchedule(params);
    if (!third.ok) throw new Error(third.problem);
    expect(third.value.alphaBar[999]).toBe(original);
    expect(third.value.alphaBar[999]).not.toBe(0.5);
    expect(scheduleCacheStats()).toMatchObject({ hits: 2, misses: 1 });
  });

  it('the shared arrays are read only to the type checker (tsc -b checks these lines)', () => {
    const r = computeSchedule(params);
    if (!r.ok) throw new Error(r.problem);
    const n = r.value;
    // Each line below must stay a type error; if ReadonlyFloat64Array ever allowed a write,
    // `@ts-expect-error` would fail the type check. The writes are never run.
    const writes = [
      // @ts-expect-error index writes are not allowed
      () => (n.alphaBar[0] = 0.5),
      // @ts-expect-error no fill
      () => n.betas.fill(0),
      // @ts-expect-error no set
      () => n.logSnr.set([1]),
      // @ts-expect-error no sort / reverse / copyWithin
      () => n.signal.reverse(),
      // @ts-expect-error a subarray is read only too
      () => (n.alphaBar.subarray(1)[0] = 0.5),
      // @ts-expect-error no way to the underlying buffer
      () => new Float64Array(n.alphaBar.buffer),
      // @ts-expect-error not assignable to a mutable Float64Array
      (): Float64Array => n.alphaBar,
    ];
    expect(writes).toHaveLength(7);
    // Reading, iterating and copying work on the same values.
    expect(Array.from(n.signal.subarray(0, 2))).toEqual([Math.sqrt(n.alphaBar[0]!), Math.sqrt(n.alphaBar[1]!)]);
  });

  it('no public function writes to the arrays it is given: the cache stays bit-for-bit intact', () => {
    const r = computeSchedule(params);
    if (!r.ok) throw new Error(r.problem);
    const shared = r.value;
    const before = [shared.betas, shared.alphaBar, shared.logSnr, shared.signal].map((a) => Array.from(a));
    // Every shared-math function that takes a list, fed the shared arrays.
    expect(checkBetas(shared.betas)).toBeNull();
    alphaBarFromBetas(shared.betas);
    rescaleZeroTerminalSnr(shared.betas);
    computeSchedule({ kind: 'explicit', trainSteps: 1000, betas: shared.betas, rescaleZeroSnr: true });
    mean(shared.logSnr.subarray(0, 10));
    populationStd(shared.alphaBar);
    classifierFreeGuidance(shared.alphaBar, shared.signal, 7.5);
    guidanceRescale(shared.alphaBar, shared.signal, 7.5, 0.7);
    const after = computeSchedule(params);
    if (!after.ok) throw new Error(after.problem);
    expect(after.value).toBe(shared);
    expect([shared.betas, shared.alphaBar, shared.logSnr, shared.signal].map((a) => Array.from(a))).toEqual(before);
    // And the shared numbers are those a fresh computation gives.
    clearScheduleCache();
    const fresh = computeSchedule(params);
    if (!fresh.ok) throw new Error(fresh.problem);
    expect(fresh.value).not.toBe(shared);
    expect(Array.from(fresh.value.alphaBar)).toEqual(before[1]);
    expect(Array.from(fresh.value.signal)).toEqual(before[3]);
  });

  // Signal amplitude sqrt(abar) (DESIGN section 4; Ho et al. 2020).
  it('the signal curve is sqrt(abar) at every step', () => {
    const r = computeSchedule({ ...params, rescaleZeroSnr: true });
    if (!r.ok) throw new Error(r.problem);
    const { alphaBar, signal } = r.value;
    expect(signal.length).toBe(1000);
    for (let i = 0; i < 1000; i++) expect(signal[i]).toBe(Math.sqrt(alphaBar[i]!));
    // Lin et al. 2023: exactly zero signal at the last step after the rescale.
    expect(signal[999]).toBe(0);
  });

  it('explicit lists are keyed by content, and mutating the input list afterwards is harmless', () => {
    const betas = [0.01, 0.02, 0.03, 0.04];
    const a = computeSchedule({ kind: 'explicit', trainSteps: 4, betas });
    betas[3] = 0.5;
    const b = computeSchedule({ kind: 'explicit', trainSteps: 4, betas });
    expect(scheduleCacheStats()).toMatchObject({ hits: 0, misses: 2 });
    if (!a.ok || !b.ok) throw new Error('unexpected problem');
    // (1 - 0.01)(1 - 0.02)(1 - 0.03)(1 - 0.04) = 0.90345024 versus ... (1 - 0.5) = 0.4705470 (hand arithmetic)
    expect(a.value.alphaBar[3]).toBeCloseTo(0.90345024, 14);
    expect(b.value.alphaBar[3]).toBeCloseTo(0.470547, 14);
  });
});

describe('LruCache (the bounded map behind the schedule and curve caches)', () => {
  it('drops the least recently used entry past the entry bound; get refreshes an entry', () => {
    const c = new LruCache<string, number>(2, 100);
    c.set('a', 1);
    c.set('b', 2);
    expect(c.get('a')).toBe(1); // a is now the most recent
    c.set('c', 3);
    expect(c.get('b')).toBeUndefined();
    expect(c.get('a')).toBe(1);
    expect(c.get('c')).toBe(3);
    expect(c.size).toBe(2);
  });

  it('stays under the weight bound, refuses a value heavier than the bound, and delete frees its weight', () => {
    const c = new LruCache<string, number>(10, 10);
    c.set('a', 1, 6);
    c.set('b', 2, 6); // 12 > 10: a goes
    expect(c.get('a')).toBeUndefined();
    expect(c.get('b')).toBe(2);
    c.set('huge', 3, 11);
    expect(c.get('huge')).toBeUndefined();
    expect(c.get('b')).toBe(2);
    c.delete('b');
    expect(c.size).toBe(0);
    c.set('d', 4, 10); // fits only because b's weight was given back
    expect(c.get('d')).toBe(4);
    c.delete('missing');
    expect(c.size).toBe(1);
  });
});
