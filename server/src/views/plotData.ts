/**
 * Plot data for one file (the `noiselint/plotData` request): log-SNR and signal over t, current and
 * rescaled, plus the steps the sampler visits. Protocol-agnostic: plain data out of an analysis.
 */
import type { FileReading } from '../engine/api';
import type { ScheduleAnalysis, ScheduleCurve } from '../analysis/analysis';
import { valueOf } from '../setup/types';
import type { PlotCurve, PlotData, PlotDocument, PlotSampledStep, PlotSkippedRange, PlotTailWindow } from '../base/protocol';

/** Most x positions sent per curve; long schedules are thinned (first and last point kept). */
export const MAX_PLOT_POINTS = 1000;

/** Finite numbers pass; -Infinity (zero SNR), +Infinity and NaN become null. */
function finiteOrNull(x: number): number | null {
  return Number.isFinite(x) ? x : null;
}

/** Indices 0..n-1 thinned to at most `max`, always keeping the first and the last. */
export function thinIndices(n: number, max = MAX_PLOT_POINTS): number[] {
  if (n <= 0) return [];
  if (n <= max) return Array.from({ length: n }, (_, i) => i);
  const out: number[] = [];
  for (let k = 0; k < max; k++) {
    const i = Math.round((k * (n - 1)) / (max - 1));
    if (out.length === 0 || out[out.length - 1] !== i) out.push(i);
  }
  return out;
}

function curveAt(curve: ScheduleCurve, indices: number[]): PlotCurve {
  return {
    logSnr: indices.map((i) => finiteOrNull(curve.logSnr[i]!)),
    signal: indices.map((i) => curve.signal[i]!),
  };
}

/**
 * x position (timestep) of each curve point. Discrete and Karras curves are indexed by timestep;
 * the flow curve is sampled at shifted times t' (signal = 1 - t'), shown as model timestep t' T - 1.
 */
function xPositions(schedule: ScheduleAnalysis, indices: number[]): number[] {
  if (schedule.family !== 'flow') return indices;
  const T = schedule.trainSteps;
  return indices.map((i) => (1 - schedule.curve.signal[i]!) * T - 1);
}

function sampledSteps(schedule: ScheduleAnalysis, timesteps: number[]): PlotSampledStep[] {
  const { curve } = schedule;
  const n = curve.logSnr.length;
  const T = schedule.trainSteps;
  return timesteps.map((t, order) => {
    if (schedule.family === 'flow') {
      // Model timestep t stands for continuous time t' = (t + 1) / T; SNR = ((1 - t') / t')^2.
      const tc = (t + 1) / T;
      const outOfRange = !(tc > 0 && tc <= 1);
      const snr = outOfRange ? NaN : ((1 - tc) / tc) ** 2;
      return { t, order, logSnr: finiteOrNull(Math.log(snr)), snr, signal: outOfRange ? NaN : 1 - tc, outOfRange };
    }
    const inRange = Number.isInteger(t) && t >= 0 && t < n;
    if (!inRange) return { t, order, logSnr: null, snr: NaN, signal: NaN, outOfRange: true };
    const abar = curve.alphaBar[t]!;
    return { t, order, logSnr: finiteOrNull(curve.logSnr[t]!), snr: abar / (1 - abar), signal: curve.signal[t]!, outOfRange: false };
  });
}

/** The steps above the highest sampled one, up to T - 1 (what the sampler never visits). */
export function skippedRange(trainSteps: number, sampled: readonly PlotSampledStep[]): PlotSkippedRange | null {
  let highest = -Infinity;
  for (const s of sampled) if (!s.outOfRange && s.t > highest) highest = s.t;
  const lastStep = trainSteps - 1;
  if (!Number.isFinite(highest) || highest >= lastStep) return null;
  return { lastVisited: highest, lastStep, count: lastStep - highest };
}

/** Share of the x range the tail window shows (at least; it widens to hold a skipped range). */
export const TAIL_SHARE = 0.1;

/**
 * The last tenth of the x range (wider when the skipped range starts earlier), and a signal
 * ceiling a little above the largest signal amplitude drawn in it, so a leak of a few hundredths
 * fills the window instead of a few pixels of a 0..1 axis.
 */
export function tailWindow(t: readonly number[], curves: readonly PlotCurve[], skipped: PlotSkippedRange | null): PlotTailWindow {
  const first = t.length > 0 ? t[0]! : 0;
  const last = t.length > 0 ? t[t.length - 1]! : 0;
  let from = last - (last - first) * TAIL_SHARE;
  if (skipped && skipped.lastVisited < from + (last - first) * 0.02) from = Math.max(first, skipped.lastVisited - (last - first) * 0.02);
  from = Math.floor(from);
  let high = 0;
  for (const curve of curves) {
    for (let i = 0; i < t.length; i++) {
      const v = curve.signal[i]!;
      if (t[i]! >= from && Number.isFinite(v) && v > high) high = v;
    }
  }
  return { from, to: last, signalMax: niceCeiling(high * 1.1) };
}

/** 1, 2, 2.5 or 5 times a power of ten, at or above x (1 for x <= 0 or above 1). */
function niceCeiling(x: number): number {
  if (!(x > 0) || x >= 1) return 1;
  const p = 10 ** Math.floor(Math.log10(x));
  for (const m of [1, 2, 2.5, 5, 10]) if (m * p >= x * (1 - 1e-12)) return Math.min(1, m * p);
  return 1;
}

function labelFor(schedule: ScheduleAnalysis, target: string | undefined, inheritedFrom: string | undefined): string {
  const parts = [schedule.kind, `T = ${schedule.trainSteps}`];
  if (target) parts.push(target);
  if (schedule.rescaleApplied) parts.push('zero-SNR rescaled');
  if (inheritedFrom) parts.push(`from training file ${inheritedFrom}`);
  return parts.join(', ');
}

/** Plot data of every diffusion document of a file whose schedule could be computed. */
export function plotDataFor(file: FileReading, uri: string, version: number | null): PlotData {
  const documents: PlotDocument[] = [];
  for (const doc of file.documents) {
    const { setup, analysis } = doc;
    const schedule = analysis.schedule;
    if (!setup.isDiffusionConfig || !schedule) continue;
    const indices = thinIndices(schedule.curve.logSnr.length);
    const rescaled = analysis.rescaled && !schedule.rescaleApplied ? curveAt(analysis.rescaled.curve, indices) : null;
    const t = xPositions(schedule, indices);
    const current = curveAt(schedule.curve, indices);
    const sampled = analysis.sampling ? sampledSteps(schedule, analysis.sampling.timesteps) : [];
    const skipped = skippedRange(schedule.trainSteps, sampled);
    documents.push({
      index: doc.index,
      label: labelFor(schedule, valueOf(setup, 'predictionTarget'), setup.inherited?.from),
      ...(setup.inherited ? { inheritedFrom: setup.inherited.from } : {}),
      family: schedule.family,
      trainSteps: schedule.trainSteps,
      t,
      current,
      rescaled,
      sampled,
      terminalSnr: schedule.terminalSnr,
      terminalSignal: schedule.terminalSignal,
      skipped,
      tail: tailWindow(t, rescaled ? [current, rescaled] : [current], skipped),
      problems: [...analysis.scheduleProblems, ...analysis.samplingProblems],
    });
  }
  return { uri, version, documents };
}
