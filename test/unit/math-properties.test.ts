/**
 * Property tests (fast-check) for shared-math: schedules, the zero-terminal-SNR rescale,
 * sampling spacings, Karras sigmas and guidance rescale.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { computeSchedule, guidanceRescale, karrasSigmas, populationStd, samplingTimesteps, type ScheduleParams } from '@noiselint/shared-math';

const RUNS = { numRuns: 150 };

const betaBound = fc.double({ min: 1e-5, max: 0.2, noNaN: true });
const explicitList = fc.array(fc.double({ min: 1e-6, max: 0.5, noNaN: true }), { minLength: 2, maxLength: 400 });

/** Valid schedule parameters of every kind (T kept moderate for speed). */
const validParams: fc.Arbitrary<ScheduleParams> = fc.oneof(
  fc.record({
    kind: fc.constantFrom('linear' as const, 'scaled_linear' as const, 'sigmoid' as const),
    trainSteps: fc.integer({ min: 2, max: 3000 }),
    betaStart: betaBound,
    betaEnd: betaBound,
    rescaleZeroSnr: fc.boolean(),
  }),
  fc.record({
    kind: fc.constant('cosine' as const),
    trainSteps: fc.integer({ min: 2, max: 3000 }),
    cosineOffset: fc.double({ min: 0, max: 0.1, noNaN: true }),
    rescaleZeroSnr: fc.boolean(),
  }),
  explicitList.chain((betas) =>
    fc.record({
      kind: fc.constant('explicit' as const),
      trainSteps: fc.constant(betas.length),
      betas: fc.constant(betas),
      rescaleZeroSnr: fc.boolean(),
    }),
  ),
);

function unwrap<T>(r: { ok: true; value: T } | { ok: false; problem: string }): T {
  if (!r.ok) throw new Error(r.problem);
  return r.value;
}

describe('schedules', () => {
  it('abar is strictly decreasing for every valid schedule (betas > 0)', () => {
    fc.assert(
      fc.property(validParams, (p) => {
        const s = unwrap(computeSchedule(p));
        expect(s.alphaBar.length).toBe(p.trainSteps);
        expect(s.alphaBar[0]).toBeLessThan(1);
        for (let i = 1; i < s.alphaBar.length; i++) {
          if (!(s.alphaBar[i]! < s.alphaBar[i - 1]!)) {
            throw new Error(`abar[${i}] = ${s.alphaBar[i]} >= abar[${i - 1}] = ${s.alphaBar[i - 1]}`);
          }
        }
      }),
      RUNS,
    );
  });

  it('rescaled: terminal SNR exactly 0 and first abar unchanged (Lin et al. 2023, Algorithm 1)', () => {
    // Bit-exact rather than 1e-15: the rescale copies beta_0, the fixed point of Algorithm 1,
    // instead of recomputing it through a0 * (a0 - aT) / (a0 - aT), which can round off by an ulp.
    fc.assert(
      fc.property(validParams, (p) => {
        const plain = unwrap(computeSchedule({ ...p, rescaleZeroSnr: false }));
        const rescaled = unwrap(computeSchedule({ ...p, rescaleZeroSnr: true }));
        const last = p.trainSteps - 1;
        expect(rescaled.terminalSnr).toBe(0);
        expect(rescaled.alphaBar[last]).toBe(0);
        expect(rescaled.betas[last]).toBe(1);
        expect(rescaled.alphaBar[0]).toBe(plain.alphaBar[0]);
      }),
      RUNS,
    );
  });
});

