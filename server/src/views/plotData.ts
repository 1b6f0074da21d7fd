/**
 * Plot data for one file (the `noiselint/plotData` request): log-SNR and signal over t, current and
 * rescaled, plus the steps the sampler visits. Protocol-agnostic: plain data out of an analysis.
 */
import type { FileReading, FileResult } from '../engine/api';
import type { ScheduleAnalysis, ScheduleCurve } from '../analysis/analysis';
import { valueOf } from '../setup/types';
import type { PlotCurve, PlotData, PlotDocument, PlotSampledStep } from '../base/protocol';

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
    logSnr: indices.map((i) => finiteOrNull(curve.logSnr[i])),
    signal: indices.map((i) => curve.signal[i]),
  };
}

/**
 * x position (timestep) of each curve point. Discrete and Karras curves are indexed by timestep;
 * the flow curve is sampled at shifted times t' (signal = 1 - t'), shown as model timestep t' T - 1.
 */
function xPositions(schedule: ScheduleAnalysis, indices: number[]): number[] {
  if (schedule.family !== 'flow') return indices;
  const T = schedule.trainSteps;
  return indices.map((i) => (1 - schedule.curve.signal[i]) * T - 1);
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
    const abar = curve.alphaBar[t];
    return { t, order, logSnr: finiteOrNull(curve.logSnr[t]), snr: abar / (1 - abar), signal: curve.signal[t], outOfRange: false };
  });
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
    documents.push({
      index: doc.index,
      label: labelFor(schedule, valueOf(setup, 'predictionTarget'), setup.inherited?.from),
      ...(setup.inherited ? { inheritedFrom: setup.inherited.from } : {}),
      family: schedule.family,
      trainSteps: schedule.trainSteps,
      t: xPositions(schedule, indices),
      current: curveAt(schedule.curve, indices),
      rescaled,
      sampled: analysis.sampling ? sampledSteps(schedule, analysis.sampling.timesteps) : [],
      terminalSnr: schedule.terminalSnr,
      terminalSignal: schedule.terminalSignal,
      problems: [...analysis.scheduleProblems, ...analysis.samplingProblems],
    });
  }
  return { uri, version, documents };
}
