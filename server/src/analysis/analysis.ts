/**
 * setup -> analysis: the numbers every rule, hover and output reads. All arithmetic is delegated
 * to shared-math (which caches per parameter set); this module only decides which numbers a
 * document's setup implies.
 *
 * Curves are shared: a discrete schedule's curve holds the arrays of shared-math's cache, and the
 * flow and Karras curves are memoised here per parameter set, so documents with the same schedule
 * hold one copy of its 1,000-point curves between them. Every array in an Analysis is read only
 * (ReadonlyFloat64Array); copy it with `.slice()` before changing it.
 */
import {
  ASSUMED_SAMPLE_STEPS,
  DEFAULT_FLOW_SHIFT,
  DEFAULT_KARRAS,
  DEFAULT_SPACING,
  DEFAULT_STEPS_OFFSET,
  DEFAULT_TRAIN_STEPS,
} from '../setup/defaults';
import {
  checkSampleSteps,
  checkTrainSteps,
  computeSchedule,
  flowSnr,
  flowTimestepShift,
  karrasSigmas,
  LruCache,
  samplingTimesteps,
  sigmaFromAlphaBar,
  snrFromAlphaBar,
  snrFromSigma,
  SIGMA_DATA_DEFAULT,
  type ReadonlyFloat64Array,
  type ScheduleParams,
} from '@noiselint/shared-math';
import { consumerTimesteps, karrasTimesteps } from '../consumers/timesteps';
import type { BetaScheduleKind, TimestepSpacing } from '../fields/concepts';
import { valueOf, type Setup } from '../setup/types';
import { withProps } from '../base/objects';

export type ScheduleFamily = 'discrete' | 'flow' | 'karras';

/** sigma_data of Karras et al. 2022 (0.5 for images); SNR = sigma_data^2 / sigma^2. */
export const KARRAS_SIGMA_DATA = SIGMA_DATA_DEFAULT;
export { ASSUMED_SAMPLE_STEPS } from '../setup/defaults';
/** Points of the continuous curves (flow, Karras) drawn over t. */
const CONTINUOUS_POINTS = 1000;

/** Shared between documents with the same schedule: read only. */
export interface ScheduleCurve {
  /** Variance-preserving abar at each x (for flow: (1 - t)^2 / ((1 - t)^2 + t^2)). */
  readonly alphaBar: ReadonlyFloat64Array;
  readonly logSnr: ReadonlyFloat64Array;
  /** Signal amplitude: sqrt(abar) for discrete and Karras, (1 - t) for flow. */
  readonly signal: ReadonlyFloat64Array;
}

export interface ScheduleAnalysis {
  family: ScheduleFamily;
  kind: BetaScheduleKind | 'explicit' | 'flow' | 'karras';
  /** T for discrete and flow schedules; the curve length for Karras. */
  trainSteps: number;
  /** The file already asks for the zero-terminal-SNR rescale. */
  rescaleApplied: boolean;
  curve: ScheduleCurve;
  betas: ReadonlyFloat64Array | null;
  terminalSignal: number;
  terminalNoise: number;
  terminalSnr: number;
  logSnrMax: number;
  logSnrMin: number;
  /** Exactly zero SNR at the last training step. */
  reachesZeroSnr: boolean;
}

export interface RescaleAnalysis {
  terminalSnr: number;
  terminalSignal: number;
  logSnrMax: number;
  curve: ScheduleCurve;
  betas: ReadonlyFloat64Array;
}

export interface SamplingAnalysis {
  spacing: TimestepSpacing | 'flow' | 'karras';
  steps: number;
  /** The step count is an assumption (the file sets a spacing but no step count). */
  stepsAssumed: boolean;
  stepsOffset: number;
  /** Noisiest first, raw (may fall outside [0, T - 1]). */
  timesteps: number[];
  firstTimestep: number;
  snrAtFirst: number;
  signalAtFirst: number;
  /** Timesteps outside [0, T - 1]. */
  outOfRange: number[];
  startsAtLastStep: boolean;
}

