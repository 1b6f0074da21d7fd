/**
 * computeSchedule: every number of a discrete schedule in one call, memoised per distinct
 * parameter set (DESIGN section 4: "A schedule is computed once per distinct parameter set").
 *
 * Shared, read-only results: every call with the same parameters returns the same frozen
 * ScheduleNumbers object and the same arrays, so documents with the same schedule share one copy
 * of its curves. The arrays are typed ReadonlyFloat64Array: callers must not write to them (the
 * type forbids index writes and the mutating methods; JavaScript typed arrays cannot be frozen at
 * run time). A caller that needs a mutable array takes a copy with `.slice()`. The input list of an
 * explicit schedule is copied on the way in, so changing it afterwards is harmless.
 */
import { checkBetaBound, checkBetas, checkTrainSteps, describeValue, fail, ok, type MathResult } from './guards';
import { rescaleZeroTerminalSnr } from './rescale';
import { COSINE_OFFSET, cosineBetas, linearBetas, scaledLinearBetas, sigmoidBetas } from './schedules';
import { alphaBarFromBetas, logSnrFromAlphaBar, noiseAmplitude, signalAmplitude, snrFromAlphaBar } from './snr';

export interface ScheduleParams {
  kind: 'linear' | 'scaled_linear' | 'cosine' | 'sigmoid' | 'explicit';
  trainSteps: number;
  /** linear / scaled_linear / sigmoid */
  betaStart?: number;
  betaEnd?: number;
  /** explicit list; its length must equal trainSteps */
  betas?: ArrayLike<number>;
  /** cosine offset s, default 0.008 (Nichol & Dhariwal 2021) */
  cosineOffset?: number;
  /** apply Lin et al. 2023 Algorithm 1 (zero terminal SNR) */
  rescaleZeroSnr?: boolean;
}

/** Typed-array methods and properties through which an array could be changed. */
type Float64Mutators = 'set' | 'fill' | 'copyWithin' | 'reverse' | 'sort' | 'subarray' | 'buffer';

/**
 * A Float64Array that may be shared: index reads, iteration, `slice` (a mutable copy), `map`,
 * `reduce`... but no index writes, no mutating methods and no access to the underlying buffer.
 * Any Float64Array can be passed where one is expected.
 */
export type ReadonlyFloat64Array = Readonly<Omit<Float64Array, Float64Mutators>> & {
  subarray(begin?: number, end?: number): ReadonlyFloat64Array;
};

/** Shared by every caller with the same parameters: read only (see the module comment). */
export interface ScheduleNumbers {
  readonly betas: ReadonlyFloat64Array;
  readonly alphaBar: ReadonlyFloat64Array;
  readonly logSnr: ReadonlyFloat64Array;
  /** Signal amplitude sqrt(abar) at each step. */
  readonly signal: ReadonlyFloat64Array;
  /** sqrt(abar), sqrt(1 - abar) and SNR at i = T - 1; exactly 0 / 1 / 0 when abar there is 0. */
  readonly terminalSignal: number;
  readonly terminalNoise: number;
  readonly terminalSnr: number;
  /** logSnr at i = 0 and at i = T - 1 (logSnrMin may be -Infinity). */
  readonly logSnrMax: number;
  readonly logSnrMin: number;
}

/**
 * Least-recently-used map bounded both by entry count and by a total weight (here the number of
 * stored doubles), so a few T = 100000 schedules cannot pin a lot of memory.
 */
export class LruCache<K, V> {
  private readonly map = new Map<K, { value: V; weight: number }>();
  private totalWeight = 0;
  /** The most recently used key: asked for again, it needs no reordering (hits repeat in runs). */
  private newest: K | undefined;

  constructor(
    private readonly maxEntries: number,
    private readonly maxWeight: number,
  ) {}

  get(key: K): V | undefined {
    const entry = this.map.get(key);
    if (entry === undefined) return undefined;
    if (key !== this.newest || this.newest === undefined) {
      this.map.delete(key);
      this.map.set(key, entry);
      this.newest = key;
    }
    return entry.value;
  }

