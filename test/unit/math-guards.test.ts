/**
 * Guards of shared-math (DESIGN section 4, "Guard every input"): bad input gives a one-line
 * problem (or NaN for scalar formulas), never an exception, and a refused size is never allocated.
 */
import { afterEach, describe, expect, it } from 'vitest';
import {
  checkBetas,
  computeSchedule,
  cosineBetas,
  karrasSigmas,
  linearBetas,
  rescaleZeroTerminalSnr,
  samplingTimesteps,
  scaledLinearBetas,
  sigmoidBetas,
  TRAIN_STEPS_MAX,
  type MathResult,
} from '@noiselint/shared-math';

function problemOf(r: MathResult<unknown>): string {
  if (r.ok) throw new Error('expected a problem, got a value');
  expect(r.problem).not.toMatch(/\n/);
  return r.problem;
}

/** Counts typed-array and Array constructions made while `run` executes. */
function countAllocations(run: () => void): number {
  const g = globalThis as unknown as Record<string, unknown>;
  const names = ['Float64Array', 'Float32Array', 'Array'] as const;
  const originals = names.map((n) => g[n]);
  let count = 0;
  try {
    names.forEach((n, i) => {
      g[n] = new Proxy(originals[i] as object, {
        construct(target, args, newTarget) {
          count++;
          return Reflect.construct(target as new (...a: unknown[]) => object, args, newTarget);
        },
        apply(target, thisArg, args) {
          count++;
          return Reflect.apply(target as (...a: unknown[]) => unknown, thisArg, args);
        },
      });
    });
    run();
  } finally {
    names.forEach((n, i) => {
      g[n] = originals[i];
    });
  }
  return count;
}

describe('train steps T', () => {
  afterEach(() => {
    // the spy must never leak into other tests
    expect(globalThis.Float64Array.name).toBe('Float64Array');
  });

  it('the allocation spy sees a normal schedule being built (positive control)', () => {
    expect(countAllocations(() => void linearBetas(1000, 1e-4, 0.02))).toBeGreaterThan(0);
  });

  it('T = 1e12 is refused without allocating anything', () => {
    let result: MathResult<Float64Array> | undefined;
    const allocations = countAllocations(() => {
      result = linearBetas(1e12, 1e-4, 0.02);
    });
    expect(allocations).toBe(0);
    expect(problemOf(result!)).toContain('1000000000000');
    const schedule = countAllocations(() => {
      const r = computeSchedule({ kind: 'cosine', trainSteps: 1e12 });
      expect(problemOf(r)).toContain('train steps');
    });
    expect(schedule).toBe(0);
    const steps = countAllocations(() => {
      expect(problemOf(samplingTimesteps('trailing', 1e12, 10))).toContain('train steps');
    });
    expect(steps).toBe(0);
  });

  it.each([1, 0, -5, 1000.5, NaN, Infinity, TRAIN_STEPS_MAX + 1])('T = %s is refused by every builder', (T) => {
    for (const r of [
      linearBetas(T, 1e-4, 0.02),
      scaledLinearBetas(T, 1e-4, 0.02),
      sigmoidBetas(T, 1e-4, 0.02),
      cosineBetas(T),
      computeSchedule({ kind: 'linear', trainSteps: T, betaStart: 1e-4, betaEnd: 0.02 }),
      samplingTimesteps('leading', T, 1),
    ]) {
      expect(problemOf(r)).toMatch(/train steps must be an integer in \[2, 100000\]/);
    }
  });

  it('T = 100000 (the limit) is accepted', () => {
    const r = computeSchedule({ kind: 'linear', trainSteps: TRAIN_STEPS_MAX, betaStart: 1e-5, betaEnd: 1e-3 });
    expect(r.ok && r.value.alphaBar.length).toBe(TRAIN_STEPS_MAX);
  });
});