/** Sigma-space view of a discrete schedule (Euler, Heun, DPM-Solver, LMS, Karras sigmas). */
export interface SigmaAnalysis {
  /** sigma at the last training step; Infinity on a zero-SNR schedule. */
  sigmaMax: number;
  sigmaMin: number;
  /** Karras et al. 2022 sigmas when the file asks for them and they are defined. */
  karras: number[] | null;
}

export interface Analysis {
  schedule: ScheduleAnalysis | null;
  /** One line each: why (part of) the schedule could not be computed. */
  scheduleProblems: string[];
  rescaled: RescaleAnalysis | null;
  sampling: SamplingAnalysis | null;
  samplingProblems: string[];
  sigmas: SigmaAnalysis | null;
  /**
   * T of a discrete setup whenever T itself is usable, also when its betas are not: the step
   * count and spacing checks need only T, so an invalid beta list does not hide them.
   */
  trainSteps: number | null;
}

const SIGMA_SPACE_SAMPLERS = new Set(['euler', 'euler-ancestral', 'heun', 'dpm-solver', 'dpm-solver-multistep', 'dpm-solver-singlestep', 'lms']);

export function scheduleFamilyOf(setup: Setup): ScheduleFamily {
  const target = valueOf(setup, 'predictionTarget');
  if (target === 'flow' || valueOf(setup, 'sampler') === 'flow-euler' || setup.fields.flowShift?.source) return 'flow';
  const hasBetas = !!(setup.fields.betas || setup.fields.betaSchedule?.source || setup.fields.betaStart?.source || setup.fields.betaEnd?.source);
  const sigmaSet = setup.fields.sigmaMax?.source || setup.fields.sigmaMin?.source || setup.fields.rho?.source;
  if (!hasBetas && (sigmaSet || setup.consumer?.continuousSigmas)) return 'karras';
  return 'discrete';
}

export function isSigmaSpaceSampler(setup: Setup): boolean {
  const sampler = valueOf(setup, 'sampler');
  return valueOf(setup, 'karrasSigmas') === true || (sampler !== undefined && SIGMA_SPACE_SAMPLERS.has(sampler));
}

export function analyzeSetup(setup: Setup): Analysis {
  const out: Analysis = {
    schedule: null,
    scheduleProblems: [],
    rescaled: null,
    sampling: null,
    samplingProblems: [],
    sigmas: null,
    trainSteps: null,
  };
  if (!setup.isDiffusionConfig) return out;
  const family = scheduleFamilyOf(setup);
  if (family === 'flow') analyzeFlow(setup, out);
  else if (family === 'karras') analyzeKarras(setup, out);
  else analyzeDiscrete(setup, out);
  return out;
}

/** The curves of the continuous families, one per parameter set (small: a few distinct sets are usual). */
const CONTINUOUS_CACHE_ENTRIES = 16;
const flowCurves = new LruCache<string, ScheduleCurve>(CONTINUOUS_CACHE_ENTRIES, CONTINUOUS_CACHE_ENTRIES);
interface KarrasCurve {
  curve: ScheduleCurve;
  /** The dense sigmas, ascending (clean to noisy), for placing sampled sigmas on the curve. */
  sigmas: ReadonlyFloat64Array;
}
const karrasCurves = new LruCache<string, KarrasCurve>(CONTINUOUS_CACHE_ENTRIES, CONTINUOUS_CACHE_ENTRIES);

function discreteParams(setup: Setup, problems: string[]): ScheduleParams | null {
  const trainSteps = valueOf(setup, 'trainSteps');
  if (trainSteps === undefined) {
    problems.push('the number of training steps is not usable');
    return null;
  }
  const betas = valueOf(setup, 'betas');
  if (betas) return { kind: 'explicit', trainSteps, betas };
  const kind = valueOf(setup, 'betaSchedule');
  if (kind === undefined) {
    problems.push('the beta schedule is not usable');
    return null;
  }
  return { kind, trainSteps, betaStart: valueOf(setup, 'betaStart'), betaEnd: valueOf(setup, 'betaEnd') };
}