  set(key: K, value: V, weight = 1): void {
    const old = this.map.get(key);
    if (old !== undefined) {
      this.totalWeight -= old.weight;
      this.map.delete(key);
      if (key === this.newest) this.newest = undefined;
    }
    if (weight > this.maxWeight) return;
    this.map.set(key, { value, weight });
    this.totalWeight += weight;
    this.newest = key;
    for (const [oldestKey, oldest] of this.map) {
      if (this.map.size <= this.maxEntries && this.totalWeight <= this.maxWeight) break;
      this.map.delete(oldestKey);
      this.totalWeight -= oldest.weight;
    }
  }

  delete(key: K): void {
    const old = this.map.get(key);
    if (old === undefined) return;
    this.totalWeight -= old.weight;
    this.map.delete(key);
    if (key === this.newest) this.newest = undefined;
  }

  get size(): number {
    return this.map.size;
  }

  /** The keys, least recently used first (a copy: the cache may be changed while it is read). */
  keys(): K[] {
    return [...this.map.keys()];
  }

  clear(): void {
    this.map.clear();
    this.totalWeight = 0;
    this.newest = undefined;
  }
}

interface CacheEntry {
  /** Copy of the explicit list, compared on a hit so a hash collision can never return wrong numbers. */
  explicit: Float64Array | null;
  numbers: ScheduleNumbers;
}

const SCHEDULE_CACHE_ENTRIES = 32;
/** About 32 MB of doubles across all entries. */
const SCHEDULE_CACHE_WEIGHT = 4_000_000;
const scheduleCache = new LruCache<string, CacheEntry>(SCHEDULE_CACHE_ENTRIES, SCHEDULE_CACHE_WEIGHT);
const stats = { hits: 0, misses: 0 };

/** Hit and miss counts since the last clearScheduleCache (for tests and the benchmark). */
export function scheduleCacheStats(): { hits: number; misses: number; entries: number } {
  return { hits: stats.hits, misses: stats.misses, entries: scheduleCache.size };
}

export function clearScheduleCache(): void {
  scheduleCache.clear();
  stats.hits = 0;
  stats.misses = 0;
}

/** 32-bit FNV-1a over the float64 bit patterns of a list. */
function hashList(values: Float64Array): string {
  const words = new Uint32Array(values.buffer, values.byteOffset, values.length * 2);
  let h = 0x811c9dc5;
  for (let i = 0; i < words.length; i++) {
    let w = words[i]!;
    for (let b = 0; b < 4; b++) {
      h ^= w & 0xff;
      h = Math.imul(h, 0x01000193);
      w >>>= 8;
    }
  }
  return (h >>> 0).toString(16);
}

