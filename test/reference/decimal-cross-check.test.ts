/**
 * Cross-checks against decimal.js at 50 significant digits (general-purpose reference library from
 * npm, DESIGN section 6): cumulative products of (1 - beta) to 1e-12 relative, and Karras sigmas.
 * Betas enter Decimal through their shortest round-trip decimal string, which identifies the same
 * float64, so the reference sees the same inputs to within 1e-16 relative.
 */
import Decimal from 'decimal.js';
import { describe, expect, it } from 'vitest';
import { alphaBarFromBetas, computeSchedule, cosineBetas, karrasSigmas, linearBetas, scaledLinearBetas, sigmoidBetas } from '@noiselint/shared-math';
import { expectRelative } from './digits';

const D = Decimal.clone({ precision: 50 });

function referenceCumprod(betas: ArrayLike<number>): Decimal[] {
  const out: Decimal[] = [];
  let product = new D(1);
  for (let i = 0; i < betas.length; i++) {
    product = product.times(new D(1).minus(new D(betas[i]!)));
    out.push(product);
  }
  return out;
}

function unwrap<T>(r: { ok: true; value: T } | { ok: false; problem: string }): T {
  if (!r.ok) throw new Error(r.problem);
  return r.value;
}

/** Deterministic pseudo-random list (mulberry32), so a failure is reproducible. */
function randomBetas(n: number, seed: number, lo: number, hi: number): number[] {
  let a = seed >>> 0;
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return Array.from({ length: n }, () => lo + (hi - lo) * next());
}

const cases: Array<[string, Float64Array | number[]]> = [
  ['linear 1e-4 -> 0.02, T = 1000 (Ho et al. 2020)', unwrap(linearBetas(1000, 1e-4, 0.02))],
  ['scaled linear 0.00085 -> 0.012, T = 1000', unwrap(scaledLinearBetas(1000, 0.00085, 0.012))],
  ['cosine s = 0.008, T = 1000 (Nichol & Dhariwal 2021)', unwrap(cosineBetas(1000))],
  ['sigmoid 1e-4 -> 0.02, T = 1000', unwrap(sigmoidBetas(1000, 1e-4, 0.02))],
  ['linear 1e-5 -> 0.002, T = 20000', unwrap(linearBetas(20000, 1e-5, 0.002))],
  ['explicit random list, T = 500', randomBetas(500, 20231, 1e-5, 0.05)],
  ['explicit random list with large betas, T = 64', randomBetas(64, 7, 0.01, 0.6)],
];

describe('cumulative product of (1 - beta) against decimal.js (50 digits)', () => {
  it.each(cases)('%s', (_name, betas) => {
    const abar = alphaBarFromBetas(betas);
    const reference = referenceCumprod(betas);
    expect(abar.length).toBe(reference.length);
    for (let i = 0; i < abar.length; i++) {
      // decimal.js at 50 digits (general-purpose reference library, npm): 1e-12 relative
      expectRelative(abar[i]!, reference[i]!.toNumber(), 1e-12, `abar[${i}]`);
    }
  });

  it('computeSchedule on an explicit list agrees too', () => {
    const betas = randomBetas(300, 99, 1e-4, 0.03);
    const s = unwrap(computeSchedule({ kind: 'explicit', trainSteps: 300, betas }));
    const reference = referenceCumprod(betas);
    for (let i = 0; i < 300; i++) {
      // decimal.js at 50 digits (general-purpose reference library, npm): 1e-12 relative
      expectRelative(s.alphaBar[i]!, reference[i]!.toNumber(), 1e-12, `abar[${i}]`);
    }
  });

  it('a beta of exactly 1 at the end gives abar exactly 0, as the exact product does', () => {
    const betas = [...randomBetas(9, 3, 1e-3, 0.1), 1];
    const abar = alphaBarFromBetas(betas);
    // decimal.js at 50 digits (general-purpose reference library, npm): the product is exactly 0
    expect(referenceCumprod(betas)[9]!.isZero()).toBe(true);
    expect(abar[9]).toBe(0);
  });
});

describe('cosine betas against decimal.js trigonometry (50 digits)', () => {
  it('matches Nichol & Dhariwal 2021, eq. 17 with the 0.999 cap', () => {
    const T = 1000;
    const s = new D('0.008');
    const halfPi = D.acos(-1).div(2);
    const f = (t: number) => D.cos(new D(t).div(T).plus(s).div(s.plus(1)).times(halfPi)).pow(2);
    const betas = unwrap(cosineBetas(T));
    for (let i = 0; i < T; i++) {
      const exact = D.min(new D(1).minus(f(i + 1).div(f(i))), new D('0.999')).toNumber();
      // decimal.js at 50 digits (npm): 1e-10 relative; 1 - ratio cancels for the smallest betas
      // (about 4e-5), which costs float64 a few digits below 1e-12.
      expectRelative(betas[i]!, exact, 1e-10, `beta[${i}]`);
    }
  });
});

describe('Karras et al. 2022, eq. (5) against decimal.js (50 digits)', () => {
  it.each([
    [10, 0.002, 80, 7],
    [40, 0.0292, 14.6146, 7],
    [5, 0.1, 10, 3],
  ])('N = %i, sigma %f .. %f, rho %f', (N, smin, smax, rho) => {
    const sigmas = unwrap(karrasSigmas(N, smin, smax, rho));
    const maxRoot = new D(smax).pow(new D(1).div(rho));
    const minRoot = new D(smin).pow(new D(1).div(rho));
    for (let i = 0; i < N; i++) {
      const exact = maxRoot
        .plus(new D(i).div(N - 1).times(minRoot.minus(maxRoot)))
        .pow(rho)
        .toNumber();
      // decimal.js at 50 digits (npm), Karras et al. 2022 eq. (5): 1e-12 relative
      expectRelative(sigmas[i]!, exact, 1e-12, `sigma[${i}]`);
    }
  });
});