function analyzeDiscrete(setup: Setup, out: Analysis): void {
  const T = valueOf(setup, 'trainSteps');
  if (T !== undefined && !checkTrainSteps(T)) out.trainSteps = T;
  const params = discreteParams(setup, out.scheduleProblems);
  if (!params) {
    analyzeDiscreteSampling(setup, out, null);
    return;
  }
  const rescaleApplied = valueOf(setup, 'zeroTerminalSnr') === true;
  const current = computeSchedule(withProps(params, { rescaleZeroSnr: rescaleApplied }));
  if (!current.ok) {
    out.scheduleProblems.push(current.problem);
    // The timesteps need only T: the step count and spacing are still checked.
    analyzeDiscreteSampling(setup, out, null);
    return;
  }
  const n = current.value;
  out.schedule = {
    family: 'discrete',
    kind: params.kind,
    trainSteps: params.trainSteps,
    rescaleApplied,
    curve: { alphaBar: n.alphaBar, logSnr: n.logSnr, signal: n.signal },
    betas: n.betas,
    terminalSignal: n.terminalSignal,
    terminalNoise: n.terminalNoise,
    terminalSnr: n.terminalSnr,
    logSnrMax: n.logSnrMax,
    logSnrMin: n.logSnrMin,
    reachesZeroSnr: n.terminalSnr === 0,
  };
  const rescaled = rescaleApplied ? current : computeSchedule(withProps(params, { rescaleZeroSnr: true }));
  if (rescaled.ok) {
    const r = rescaled.value;
    out.rescaled = {
      terminalSnr: r.terminalSnr,
      terminalSignal: r.terminalSignal,
      logSnrMax: r.logSnrMax,
      curve: { alphaBar: r.alphaBar, logSnr: r.logSnr, signal: r.signal },
      betas: r.betas,
    };
  }
  analyzeDiscreteSampling(setup, out, out.schedule);
  const sigmaMax = sigmaFromAlphaBar(n.alphaBar[n.alphaBar.length - 1]!);
  const sigmaMin = sigmaFromAlphaBar(n.alphaBar[0]!);
  if (isSigmaSpaceSampler(setup)) {
    let karras: number[] | null = null;
    if (valueOf(setup, 'karrasSigmas') === true && out.sampling && Number.isFinite(sigmaMax)) {
      const k = karrasSigmas(out.sampling.steps, sigmaMin, sigmaMax, valueOf(setup, 'rho') ?? DEFAULT_KARRAS.rho);
      if (k.ok) karras = Array.from(k.value);
    }
    out.sigmas = { sigmaMax, sigmaMin, karras };
  }
}

/**
 * The sampling timesteps of a discrete setup. Without a usable schedule (an invalid beta list)
 * they are still computed from T, with the SNR and signal at the first step left as NaN; Karras
 * timesteps need the schedule and are skipped then.
 */