describe('sampling spacings', () => {
  const tn = fc.integer({ min: 2, max: 5000 }).chain((T) => fc.record({ T: fc.constant(T), N: fc.integer({ min: 1, max: T }) }));

  function expectStrictlyDecreasingWithin(steps: number[], T: number): void {
    for (let k = 0; k < steps.length; k++) {
      if (!Number.isInteger(steps[k])) throw new Error(`step ${steps[k]} is not an integer`);
      if (steps[k]! < 0 || steps[k]! > T - 1) throw new Error(`step ${steps[k]} outside [0, ${T - 1}]`);
      if (k > 0 && !(steps[k]! < steps[k - 1]!)) throw new Error(`not strictly decreasing at ${k}: ${steps[k - 1]}, ${steps[k]}`);
    }
  }

  it('trailing starts at T - 1 (Lin et al. 2023, Table 2)', () => {
    fc.assert(
      fc.property(tn, ({ T, N }) => {
        expect(unwrap(samplingTimesteps('trailing', T, N))[0]).toBe(T - 1);
      }),
      RUNS,
    );
  });

  it('linspace starts at T - 1 and ends at 0', () => {
    fc.assert(
      fc.property(tn, ({ T, N }) => {
        const steps = unwrap(samplingTimesteps('linspace', T, N));
        expect(steps[0]).toBe(N === 1 ? 0 : T - 1);
        expect(steps[N - 1]).toBe(0);
      }),
      RUNS,
    );
  });

  it('trailing and linspace: N values, strictly decreasing, within [0, T - 1] when N <= T', () => {
    fc.assert(
      fc.property(tn, fc.constantFrom('trailing' as const, 'linspace' as const), ({ T, N }, spacing) => {
        const steps = unwrap(samplingTimesteps(spacing, T, N));
        expect(steps.length).toBe(N);
        expectStrictlyDecreasingWithin(steps, T);
      }),
      RUNS,
    );
  });

  it('leading and uniform: strictly decreasing, within range when the offset keeps the max <= T - 1', () => {
    const withOffset = tn.chain(({ T, N }) => {
      const top = (N - 1) * Math.floor(T / N);
      return fc.record({ T: fc.constant(T), N: fc.constant(N), offset: fc.integer({ min: 0, max: T - 1 - top }) });
    });
    fc.assert(
      fc.property(withOffset, fc.constantFrom('leading' as const, 'uniform' as const), ({ T, N, offset }, spacing) => {
        const steps = unwrap(samplingTimesteps(spacing, T, N, offset));
        expect(steps.length).toBe(N);
        expect(steps[N - 1]).toBe(offset);
        expectStrictlyDecreasingWithin(steps, T);
      }),
      RUNS,
    );
  });

  it('quadratic: within [0, T - 1] when N <= T; strictly decreasing when (N - 1)^2 < 0.8 T', () => {
    // Song et al. 2020 (DDIM) quadratic choice; the first gap after flooring is 0.8 T / (N - 1)^2,
    // so steps stay distinct only while that is above 1 (a documented limit, not clamped).
    fc.assert(
      fc.property(tn, ({ T, N }) => {
        const steps = unwrap(samplingTimesteps('quadratic', T, N));
        expect(steps.length).toBe(N);
        const outside = steps.filter((t) => t < 0 || t > T - 1);
        expect(outside).toEqual([]);
        const rising = steps.findIndex((t, k) => k > 0 && t > steps[k - 1]!);
        expect(rising).toBe(-1);
        if ((N - 1) ** 2 < 0.8 * T) expectStrictlyDecreasingWithin(steps, T);
      }),
      RUNS,
    );
  });

  it('quadratic with many steps repeats a timestep (the documented limit is real)', () => {
    const steps = unwrap(samplingTimesteps('quadratic', 1000, 100));
    expect(new Set(steps).size).toBeLessThan(100);
  });
});

describe('Karras et al. 2022 sigmas', () => {
  it('first = smax, last = smin, strictly decreasing', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 500 }),
        fc.double({ min: 1e-4, max: 1, noNaN: true }),
        fc.double({ min: 2, max: 1000, noNaN: true }),
        fc.double({ min: 1, max: 10, noNaN: true }),
        (N, smin, smax, rho) => {
          const sigmas = unwrap(karrasSigmas(N, smin, smax, rho));
          expect(sigmas[0]).toBe(smax); // Karras et al. 2022: first = sigma_max
          expect(sigmas[N - 1]).toBe(smin); // Karras et al. 2022: last = sigma_min
          for (let i = 1; i < N; i++) expect(sigmas[i]).toBeLessThan(sigmas[i - 1]!);
        },
      ),
      RUNS,
    );
  });
});

describe('guidance rescale (Lin et al. 2023, eqs. 13-16)', () => {
  const vectors = fc.integer({ min: 2, max: 64 }).chain((n) =>
    fc.record({
      pos: fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: n, maxLength: n }),
      neg: fc.array(fc.double({ min: -5, max: 5, noNaN: true }), { minLength: n, maxLength: n }),
      w: fc.double({ min: 1, max: 20, noNaN: true }),
    }),
  );

  it('phi = 0 is plain classifier-free guidance', () => {
    fc.assert(
      fc.property(vectors, ({ pos, neg, w }) => {
        const out = guidanceRescale(pos, neg, w, 0);
        // Lin et al. 2023, eq. 13: x_cfg = x_neg + w (x_pos - x_neg)
        pos.forEach((p, i) => expect(out[i]).toBe(neg[i]! + w * (p - neg[i]!)));
      }),
      RUNS,
    );
  });

  it('phi = 1 has the std of the positive prediction', () => {
    fc.assert(
      fc.property(vectors, ({ pos, neg, w }) => {
        const cfg = pos.map((p, i) => neg[i]! + w * (p - neg[i]!));
        // The spread must not vanish next to the values themselves: a std computed from nearly
        // equal values loses digits to cancellation, and the ratio below would test that, not eq. 14.
        const scale = (xs: number[]) => 1 + Math.max(...xs.map(Math.abs));
        fc.pre(populationStd(cfg) > 1e-6 * scale(cfg) && populationStd(pos) > 1e-6 * scale(pos));
        const out = guidanceRescale(pos, neg, w, 1);
        // Lin et al. 2023, eq. 14: std(x_res) = std(x_pos)
        const rel = Math.abs(populationStd(out) - populationStd(pos)) / populationStd(pos);
        expect(rel).toBeLessThan(1e-9);
      }),
      RUNS,
    );
  });
});