describe('beta values', () => {
  it.each([
    [NaN, 'not a finite number'],
    [-0.1, 'outside (0, 1]'],
    [0, 'outside (0, 1]'],
    [1.5, 'outside (0, 1]'],
    [Infinity, 'not a finite number'],
  ])('beta %s is refused: %s', (bad, words) => {
    const list = [0.001, 0.002, bad, 0.004];
    const problem = checkBetas(list);
    expect(problem).toContain('beta[2]');
    expect(problem).toContain(words);
    expect(problemOf(computeSchedule({ kind: 'explicit', trainSteps: 4, betas: list }))).toContain('beta[2]');
    expect(problemOf(rescaleZeroTerminalSnr(list))).toContain('beta[2]');
  });

  it('exactly 1 is allowed only at the last step', () => {
    expect(checkBetas([0.1, 0.2, 1])).toBeNull();
    expect(checkBetas([0.1, 1, 0.2])).toMatch(/beta\[1\] = 1 before the last step/);
  });

  it('non-numbers in a list are named', () => {
    expect(checkBetas([0.1, '0.2' as unknown as number, 0.3])).toBe('beta[1] = "0.2" is not a finite number');
  });

  it('an empty list and an absurd length are refused without reading elements', () => {
    expect(checkBetas([])).toBe('the beta list is empty');
    let reads = 0;
    const huge = new Proxy(
      { length: 1e12 },
      {
        get(target, key) {
          if (key !== 'length') reads++;
          return Reflect.get(target, key);
        },
      },
    );
    expect(checkBetas(huge)).toContain('at most 100000');
    expect(reads).toBe(0);
  });

  it.each([
    [NaN, 0.02],
    [-1e-4, 0.02],
    [1e-4, 1.5],
    [0, 0.02],
    [1e-4, Infinity],
  ])('endpoints %s -> %s are refused', (b0, b1) => {
    for (const r of [linearBetas(1000, b0, b1), scaledLinearBetas(1000, b0, b1), sigmoidBetas(1000, b0, b1)]) {
      expect(problemOf(r)).toMatch(/beta (start|end) must be a finite number in \(0, 1\]/);
    }
  });

  it('a linear schedule of all ones is refused (1 before the last step)', () => {
    expect(problemOf(linearBetas(10, 1, 1))).toContain('beta[0] = 1 before the last step');
  });

  it('cosine parameters are checked', () => {
    expect(problemOf(cosineBetas(1000, -0.1))).toContain('cosine offset');
    expect(problemOf(cosineBetas(1000, 0.008, 0))).toContain('maximum beta');
    expect(problemOf(cosineBetas(1000, 0.008, 1.2))).toContain('maximum beta');
  });
});

describe('computeSchedule parameters', () => {
  it('an explicit list must have trainSteps entries', () => {
    expect(problemOf(computeSchedule({ kind: 'explicit', trainSteps: 5, betas: [0.1, 0.2, 0.3] }))).toBe(
      'the beta list has 3 entries but train steps is 5',
    );
    expect(problemOf(computeSchedule({ kind: 'explicit', trainSteps: 5 }))).toContain('needs a beta list');
  });

  it('missing endpoints and unknown kinds are named', () => {
    expect(problemOf(computeSchedule({ kind: 'linear', trainSteps: 1000, betaEnd: 0.02 }))).toContain('beta start');
    const weird = { kind: 'squiggle', trainSteps: 1000 } as unknown as Parameters<typeof computeSchedule>[0];
    expect(problemOf(computeSchedule(weird))).toBe('unknown beta schedule kind "squiggle"');
  });
});

describe('sampling steps N and other sizes', () => {
  it('N > 100000 is refused without allocating', () => {
    const allocations = countAllocations(() => {
      expect(problemOf(samplingTimesteps('linspace', 1000, 100001))).toContain('sampling steps');
      expect(problemOf(karrasSigmas(1e9))).toContain('sampling steps');
    });
    expect(allocations).toBe(0);
  });

  it.each([0, -1, 2.5, NaN])('N = %s is refused', (N) => {
    expect(problemOf(samplingTimesteps('trailing', 1000, N))).toMatch(/sampling steps must be an integer in \[1, 100000\]/);
  });

  it('N > T is computed, not refused or clamped, so a rule can report it', () => {
    // DESIGN section 5, timestep-out-of-range: trailing with N > T gives -1
    const trailing = samplingTimesteps('trailing', 10, 20);
    expect(trailing.ok && trailing.value.includes(-1)).toBe(true);
    // DESIGN section 5, timestep-out-of-range: leading with offset 1 and N = T gives T
    const leading = samplingTimesteps('leading', 10, 10, 1);
    expect(leading.ok && leading.value[0]).toBe(10);
  });

  it('a non-integer offset and an unknown spacing are refused', () => {
    expect(problemOf(samplingTimesteps('leading', 1000, 10, 0.5))).toContain('steps offset');
    expect(problemOf(samplingTimesteps('zigzag' as 'leading', 1000, 10))).toBe('unknown timestep spacing "zigzag"');
  });

  it('Karras parameters are checked, and an infinite sigma max is named', () => {
    expect(problemOf(karrasSigmas(10, 0.002, Infinity))).toContain('infinite sigma max');
    expect(problemOf(karrasSigmas(10, 0, 80))).toContain('sigma min');
    expect(problemOf(karrasSigmas(10, 0.002, 80, -7))).toContain('rho');
    expect(problemOf(karrasSigmas(10, 5, 1))).toContain('must not be below');
  });

  it('rescale refuses a list it cannot rescale', () => {
    expect(problemOf(rescaleZeroTerminalSnr([0.1]))).toContain('train steps');
  });
});