function analyzeDiscreteSampling(setup: Setup, out: Analysis, schedule: ScheduleAnalysis | null): void {
  const T = schedule ? schedule.trainSteps : out.trainSteps;
  if (T === null) return;
  const stepsField = setup.fields.sampleSteps;
  const spacingField = setup.fields.timestepSpacing;
  const spacingExplicit = !!spacingField?.source;
  if (!stepsField && !spacingExplicit) return;
  const steps = stepsField ? stepsField.value : ASSUMED_SAMPLE_STEPS;
  const spacing = spacingField?.value ?? DEFAULT_SPACING;
  const stepsOffset = valueOf(setup, 'stepsOffset') ?? DEFAULT_STEPS_OFFSET;
  const consumer = setup.consumer;
  // A Karras-sigma sampler starts at the largest training sigma whatever the spacing says.
  const karras = consumer?.karrasStartsAtMax === true && valueOf(setup, 'karrasSigmas') === true;
  if (karras && !schedule) return;
  const ts = karras
    ? karrasTimesteps(schedule!.curve.alphaBar, steps, valueOf(setup, 'rho') ?? 7)
    : consumer
      ? consumerTimesteps(consumer.timesteps, spacing, T, steps, stepsOffset, consumer.respacing, consumer.originalSteps)
      : samplingTimesteps(spacing, T, steps, stepsOffset);
  if (!ts.ok) {
    out.samplingProblems.push(ts.problem);
    return;
  }
  const timesteps = Array.from(ts.value);
  const first = timesteps[0]!;
  const inRange = (t: number) => Number.isInteger(t) && t >= 0 && t <= T - 1;
  const abarFirst = schedule && inRange(first) ? schedule.curve.alphaBar[first] : NaN;
  out.sampling = {
    spacing: karras ? 'karras' : spacing,
    steps,
    stepsAssumed: !stepsField,
    stepsOffset,
    timesteps,
    firstTimestep: first,
    snrAtFirst: schedule && inRange(first) ? snrFromAlphaBar(abarFirst!) : NaN,
    signalAtFirst: schedule && inRange(first) ? Math.sqrt(abarFirst!) : NaN,
    outOfRange: timesteps.filter((t) => !inRange(t)),
    startsAtLastStep: first === T - 1,
  };
}

function analyzeFlow(setup: Setup, out: Analysis): void {
  const T = valueOf(setup, 'trainSteps') ?? DEFAULT_TRAIN_STEPS;
  const badT = checkTrainSteps(T);
  if (badT) {
    out.scheduleProblems.push(badT);
    return;
  }
  const shift = valueOf(setup, 'flowShift') ?? DEFAULT_FLOW_SHIFT;
  if (!(shift > 0) || !Number.isFinite(shift)) {
    out.scheduleProblems.push(`flow shift ${shift} must be a positive number`);
    return;
  }
  const points = Math.min(T, CONTINUOUS_POINTS);
  const curve = flowCurve(points, shift);
  const { logSnr, signal } = curve;
  const last = points - 1;
  out.schedule = {
    family: 'flow',
    kind: 'flow',
    trainSteps: T,
    rescaleApplied: false,
    curve,
    betas: null,
    terminalSignal: signal[last]!,
    terminalNoise: 1,
    terminalSnr: flowSnr(1),
    logSnrMax: logSnr[0]!,
    logSnrMin: logSnr[last]!,
    reachesZeroSnr: true,
  };
  const stepsField = setup.fields.sampleSteps;
  if (!stepsField) return;
  const N = stepsField.value;
  const badN = checkSampleSteps(N);
  if (badN) {
    out.samplingProblems.push(badN);
    return;
  }
  // Flow samplers integrate from t = 1 (pure noise) down; shifted, as index round(t' T) - 1.
  const timesteps: number[] = [];
  for (let k = 0; k < N; k++) {
    const t = flowTimestepShift(1 - k / N, shift);
    timesteps.push(Math.max(0, Math.round(t * T) - 1));
  }
  out.sampling = {
    spacing: 'flow',
    steps: N,
    stepsAssumed: false,
    stepsOffset: 0,
    timesteps,
    firstTimestep: timesteps[0]!,
    snrAtFirst: 0,
    signalAtFirst: 0,
    outOfRange: [],
    startsAtLastStep: timesteps[0] === T - 1,
  };
}

/** The flow-matching curve at `points` shifted times (memoised per points and shift). */
function flowCurve(points: number, shift: number): ScheduleCurve {
  const key = `${points}|${shift}`;
  const cached = flowCurves.get(key);
  if (cached) return cached;
  const alphaBar = new Float64Array(points);
  const logSnr = new Float64Array(points);
  const signal = new Float64Array(points);
  for (let i = 0; i < points; i++) {
    const t = flowTimestepShift((i + 1) / points, shift);
    const snr = flowSnr(t);
    alphaBar[i] = snr / (1 + snr);
    logSnr[i] = Math.log(snr);
    signal[i] = 1 - t;
  }
  const curve: ScheduleCurve = Object.freeze({ alphaBar, logSnr, signal });
  flowCurves.set(key, curve);
  return curve;
}