function sameBits(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

/** Arrays per cached schedule (betas, abar, log-SNR, signal), for the cache weight. */
const ARRAYS_PER_ENTRY = 4;

function numbersFromBetas(betas: Float64Array): ScheduleNumbers {
  const alphaBar = alphaBarFromBetas(betas);
  const logSnr = new Float64Array(alphaBar.length);
  const signal = new Float64Array(alphaBar.length);
  for (let i = 0; i < alphaBar.length; i++) {
    logSnr[i] = logSnrFromAlphaBar(alphaBar[i]!);
    signal[i] = signalAmplitude(alphaBar[i]!);
  }
  const last = alphaBar[alphaBar.length - 1]!;
  return Object.freeze({
    betas,
    alphaBar,
    logSnr,
    signal,
    terminalSignal: signalAmplitude(last),
    terminalNoise: noiseAmplitude(last),
    terminalSnr: snrFromAlphaBar(last),
    logSnrMax: logSnr[0]!,
    logSnrMin: logSnr[logSnr.length - 1]!,
  });
}

/** Validates the parameters a kind reads and builds the cache key from those only. */
function keyFor(p: ScheduleParams): MathResult<{ key: string; explicit: Float64Array | null }> {
  const T = p.trainSteps;
  const base = `${p.kind}|${T}|${p.rescaleZeroSnr === true ? 'zsnr' : '-'}`;
  switch (p.kind) {
    case 'linear':
    case 'scaled_linear':
    case 'sigmoid': {
      const problem = checkBetaBound('beta start', p.betaStart) ?? checkBetaBound('beta end', p.betaEnd);
      if (problem !== null) return fail(problem);
      return ok({ key: `${base}|${p.betaStart}|${p.betaEnd}`, explicit: null });
    }
    case 'cosine': {
      const s = p.cosineOffset ?? COSINE_OFFSET;
      if (typeof s !== 'number' || !Number.isFinite(s) || s < 0) {
        return fail(`cosine offset must be a finite number >= 0, got ${describeValue(s)}`);
      }
      return ok({ key: `${base}|${s}`, explicit: null });
    }
    case 'explicit': {
      const list = p.betas;
      if (list == null || typeof list.length !== 'number') return fail('an explicit schedule needs a beta list');
      if (list.length !== T) return fail(`the beta list has ${list.length} entries but train steps is ${T}`);
      const problem = checkBetas(list);
      if (problem !== null) return fail(problem);
      const explicit = Float64Array.from(list);
      return ok({ key: `${base}|${hashList(explicit)}`, explicit });
    }
    default:
      return fail(`unknown beta schedule kind ${describeValue((p as { kind: unknown }).kind)}`);
  }
}

function buildBetas(p: ScheduleParams, explicit: Float64Array | null): MathResult<Float64Array> {
  switch (p.kind) {
    case 'linear':
      return linearBetas(p.trainSteps, p.betaStart as number, p.betaEnd as number);
    case 'scaled_linear':
      return scaledLinearBetas(p.trainSteps, p.betaStart as number, p.betaEnd as number);
    case 'sigmoid':
      return sigmoidBetas(p.trainSteps, p.betaStart as number, p.betaEnd as number);
    case 'cosine':
      return cosineBetas(p.trainSteps, p.cosineOffset ?? COSINE_OFFSET);
    case 'explicit':
      return ok((explicit as Float64Array).slice());
  }
}

/**
 * All numbers of a discrete schedule: betas (optionally rescaled to zero terminal SNR with
 * Lin et al. 2023, Algorithm 1), abar, log-SNR and the terminal values.
 * Memoised per distinct parameter set (LRU; the key covers only the parameters the kind reads,
 * plus a hash of an explicit list, which is also compared in full on a hit). The result is shared
 * with every other caller of the same parameters and must not be changed (ReadonlyFloat64Array;
 * copy with `.slice()` to get a mutable array). T must be an integer in [2, 100000] and is checked before anything
 * is allocated; an explicit list must have exactly trainSteps entries.
 */
export function computeSchedule(p: ScheduleParams): MathResult<ScheduleNumbers> {
  if (p == null || typeof p !== 'object') return fail('no schedule parameters given');
  const tProblem = checkTrainSteps(p.trainSteps);
  if (tProblem !== null) return fail(tProblem);
  const keyed = keyFor(p);
  if (!keyed.ok) return keyed;
  const { key, explicit } = keyed.value;
  const cached = scheduleCache.get(key);
  if (cached !== undefined && (explicit === null || (cached.explicit !== null && sameBits(cached.explicit, explicit)))) {
    stats.hits++;
    return ok(cached.numbers);
  }
  stats.misses++;
  const built = buildBetas(p, explicit);
  if (!built.ok) return built;
  let betas = built.value;
  if (p.rescaleZeroSnr === true) {
    const rescaled = rescaleZeroTerminalSnr(betas);
    if (!rescaled.ok) return rescaled;
    betas = rescaled.value;
  }
  const numbers = numbersFromBetas(betas);
  scheduleCache.set(key, { explicit, numbers }, betas.length * ARRAYS_PER_ENTRY + (explicit?.length ?? 0));
  return ok(numbers);
}