/** The dense Karras et al. 2022 curve (memoised per sigma range and rho), or the problem. */
function karrasCurve(sigmaMin: number, sigmaMax: number, rho: number): KarrasCurve | string {
  const key = `${sigmaMin}|${sigmaMax}|${rho}`;
  const cached = karrasCurves.get(key);
  if (cached) return cached;
  const dense = karrasSigmas(CONTINUOUS_POINTS, sigmaMin, sigmaMax, rho);
  if (!dense.ok) return dense.problem;
  // Drawn from clean (x = 0) to noisy like the discrete schedules.
  const sigmas = dense.value.slice().reverse();
  const n = sigmas.length;
  const alphaBar = new Float64Array(n);
  const logSnr = new Float64Array(n);
  const signal = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const snr = snrFromSigma(sigmas[i]!, KARRAS_SIGMA_DATA);
    alphaBar[i] = snr / (1 + snr);
    logSnr[i] = Math.log(snr);
    signal[i] = Math.sqrt(alphaBar[i]!);
  }
  const entry: KarrasCurve = Object.freeze({ curve: Object.freeze({ alphaBar, logSnr, signal }), sigmas });
  karrasCurves.set(key, entry);
  return entry;
}

function analyzeKarras(setup: Setup, out: Analysis): void {
  const sigmaMin = valueOf(setup, 'sigmaMin') ?? DEFAULT_KARRAS.sigmaMin;
  const sigmaMax = valueOf(setup, 'sigmaMax') ?? DEFAULT_KARRAS.sigmaMax;
  const rho = valueOf(setup, 'rho') ?? DEFAULT_KARRAS.rho;
  const dense = karrasCurve(sigmaMin, sigmaMax, rho);
  if (typeof dense === 'string') {
    out.scheduleProblems.push(dense);
    return;
  }
  const { curve, sigmas: sig } = dense;
  const { alphaBar, logSnr, signal } = curve;
  const n = sig.length;
  out.schedule = {
    family: 'karras',
    kind: 'karras',
    trainSteps: n,
    rescaleApplied: false,
    curve,
    betas: null,
    terminalSignal: signal[n - 1]!,
    terminalNoise: Math.sqrt(1 - alphaBar[n - 1]!),
    terminalSnr: snrFromSigma(sigmaMax, KARRAS_SIGMA_DATA),
    logSnrMax: logSnr[0]!,
    logSnrMin: logSnr[n - 1]!,
    reachesZeroSnr: false,
  };
  const N = valueOf(setup, 'sampleSteps');
  if (N === undefined) return;
  const k = karrasSigmas(N, sigmaMin, sigmaMax, rho);
  if (!k.ok) {
    out.samplingProblems.push(k.problem);
    return;
  }
  const sigmas = Array.from(k.value);
  // Index of each sampled sigma on the dense curve (x axis of the plot).
  const timesteps = sigmas.map((s) => nearestIndex(sig, s));
  const snrFirst = snrFromSigma(sigmas[0]!, KARRAS_SIGMA_DATA);
  out.sampling = {
    spacing: 'karras',
    steps: N,
    stepsAssumed: false,
    stepsOffset: 0,
    timesteps,
    firstTimestep: timesteps[0]!,
    snrAtFirst: snrFirst,
    signalAtFirst: Math.sqrt(snrFirst / (1 + snrFirst)),
    outOfRange: [],
    startsAtLastStep: timesteps[0] === n - 1,
  };
  out.sigmas = { sigmaMax, sigmaMin, karras: sigmas };
}

function nearestIndex(ascending: ReadonlyFloat64Array, value: number): number {
  let lo = 0;
  let hi = ascending.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (ascending[mid]! < value) lo = mid + 1;
    else hi = mid;
  }
  if (lo > 0 && Math.abs(ascending[lo - 1]! - value) < Math.abs(ascending[lo]! - value)) return lo - 1;
  return lo;
}
